/**
 * Processes one stack run in a worker process: claim the run → stream the original from the object store into a
 * scratch file, which the analysis threads read frame by frame (this process never holds the stack) → the stack
 * passes in the analysis thread pool, each frame's result written as soon as that frame is done (upserts: a resumed
 * run overwrites, never duplicates), so storing overlaps the analysis of the next frames → the stack summary (loop,
 * jumps, Curie fit). A frame that fails is recorded with its error and the others are kept. A run whose worker died
 * (no heartbeat for `staleSeconds`) can be claimed again and resumes where the stored frame results end.
 */
import { randomBytes } from 'node:crypto'
import { unlink } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { Op, type Sequelize } from 'sequelize'
import { normalizeRecipe, type AnalysisRecipe } from '../../shared/analysis/recipe'
import { contrastMaskFrame, pooledThreshold, safeHistogramRange, summarizeCurie, type StackMeta } from '../../shared/analysis/analyzeStack'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { BinaryMask } from '../../shared/analysis/types'
import { decodeMask, encodeMask } from '../../shared/imageio/maskEncoding'
import { Frame, Image, StackFrameResult, StackRun } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import type { AnalysisPool } from '../analysis/analysisPool'
import { summarizeLoopInPool } from '../analysis/analyzeStackInPool'
import type { UploadTempFolder } from '../http/uploadTempFolder'

export interface ProcessorDeps {
  sequelize: Sequelize
  store: ObjectStore
  pool: AnalysisPool
  /**
   * Where the original is streamed to while its run is processed (the server's upload folder, whose sweep removes
   * what a killed worker left behind); the system temp folder when not given.
   */
  scratch?: UploadTempFolder
}

export interface ProcessorOptions {
  workerName: string
  /** A running run with no heartbeat for this long is taken to be orphaned. */
  staleSeconds: number
}

/** Atomically take a run that is queued, or running but orphaned. Returns null when another worker has it. */
async function claim(sequelize: Sequelize, runId: number, options: ProcessorOptions): Promise<StackRun | null> {
  const [rows] = (await sequelize.query(
    `UPDATE stack_runs SET status = 'running', worker = :worker, heartbeat_at = now(), started_at = COALESCE(started_at, now()),
       attempts = attempts + 1, updated_at = now()
     WHERE id = :runId AND (status = 'queued' OR (status = 'running' AND (heartbeat_at IS NULL OR heartbeat_at < now() - make_interval(secs => :stale))))
     RETURNING id`,
    { replacements: { runId, worker: options.workerName, stale: options.staleSeconds } },
  )) as [{ id: number }[], unknown]
  return rows.length ? StackRun.findByPk(runId) : null
}

const heartbeat = (runId: number, framesDone?: number) =>
  StackRun.update({ heartbeatAt: new Date(), ...(framesDone !== undefined ? { framesDone } : {}) }, { where: { id: runId } })

export async function processStackRun(deps: ProcessorDeps, runId: number, options: ProcessorOptions): Promise<'processed' | 'skipped'> {
  const run = await claim(deps.sequelize, runId, options)
  if (!run) return 'skipped'
  try {
    await runPasses(deps, run)
  } catch (err) {
    await run.update({ status: 'failed', error: (err as Error).message, finishedAt: new Date() })
    throw err
  }
  return 'processed'
}

/** Stream the run's original into a scratch file, held against the folder's sweep until `release` is called. */
async function fetchOriginal(deps: ProcessorDeps, objectKey: string): Promise<{ path: string; release: () => Promise<void> }> {
  const file = path.join(deps.scratch?.path ?? tmpdir(), `run-${randomBytes(12).toString('hex')}.original`)
  const unhold = deps.scratch?.hold([file]) ?? (() => {})
  const release = async () => {
    await unlink(file).catch(() => {})
    unhold()
  }
  try {
    await deps.store.getToFile(objectKey, file)
  } catch (err) {
    await release()
    throw err
  }
  return { path: file, release }
}

