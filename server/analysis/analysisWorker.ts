/**
 * One analysis worker thread: decodes the frames it is given from the shared file bytes (or from a file on disk, range
 * by range) and runs the per-frame passes of shared/analysis/analyzeStack.ts on them, measures a mask, analyses a whole
 * motion series, or renders an uploaded frame's preview and thumbnail. Started by analysisPool.ts through
 * analysisWorkerBootstrap.mjs (which registers tsx so this TypeScript file loads).
 *
 * Frames are decoded on demand with decodeFrame, which keeps the parsed TIFF structure per input (byte array or open
 * file), so a stack is parsed once per worker. Only the reference frame and the registration anchor (frame 0) are kept
 * decoded, because every frame of a stack needs them; the identical object is then also used when that frame itself is
 * analysed, as analyzeStack does with its frame list.
 */
import { setFlagsFromString } from 'node:v8'
import { runInNewContext } from 'node:vm'
import { readlinkSync } from 'node:fs'
import { setPriority } from 'node:os'
import { parentPort, workerData } from 'node:worker_threads'
import { analyzeFrame, measureMask, preprocessFrame } from '../../shared/analysis/analyzeFrame'
import { frameContrastPass, frameHistogramPass, frameMeasurePass, rawRange } from '../../shared/analysis/analyzeStack'
import { analyzeMotion } from '../../shared/analysis/analyzeMotion'
import { countAtLeastAsFar } from '../../shared/analysis/powerLawFit'
import type { AnalysisRecipe } from '../../shared/analysis/recipe'
import type { BinaryMask, FloatImage, GrayImage } from '../../shared/analysis/types'
import { decodeFrame, probeImage, type DecodeLimits, type ImageInput } from '../../shared/imageio/decodeImage'
import { encodeMask } from '../../shared/imageio/maskEncoding'
import { openFileByteSource } from '../storage/fileByteSource'
import type { AnalysisTask, MaskMeasureContext, RenderedFrame, SerializedError, WorkerRequest, WorkerResponse } from './analysisMessages'
import { renderFrame } from './frameRendering'

interface SharedFile {
  /** The bytes in shared memory, or the file on disk opened when it was shared (one object, so its parse is cached). */
  input: Promise<ImageInput>
  /** Closes the file on disk; nothing to do for shared memory. */
  close(): Promise<void>
  fileName: string
  limits?: Partial<DecodeLimits>
  /** Decoded reference and anchor frames by index. */
  kept: Map<number, Promise<GrayImage>>
}

const port = parentPort
if (port === null) throw new Error('analysisWorker.ts must run in a worker thread (use createAnalysisPool).')

/**
 * Lower this thread's scheduling priority (Linux schedules threads on their own: setpriority on the thread's id, which
 * /proc/thread-self names, changes only this thread). Where that is not possible the thread runs at normal priority.
 */
function lowerThreadPriority(niceness: number): void {
  if (!(niceness > 0)) return
  try {
    const threadId = Number(readlinkSync('/proc/thread-self').split('/').pop())
    if (Number.isInteger(threadId) && threadId > 0) setPriority(threadId, niceness)
  } catch {
    // not Linux, or not permitted: normal priority
  }
}
lowerThreadPriority(Number((workerData as { niceness?: number } | null)?.niceness ?? 0))

const files = new Map<number, SharedFile>()

/**
 * Tasks that work on whole frames and leave tens of MB of dead buffers behind, with the ArrayBuffer memory above which
 * the thread collects its garbage after one (see collectFrameGarbage). Rendering runs in the web server during an
 * upload, whose memory growth has a budget; the analysis passes run in the job worker, where time matters more.
 */
const MB = 1024 * 1024
const FRAME_GARBAGE_LIMITS: Partial<Record<AnalysisTask['kind'], number>> = {
  render: 32 * MB,
  histogram: 64 * MB,
  measure: 64 * MB,
  contrast: 64 * MB,
  analyzeFrame: 64 * MB,
  measureMask: 64 * MB,
  motion: 64 * MB,
}
let collectGarbage: (() => void) | null = null

function fileFor(fileId: number): SharedFile {
  const file = files.get(fileId)
  if (file === undefined) throw new Error(`File ${fileId} was not shared with this worker (or was already released).`)
  return file
}

/** Indices of the frames every frame of a stack needs besides itself: the reference and the registration anchor. */
function keptIndices(recipe: AnalysisRecipe): { reference: number | null; anchor: number | null } {
  return { reference: recipe.background === 'reference' ? (recipe.referenceFrame ?? 0) : null, anchor: recipe.registerFrames ? 0 : null }
}

function decodeSharedFrame(file: SharedFile, index: number): Promise<GrayImage> {
  return file.input.then((input) => decodeFrame(input, file.fileName, index, file.limits))
}

