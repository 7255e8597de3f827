/**
 * A pool of worker threads that runs the analysis engine off the main thread: the three stack passes of
 * shared/analysis/analyzeStack.ts (pooled histogram → segment and measure → contrast) and the refits of the jump-size
 * bootstrap, single-frame analysis,
 * measurements of a saved mask, whole motion series (shared/analysis/analyzeMotion.ts, one series per worker), and the
 * display derivatives of uploaded frames (frameRendering.ts).
 *
 * File bytes are copied once into a SharedArrayBuffer and shared with every worker (`shareFile`), or, for a file too
 * large to hold (an upload), each worker opens it by path and reads the ranges it needs (`openFile`); each task then
 * names a frame index and the worker decodes that frame itself. Results come back by frame index whatever order the
 * workers finish in; masks, histograms and rendered frames are transferred, not copied. A frame that fails (damaged
 * data) is reported with its index and the others are kept; a worker that dies is replaced, so the pool stays usable.
 *
 * Workers start from a one-file bundle of analysisWorker.ts (workerBundle.ts), which loads much faster than the
 * TypeScript sources; without it they run the sources through analysisWorkerBootstrap.mjs, which registers tsx in the
 * worker thread (Node 20 does not pass the parent's loader hooks to workers). Both work under `tsx` and vitest alike.
 */