async function runPasses(deps: ProcessorDeps, run: StackRun) {
  const { store, pool } = deps
  // A run queued before its image was deleted is not processed: a purge could remove the image mid-run.
  const image = await Image.findOne({ where: { id: run.imageId, deletedAt: null } })
  if (!image) throw new Error(`image ${run.imageId} of run ${run.id} was deleted`)
  const recipe: AnalysisRecipe = normalizeRecipe(run.recipe as Partial<AnalysisRecipe>)
  const frames = await Frame.findAll({ where: { imageId: image.id }, order: [['index', 'ASC']] })
  const meta: StackMeta = { pixelSizeNm: image.pixelSizeNm, fieldUnit: frames.find((f) => f.fieldUnit)?.fieldUnit ?? null, frames: frames.map((f) => ({ field: f.field, temperatureK: f.temperatureK })) }
  const original = await fetchOriginal(deps, image.objectKey)
  const file = pool.openFile(original.path, image.name)
  const all = frames.map((f) => f.index)
  try {
    let threshold = run.threshold ?? undefined
    if (threshold === undefined && recipe.method === 'otsu' && recipe.stackThreshold === 'stack-wide') {
      const ranges = (await pool.rawRangePass(file, all)).filter((o) => o.ok).map((o) => (o as { value: { min: number; max: number } }).value)
      const range = safeHistogramRange(Math.min(...ranges.map((r) => r.min)), Math.max(...ranges.map((r) => r.max)), recipe)
      const histograms = (await pool.histogramPass(file, all, recipe, range)).filter((o) => o.ok).map((o) => (o as { value: Uint32Array }).value)
      threshold = pooledThreshold(histograms, range)
      await run.update({ threshold, heartbeatAt: new Date() })
    }
    const done = new Set((await StackFrameResult.findAll({ where: { runId: run.id }, attributes: ['frameIndex'] })).map((r) => r.frameIndex))
    const todo = all.filter((i) => !done.has(i))
    // Masks of this attempt stay at hand for the summary; those of an earlier attempt are read back from the store.
    const freshMasks = new Map<number, BinaryMask>()
    let framesDone = done.size
    // One task per frame, all queued at once: the pool stays busy while finished frames are being stored.
    const stored = await Promise.allSettled(
      todo.map(async (index) => {
        const [outcome] = await pool.measurePass(file, [index], recipe, { pixelSizeNm: image.pixelSizeNm, threshold })
        let maskKey: string | null = null
        if (outcome.ok) {
          maskKey = `${image.objectKey.replace(/\/original[^/]*$/, '')}/runs/${run.id}/masks/${outcome.index}.rmsk`
          await store.put(maskKey, Buffer.from(encodeMask(outcome.value.mask)), 'application/octet-stream')
          freshMasks.set(outcome.index, outcome.value.mask)
        }
        await StackFrameResult.upsert(
          { runId: run.id, frameIndex: outcome.index, measurements: outcome.ok ? (outcome.value.measurements as unknown as Record<string, unknown>) : null, maskKey, error: outcome.ok ? null : outcome.error.message },
          { conflictFields: ['run_id', 'frame_index'] as never },
        )
        framesDone++
        await heartbeat(run.id, framesDone)
      }),
    )
    const storeFailure = stored.find((s) => s.status === 'rejected')
    if (storeFailure) throw (storeFailure as PromiseRejectedResult).reason

    // Summary from the stored results (also those of an earlier, interrupted attempt).
    const results = await StackFrameResult.findAll({ where: { runId: run.id }, order: [['frameIndex', 'ASC']] })
    const ok = results.filter((r) => r.measurements && r.maskKey)
    const measurements: FrameMeasurements[] = []
    const masks: BinaryMask[] = []
    const usable: StackMeta = { ...meta, frames: meta.frames.map((f) => ({ ...f })) }
    for (const f of frames) {
      const r = ok.find((x) => x.frameIndex === f.index)
      if (r) {
        measurements[f.index] = r.measurements as unknown as FrameMeasurements
        masks[f.index] = freshMasks.get(f.index) ?? decodeMask(new Uint8Array(await store.get(r.maskKey!)))
      } else {
        // A failed frame drops out of the loop and the Curie fit instead of breaking them.
        usable.frames[f.index] = { field: null, temperatureK: null }
        measurements[f.index] = { magnetization: 0, contrast: null } as FrameMeasurements
        masks[f.index] = { width: image.width, height: image.height, data: new Uint8Array(image.width * image.height) }
      }
    }
    const loop = await summarizeLoopInPool(pool, measurements, masks, usable, recipe.minDomainArea)
    const maskFrame = contrastMaskFrame(measurements, usable)
    let curie = null
    if (maskFrame !== null) {
      const indices = all.filter((i) => usable.frames[i].temperatureK !== null)
      const outcomes = await pool.contrastPass(file, indices, recipe, masks[maskFrame])
      const contrasts = all.map(() => NaN)
      for (const o of outcomes) if (o.ok) contrasts[o.index] = o.value
      curie = summarizeCurie(contrasts, maskFrame, usable)
    }
    const failed = results.filter((r) => r.error).length
    await run.update({
      status: failed ? 'done-with-errors' : 'done',
      summary: { loop, curie } as unknown as Record<string, unknown>,
      framesDone: results.length,
      error: failed ? `${failed} frame(s) could not be analysed; the others are kept.` : null,
      finishedAt: new Date(),
      heartbeatAt: new Date(),
    })
  } finally {
    pool.releaseFile(file)
    await original.release()
  }
}

/**
 * Runs that are running with a stale heartbeat, to be queued again: those of a worker that died, and this worker's own
 * that it is no longer processing (an attempt that ended while the database was unreachable could not mark its run
 * failed; left alone, the run would read "running" until pg-boss expired the job half an hour later).
 */
export async function findOrphanedRuns(staleSeconds: number, workerName: string, activeRunIds: ReadonlySet<number>): Promise<number[]> {
  const stale = new Date(Date.now() - staleSeconds * 1000)
  const runs = await StackRun.findAll({ where: { status: 'running', heartbeatAt: { [Op.lt]: stale } }, attributes: ['id', 'worker'] })
  return runs.filter((r) => r.worker !== workerName || !activeRunIds.has(r.id)).map((r) => r.id)
}