function keptFrame(file: SharedFile, index: number): Promise<GrayImage> {
  let frame = file.kept.get(index)
  if (frame === undefined) {
    frame = decodeSharedFrame(file, index)
    // A failed decode is not kept, so the error is reported again (with its frame) rather than cached.
    frame.catch(() => file.kept.delete(index))
    file.kept.set(index, frame)
  }
  return frame
}

/** The frame and the stack context analyzeStack would pass for it. */
async function frameWithContext(fileId: number, index: number, recipe: AnalysisRecipe): Promise<{ image: GrayImage; context: { reference?: GrayImage; registrationAnchor?: GrayImage } }> {
  const file = fileFor(fileId)
  const { reference, anchor } = keptIndices(recipe)
  const context = {
    reference: reference === null ? undefined : await keptFrame(file, reference),
    registrationAnchor: anchor === null ? undefined : await keptFrame(file, anchor),
  }
  const image = index === reference || index === anchor ? await keptFrame(file, index) : await decodeSharedFrame(file, index)
  return { image, context }
}

/** A typed array whose buffer can be transferred without detaching anything else (copied when it is a view). */
function ownArray<T extends Uint8Array | Uint32Array>(array: T): T {
  if (array.byteOffset === 0 && array.byteLength === array.buffer.byteLength && array.buffer instanceof ArrayBuffer) return array
  // Copied by the constructor: a Buffer's slice() would be another view of Node's shared pool, not a copy.
  return (array instanceof Uint32Array ? new Uint32Array(array) : new Uint8Array(array)) as T
}

function ownMask(mask: BinaryMask, transfer: ArrayBuffer[]): BinaryMask {
  const data = ownArray(mask.data)
  transfer.push(data.buffer as ArrayBuffer)
  const out: BinaryMask = { width: mask.width, height: mask.height, data }
  if (mask.ignore) {
    const ignore = ownArray(mask.ignore)
    transfer.push(ignore.buffer as ArrayBuffer)
    out.ignore = ignore
  }
  return out
}

/** The frame's derivatives, each in a buffer of its own, ready to transfer. */
async function renderedFrame(frame: GrayImage, transfer: ArrayBuffer[]): Promise<RenderedFrame> {
  const { preview, thumbnail, pattern } = await renderFrame(frame)
  const { data } = frame
  const rendered = { preview: ownArray(preview), thumbnail: ownArray(thumbnail), pixels: ownArray(new Uint8Array(data.buffer, data.byteOffset, data.byteLength)), pattern }
  transfer.push(rendered.preview.buffer as ArrayBuffer, rendered.thumbnail.buffer as ArrayBuffer, rendered.pixels.buffer as ArrayBuffer)
  return rendered
}

/**
 * A frame task leaves tens of MB of dead buffers (rendering about 10 MB: strip reads, jimp's PNG encoder and resize; a
 * stack frame's analysis more: float copies, masks, labels, spectra). V8 frees a thread's dead ArrayBuffers only once
 * some 64 MB of them have piled up, and what a worker thread frees stays with that thread's allocator, so each thread
 * would add 60–200 MB to its process during a large upload (npm run bench:upload) or a stack run (npm run bench). A
 * full collection after a frame task whenever the thread holds more than the task's limit keeps it near that. The
 * limit is a trade: at 32 MB (a collection after nearly every frame) a 41-frame stack took 25–30 % longer on two
 * threads than at 96 MB, for the same peak RSS within noise (without forced collections the peak was 60 MB higher).
 * The limit counts the thread's live working buffers too (about 40 MB for 1024² frames since local widths keep their
 * per-pixel vectors for eight rows only, the feature transform needs no column buffer and the orientation no float
 * copy of the mask; it was 24 MB more). With them, 64 MB leaves as much room for garbage as 96 MB did before: stack
 * peak RSS 322–340 MB at 80 → 296–314 MB at 64, analysis time the same (6.0 s).
 * Rendering keeps 32 MB: at 96 MB a 200 MB upload grew the web server by more. Worker threads take no --expose-gc
 * flag of their own, so the collector is exposed for this thread at run time, on first need.
 */
function collectFrameGarbage(limitBytes: number): void {
  if (process.memoryUsage().arrayBuffers < limitBytes) return
  if (collectGarbage === null) {
    setFlagsFromString('--expose-gc')
    const exposed: unknown = runInNewContext('typeof gc === "function" ? gc : undefined')
    // Should a Node version refuse the flag, work goes on as before, only with the larger footprint.
    collectGarbage = typeof exposed === 'function' ? (exposed as () => void) : () => {}
  }
  collectGarbage()
}