import { availableParallelism } from 'node:os'
import { Worker } from 'node:worker_threads'
import type { FrameAnalysis, FrameDistributions, FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { AnalysisRecipe } from '../../shared/analysis/recipe'
import type { BinaryMask } from '../../shared/analysis/types'
import type { BootstrapReference } from '../../shared/analysis/powerLawFit'
import type { MotionAnalysis, MotionOptions } from '../../shared/analysis/analyzeMotion'
import type { MotionRow } from '../../shared/analysis/wallVelocity'
import type { DecodeLimits, ImageHeader } from '../../shared/imageio/decodeImage'
import { analysisWorkerScript } from './workerBundle'
import type { AnalysisTask, AnalysisTaskResults, FrameTaskContext, MaskMeasureContext, RenderedFrame, SerializedError, WorkerRequest, WorkerResponse } from './analysisMessages'

export type { FrameTaskContext, MaskMeasureContext, RenderedFrame } from './analysisMessages'

export interface AnalysisPoolOptions {
  /** Worker threads; default os.availableParallelism(). */
  size?: number
  /**
   * Scheduling niceness of the threads (0 … 19, Linux only; elsewhere ignored). The web server runs its threads nicer
   * than its request thread, so that rendering an upload yields a shared core to the people browsing.
   */
  niceness?: number
}

/** A file whose bytes every worker can read. */
export interface SharedFile {
  readonly id: number
  readonly fileName: string
}

/** An error raised in a worker, with the code and HTTP status of the original (e.g. ImageDecodeError's). */
export class AnalysisWorkerError extends Error {
  readonly code?: string
  readonly status?: number

  constructor(error: SerializedError) {
    super(error.message)
    this.name = error.name
    if (error.code !== undefined) this.code = error.code
    if (error.status !== undefined) this.status = error.status
  }
}

/** The result of one frame of a pass: its value, or why it failed. */
export type FrameOutcome<T> = { index: number; ok: true; value: T } | { index: number; ok: false; error: AnalysisWorkerError }

export interface AnalysisPool {
  readonly size: number
  /** Resolves once every worker has loaded the engine (tasks sent earlier simply wait). */
  ready(): Promise<void>
  /**
   * Copy `bytes` once into shared memory (not at all when they already fill a SharedArrayBuffer) and hand it to every
   * worker; release it when done.
   */
  shareFile(bytes: Uint8Array, fileName: string, limits?: Partial<DecodeLimits>): SharedFile
  /**
   * Let every worker read the file at `path` range by range, without holding it: each opens it when told and closes it
   * on release. For files on the server's disk (uploads); a path that cannot be opened fails each task on the file.
   */
  openFile(path: string, fileName: string, limits?: Partial<DecodeLimits>): SharedFile
  releaseFile(file: SharedFile): void
  /** The file's header (format, size, frame count, calibration), read in a worker. */
  probe(file: SharedFile): Promise<ImageHeader>
  /** Raw intensity range of each frame (for the stack's common histogram range). */
  rawRangePass(file: SharedFile, indices: number[]): Promise<FrameOutcome<{ min: number; max: number }>[]>
  /** Pass 1: each frame's preprocessed histogram on the common range. */
  histogramPass(file: SharedFile, indices: number[], recipe: AnalysisRecipe, range: { min: number; max: number }): Promise<FrameOutcome<Uint32Array>[]>
  /** Pass 2: segment (with the stack-wide threshold when given) and measure each frame; its mask comes back encoded. */
  measurePass(file: SharedFile, indices: number[], recipe: AnalysisRecipe, context: { pixelSizeNm: number | null; threshold?: number }): Promise<FrameOutcome<AnalysisTaskResults['measure']>[]>
  /** Pass 3: the signed domain contrast of each frame on one fixed mask. */
  contrastPass(file: SharedFile, indices: number[], recipe: AnalysisRecipe, mask: BinaryMask): Promise<FrameOutcome<number>[]>
  /** The whole single-frame pipeline on one frame (reference and anchor frames follow from the recipe). */
  analyzeFrame(file: SharedFile, index: number, recipe: AnalysisRecipe, context: FrameTaskContext): Promise<FrameAnalysis>
  /** Every measurement of a given mask. */
  measureMask(mask: BinaryMask, context: MaskMeasureContext): Promise<{ measurements: FrameMeasurements; distributions?: FrameDistributions }>
  /** A whole motion series (every frame of the file) through shared/analysis/analyzeMotion in one worker. */
  analyzeMotion(file: SharedFile, recipe: AnalysisRecipe, rows: MotionRow[], options: MotionOptions): Promise<MotionAnalysis>
  /** Decode one frame and render its preview and thumbnail (frameRendering.ts); the buffers are transferred, not copied. */
  renderFrame(file: SharedFile, index: number): Promise<RenderedFrame>
  /** shared/analysis/powerLawFit's countAtLeastAsFar, the sets spread over the threads (same count as on one). */
  countAtLeastAsFar(sets: readonly Float64Array[], reference: BootstrapReference): Promise<number>
  /** Stop every worker; tasks still queued or running are rejected. */
  close(): Promise<void>
}

interface QueuedTask {
  id: number
  task: AnalysisTask
  resolve: (value: unknown) => void
  reject: (error: Error) => void
}

interface PoolWorker {
  worker: Worker
  ready: Promise<void>
  /** Set once the worker has loaded the engine. */
  started: boolean
  current: QueuedTask | null
  /** The error that stopped the worker, if it failed rather than exited. */
  failure: Error | null
}

/** A file the workers can read: bytes in shared memory, or a path each worker opens. */
interface SharedBytes {
  bytes: { buffer: SharedArrayBuffer; byteLength: number } | { path: string }
  fileName: string
  limits?: Partial<DecodeLimits>
}


/**
 * Start a pool of analysis worker threads.
 * @example const pool = createAnalysisPool(); const result = await analyzeStackInPool(pool, bytes, name, recipe, meta); await pool.close()
 */
export function createAnalysisPool(options: AnalysisPoolOptions = {}): AnalysisPool {
  const size = Math.max(1, Math.floor(options.size ?? availableParallelism()))
  const queue: QueuedTask[] = []
  const shared = new Map<number, SharedBytes>()
  const workers: PoolWorker[] = []
  let nextTaskId = 1
  let nextFileId = 1
  let closed = false
  // A worker that dies before it is ready cannot run anything (broken install): stop instead of respawning forever.
  let startupError: Error | null = null

  function post(entry: PoolWorker, message: WorkerRequest): void {
    entry.worker.postMessage(message)
  }

  function shareMessage(id: number, file: SharedBytes): WorkerRequest {
    const { bytes, fileName, limits } = file
    return 'path' in bytes ? { type: 'open', fileId: id, path: bytes.path, fileName, limits } : { type: 'share', fileId: id, buffer: bytes.buffer, byteLength: bytes.byteLength, fileName, limits }
  }

  function addFile(entry: SharedBytes): SharedFile {
    if (closed) throw new Error('The analysis pool is closed.')
    const id = nextFileId++
    shared.set(id, entry)
    for (const worker of workers) post(worker, shareMessage(id, entry))
    return { id, fileName: entry.fileName }
  }

  function spawn(): PoolWorker {
    // execArgv [] : the bundle needs no loader, and the bootstrap registers tsx itself (the parent's flags would load
    // it twice). workerData must be an object: the web-worker package (loaded by geotiff) reads workerData.mod.
    const worker = new Worker(analysisWorkerScript().url, { execArgv: [], workerData: { niceness: options.niceness ?? 0 } })
    let markReady: () => void = () => {}
    const entry: PoolWorker = { worker, ready: new Promise<void>((resolve) => (markReady = resolve)), started: false, current: null, failure: null }
    worker.on('message', (message: WorkerResponse) => {
      if (message.type === 'ready') {
        entry.started = true
        markReady()
        return
      }
      const task = entry.current
      if (task === null || task.id !== message.id) return
      entry.current = null
      if (message.ok) task.resolve(message.value)
      else task.reject(new AnalysisWorkerError(message.error))
      dispatch()
    })
    worker.on('error', (err) => {
      entry.failure = err
      const task = entry.current
      entry.current = null
      task?.reject(new AnalysisWorkerError({ name: err.name, message: `The analysis worker stopped: ${err.message}` }))
    })
    worker.on('exit', () => {
      const index = workers.indexOf(entry)
      const task = entry.current
      entry.current = null
      task?.reject(new Error('The analysis worker exited during the task.'))
      markReady()
      if (closed || index < 0) return
      if (!entry.started) {
        startupError = new Error(`An analysis worker could not start${entry.failure ? `: ${entry.failure.message}` : '.'}`)
        for (const queued of queue.splice(0)) queued.reject(startupError)
        return
      }
      // Replace the dead worker and give it the files the others have, so queued tasks still run.
      const replacement = spawn()
      workers[index] = replacement
      for (const [id, file] of shared) post(replacement, shareMessage(id, file))
      dispatch()
    })
    return entry
  }

  function dispatch(): void {
    for (const entry of workers) {
      if (queue.length === 0) return
      if (entry.current !== null) continue
      const task = queue.shift()!
      entry.current = task
      post(entry, { type: 'task', id: task.id, task: task.task })
    }
  }

  function run<K extends AnalysisTask['kind']>(task: Extract<AnalysisTask, { kind: K }>): Promise<AnalysisTaskResults[K]> {
    if (closed) return Promise.reject(new Error('The analysis pool is closed.'))
    if (startupError !== null) return Promise.reject(startupError)
    return new Promise((resolve, reject) => {
      queue.push({ id: nextTaskId++, task, resolve: resolve as (value: unknown) => void, reject })
      dispatch()
    })
  }

  async function perFrame<T>(indices: number[], start: (index: number) => Promise<T>): Promise<FrameOutcome<T>[]> {
    return Promise.all(
      indices.map((index) =>
        start(index).then(
          (value): FrameOutcome<T> => ({ index, ok: true, value }),
          (err: unknown): FrameOutcome<T> => ({ index, ok: false, error: asWorkerError(err) }),
        ),
      ),
    )
  }

  for (let i = 0; i < size; i++) workers.push(spawn())

  return {
    size,
    async ready() {
      await Promise.all(workers.map((w) => w.ready))
    },
    shareFile(bytes, fileName, limits) {
      // Bytes already in shared memory (e.g. read straight into a SharedArrayBuffer) are shared as they are.
      const alreadyShared = bytes.buffer instanceof SharedArrayBuffer && bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength
      const buffer = alreadyShared ? (bytes.buffer as SharedArrayBuffer) : new SharedArrayBuffer(bytes.byteLength)
      if (!alreadyShared) new Uint8Array(buffer).set(bytes)
      return addFile({ bytes: { buffer, byteLength: bytes.byteLength }, fileName, limits })
    },
    openFile(path, fileName, limits) {
      return addFile({ bytes: { path }, fileName, limits })
    },
    releaseFile(file) {
      if (!shared.delete(file.id) || closed) return
      for (const worker of workers) post(worker, { type: 'release', fileId: file.id })
    },
    probe(file) {
      return run<'probe'>({ kind: 'probe', fileId: file.id })
    },
    rawRangePass(file, indices) {
      return perFrame(indices, (index) => run<'rawRange'>({ kind: 'rawRange', fileId: file.id, index }))
    },
    histogramPass(file, indices, recipe, range) {
      return perFrame(indices, (index) => run<'histogram'>({ kind: 'histogram', fileId: file.id, index, recipe, range }))
    },
    measurePass(file, indices, recipe, context) {
      return perFrame(indices, (index) => run<'measure'>({ kind: 'measure', fileId: file.id, index, recipe, pixelSizeNm: context.pixelSizeNm, threshold: context.threshold }))
    },
    contrastPass(file, indices, recipe, mask) {
      return perFrame(indices, (index) => run<'contrast'>({ kind: 'contrast', fileId: file.id, index, recipe, mask }))
    },
    analyzeFrame(file, index, recipe, context) {
      return run<'analyzeFrame'>({ kind: 'analyzeFrame', fileId: file.id, index, recipe, context })
    },
    measureMask(mask, context) {
      return run<'measureMask'>({ kind: 'measureMask', mask, context })
    },
    analyzeMotion(file, recipe, rows, options) {
      return run<'motion'>({ kind: 'motion', fileId: file.id, recipe, rows, options })
    },
    renderFrame(file, index) {
      return run<'render'>({ kind: 'render', fileId: file.id, index })
    },
    async countAtLeastAsFar(sets, reference) {
      // Twice as many parts as threads, so a thread that finishes early takes another part.
      const parts = Math.min(sets.length, 2 * size)
      const counts = await Promise.all(
        Array.from({ length: parts }, (_, k) => {
          const part = sets.slice(Math.floor((k * sets.length) / parts), Math.floor(((k + 1) * sets.length) / parts))
          return run<'bootstrapCount'>({ kind: 'bootstrapCount', sets: part, reference })
        }),
      )
      return counts.reduce((sum, count) => sum + count, 0)
    },
    async close() {
      if (closed) return
      closed = true
      const stopped = new Error('The analysis pool is closed.')
      for (const task of queue.splice(0)) task.reject(stopped)
      shared.clear()
      await Promise.all(workers.map((w) => w.worker.terminate()))
    },
  }
}

function asWorkerError(err: unknown): AnalysisWorkerError {
  if (err instanceof AnalysisWorkerError) return err
  const e = err instanceof Error ? err : new Error(String(err))
  return new AnalysisWorkerError({ name: e.name, message: e.message })
}

/**
 * Recompute every measurement of a saved mask in a worker, so a request handler does not block the event loop.
 * `context.frame` with `context.recipe` (or a preprocessed `context.image`) gives the domain contrast.
 */
export function measureMaskInPool(pool: AnalysisPool, mask: BinaryMask, context: MaskMeasureContext): Promise<{ measurements: FrameMeasurements; distributions?: FrameDistributions }> {
  return pool.measureMask(mask, context)
}