function measureContextImage(context: MaskMeasureContext): FloatImage | GrayImage | undefined {
  if (context.image !== undefined) return context.image
  if (context.frame === undefined || context.recipe === undefined) return undefined
  // Registration needs the stack's anchor, which a lone saved mask does not have: measure on the unshifted frame.
  return preprocessFrame(context.frame, { ...context.recipe, registerFrames: false }, { reference: context.reference })
}

async function runTask(task: AnalysisTask, transfer: ArrayBuffer[]): Promise<unknown> {
  switch (task.kind) {
    case 'probe': {
      const file = fileFor(task.fileId)
      return probeImage(await file.input, file.fileName, file.limits)
    }
    case 'rawRange':
      return rawRange(await decodeSharedFrame(fileFor(task.fileId), task.index))
    case 'histogram': {
      const { image, context } = await frameWithContext(task.fileId, task.index, task.recipe)
      const histogram = ownArray(frameHistogramPass(image, task.recipe, task.range, context))
      transfer.push(histogram.buffer as ArrayBuffer)
      return histogram
    }
    case 'measure': {
      const { image, context } = await frameWithContext(task.fileId, task.index, task.recipe)
      const { measurements, mask } = frameMeasurePass(image, task.recipe, { pixelSizeNm: task.pixelSizeNm, threshold: task.threshold, ...context })
      // Encoded here, off the caller's thread; encodeMask returns a buffer of its own.
      const encodedMask = encodeMask(mask)
      transfer.push(encodedMask.buffer as ArrayBuffer)
      return { measurements, encodedMask }
    }
    case 'contrast': {
      const { image, context } = await frameWithContext(task.fileId, task.index, task.recipe)
      return frameContrastPass(image, task.recipe, task.mask, context)
    }
    case 'analyzeFrame': {
      const { image, context } = await frameWithContext(task.fileId, task.index, task.recipe)
      const result = analyzeFrame(image, task.recipe, { ...task.context, ...context })
      return { ...result, mask: ownMask(result.mask, transfer) }
    }
    case 'measureMask': {
      const { context } = task
      return measureMask(task.mask, {
        pixelSizeNm: context.pixelSizeNm,
        image: measureContextImage(context),
        threshold: context.threshold,
        reassignedFraction: context.reassignedFraction,
        detail: context.detail,
      })
    }
    case 'motion': {
      // A motion series is registered and thresholded as a whole, so one worker decodes every frame of it.
      const file = fileFor(task.fileId)
      const { frameCount } = await probeImage(await file.input, file.fileName, file.limits)
      const frames: GrayImage[] = []
      for (let index = 0; index < frameCount; index++) frames.push(await decodeSharedFrame(file, index))
      return analyzeMotion(frames, task.recipe, task.rows, task.options)
    }
    case 'render':
      return renderedFrame(await decodeSharedFrame(fileFor(task.fileId), task.index), transfer)
    case 'bootstrapCount':
      return countAtLeastAsFar(task.sets, task.reference)
  }
}

function serializeError(err: unknown): SerializedError {
  if (!(err instanceof Error)) return { name: 'Error', message: String(err) }
  const out: SerializedError = { name: err.name, message: err.message }
  const { code, status } = err as { code?: unknown; status?: unknown }
  if (typeof code === 'string') out.code = code
  if (typeof status === 'number') out.status = status
  return out
}

function reply(message: WorkerResponse, transfer: ArrayBuffer[] = []): void {
  port!.postMessage(message, transfer)
}

// Tasks run one at a time per worker (the pool sends the next only after a result), so no task waits on another.
port.on('message', (message: WorkerRequest) => {
  if (message.type === 'share') {
    const bytes = new Uint8Array(message.buffer, 0, message.byteLength)
    files.set(message.fileId, { input: Promise.resolve(bytes), close: async () => {}, fileName: message.fileName, limits: message.limits, kept: new Map() })
  } else if (message.type === 'open') {
    const opened = openFileByteSource(message.path)
    // A file that cannot be opened fails the tasks that use it; unused, it must not be an unhandled rejection.
    opened.catch(() => {})
    const close = () => opened.then((source) => source.close()).catch(() => {})
    files.set(message.fileId, { input: opened, close, fileName: message.fileName, limits: message.limits, kept: new Map() })
  } else if (message.type === 'release') {
    void files.get(message.fileId)?.close()
    files.delete(message.fileId)
  } else {
    const transfer: ArrayBuffer[] = []
    runTask(message.task, transfer)
      .then(
        (value) => reply({ type: 'result', id: message.id, ok: true, value }, transfer),
        (err: unknown) => reply({ type: 'result', id: message.id, ok: false, error: serializeError(err) }),
      )
      // After the reply, so the transferred buffers have left and the pool is not kept waiting.
      .then(() => {
        const limit = FRAME_GARBAGE_LIMITS[message.task.kind]
        if (limit !== undefined) collectFrameGarbage(limit)
      })
  }
})

reply({ type: 'ready' })
