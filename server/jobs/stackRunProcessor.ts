/**
 * Processes one stack run in worker processes. The run's owner (`processStackRun`): claim the run → stream the
 * original from the object store into a scratch file, which the analysis threads read frame by frame (no process holds
 * the stack) → the stack-wide threshold → ask for help (any idle worker may join, `helpStackRun`) → measure frames,
 * each claimed first in `stack_frame_claims` so that the owner and its helpers never measure the same one, each
 * frame's result written as soon as it is done (upserts: a resumed run overwrites, never duplicates), so storing
 * overlaps the analysis of the next frames → wait for the frames its helpers claimed, taking over those of a helper that
 * went quiet → the stack summary (loop, jumps, Curie fit). A frame that fails is recorded with its error and the others
 * are kept. A run whose owner died (no heartbeat for `staleSeconds`) can be claimed again and resumes where the stored
 * frame results end.
 */
import { randomBytes } from 'node:crypto'
import { unlink } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { Op, type Sequelize } from 'sequelize'
import { normalizeRecipe, type AnalysisRecipe } from '../../shared/analysis/recipe'
import { contrastMaskFrame, pooledThreshold, safeHistogramRange, summarizeCurie, type StackMeta } from '../../shared/analysis/analyzeStack'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import { decodeMask, encodeMask } from '../../shared/imageio/maskEncoding'
import { Frame, Image, StackFrameResult, StackRun } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import type { AnalysisPool, SharedFile } from '../analysis/analysisPool'
import { decodingMaskAt, summarizeLoopInPool } from '../analysis/analyzeStackInPool'
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
  /** Queues a request for another worker to join the run (`helpStackRun`); without it a run gets no helpers. */
  requestHelp?: (runId: number) => Promise<void>
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

/** How often the owner looks for the results of frames its helpers claimed. */
const HELPER_POLL_MS = 200

/**
 * Count the run's stored frame results into `frames_done` (owner and helpers each store their own frames, so no process
 * has the count).
 */
async function recordProgress(sequelize: Sequelize, runId: number) {
  await sequelize.query(
    `UPDATE stack_runs SET frames_done = (SELECT count(*) FROM stack_frame_results WHERE run_id = :runId) WHERE id = :runId`,
    { replacements: { runId } },
  )
}

/**
 * The owner's heartbeat, moved on a timer for as long as it holds the run, a third of `staleSeconds` apart. Moved only
 * between frames, it went stale during a long stretch without one (the stack-wide threshold pass, the summary, a
 * slow frame on a busy machine): another worker then took the run over while its owner was still on it.
 */
function keepHeartbeat(sequelize: Sequelize, runId: number, workerName: string, staleSeconds: number): () => void {
  const beat = () =>
    sequelize
      .query(`UPDATE stack_runs SET heartbeat_at = now() WHERE id = :runId AND worker = :worker AND status = 'running'`, { replacements: { runId, worker: workerName } })
      .catch((err: Error) => console.error(`[worker] run ${runId}: heartbeat not stored: ${err.message}`))
  const timer = setInterval(beat, Math.max(250, (staleSeconds * 1000) / 3))
  return () => clearInterval(timer)
}

/** The recipe segments with one threshold for the whole stack, which the owner computes before any frame is measured. */
const needsStackThreshold = (recipe: AnalysisRecipe) => recipe.method === 'otsu' && recipe.stackThreshold === 'stack-wide'

/** Frame indices `i` of the run `:runId`, out of `:indices`, that nobody has claimed and that have no result. */
const UNCLAIMED_FRAMES_SQL = `SELECT i FROM unnest(ARRAY[:indices]::int[]) AS i
  WHERE NOT EXISTS (SELECT 1 FROM stack_frame_claims c WHERE c.run_id = :runId AND c.frame_index = i)
    AND NOT EXISTS (SELECT 1 FROM stack_frame_results r WHERE r.run_id = :runId AND r.frame_index = i)`

/** Condition on a claim `c`: its frame has no result yet. */
const CLAIM_WITHOUT_RESULT_SQL = 'NOT EXISTS (SELECT 1 FROM stack_frame_results r WHERE r.run_id = c.run_id AND r.frame_index = c.frame_index)'

/** Replacements of UNCLAIMED_FRAMES_SQL (an empty ARRAY[] has no type in PostgreSQL: no frame is asked as index −1). */
const unclaimedReplacements = (runId: number, indices: number[]) => ({ runId, indices: indices.length ? indices : [-1] })

/**
 * Claim the next frame of the run that nobody has claimed and that has no result, or null when none is left. Two
 * workers may pick the same frame at once: the primary key lets one insert win, and the other tries the next frame.
 */
async function claimNextFrame(sequelize: Sequelize, runId: number, indices: number[], workerName: string): Promise<number | null> {
  for (;;) {
    const [rows] = (await sequelize.query(
      `WITH candidate AS (${UNCLAIMED_FRAMES_SQL} ORDER BY i LIMIT 1)
       INSERT INTO stack_frame_claims (run_id, frame_index, worker, claimed_at)
       SELECT :runId, i, :worker, now() FROM candidate
       ON CONFLICT DO NOTHING
       RETURNING frame_index`,
      { replacements: { ...unclaimedReplacements(runId, indices), worker: workerName } },
    )) as [{ frame_index: number }[], unknown]
    if (rows.length) return rows[0].frame_index
    // Nothing inserted: either no candidate is left, or another worker took this one first.
    if (!(await hasUnclaimedFrames(sequelize, runId, indices))) return null
  }
}

/** Whether some frame of the run is neither claimed nor measured. */
async function hasUnclaimedFrames(sequelize: Sequelize, runId: number, indices: number[]): Promise<boolean> {
  const [[row]] = (await sequelize.query(
    `SELECT EXISTS (${UNCLAIMED_FRAMES_SQL}) AS "left"`,
    { replacements: unclaimedReplacements(runId, indices) },
  )) as [{ left: boolean }[], unknown]
  return row.left
}

/**
 * Frames claimed by other workers and still without a result; those claimed more than `staleSeconds` ago (a helper that
 * died or hung) are claimed again by this worker and returned in `takenOver`.
 */
async function pendingHelperFrames(sequelize: Sequelize, runId: number, workerName: string, staleSeconds: number) {
  const [taken] = (await sequelize.query(
    `UPDATE stack_frame_claims c SET worker = :worker, claimed_at = now()
     WHERE c.run_id = :runId AND c.worker <> :worker AND c.claimed_at < now() - make_interval(secs => :stale)
       AND ${CLAIM_WITHOUT_RESULT_SQL}
     RETURNING c.frame_index`,
    { replacements: { runId, worker: workerName, stale: staleSeconds } },
  )) as [{ frame_index: number }[], unknown]
  const [[waiting]] = (await sequelize.query(
    `SELECT count(*)::int AS n FROM stack_frame_claims c WHERE c.run_id = :runId AND c.worker <> :worker AND ${CLAIM_WITHOUT_RESULT_SQL}`,
    { replacements: { runId, worker: workerName } },
  )) as [{ n: number }[], unknown]
  return { takenOver: taken.map((r) => r.frame_index), waiting: waiting.n }
}

export async function processStackRun(deps: ProcessorDeps, runId: number, options: ProcessorOptions): Promise<'processed' | 'skipped'> {
  const run = await claim(deps.sequelize, runId, options)
  if (!run) return 'skipped'
  const stopHeartbeat = keepHeartbeat(deps.sequelize, runId, options.workerName, options.staleSeconds)
  try {
    await runPasses(deps, run, options)
  } catch (err) {
    await run.update({ status: 'failed', error: (err as Error).message, finishedAt: new Date() })
    throw err
  } finally {
    stopHeartbeat()
  }
  return 'processed'
}

export interface HelpOutcome {
  /** 'helped' when this worker measured at least one frame of the run. */
  outcome: 'helped' | 'skipped'
  frames: number
}

/** How often a helper looks whether the owner has stored the stack-wide threshold yet. */
const THRESHOLD_POLL_MS = 200

/**
 * Join a run another worker owns: fetch the original, wait for the stack-wide threshold when the recipe has one, then
 * claim and measure frames beside the owner until none is left (the owner writes the summary). Asks for help in turn
 * first, so a third worker can join as well. Skipped when the run is not running, is this worker's own, has no frame
 * left to claim, or its owner went quiet before the threshold came.
 */
export async function helpStackRun(deps: ProcessorDeps, runId: number, options: ProcessorOptions): Promise<HelpOutcome> {
  const skipped = { outcome: 'skipped', frames: 0 } as const
  const run = await StackRun.findByPk(runId)
  if (!run || run.status !== 'running' || run.worker === options.workerName) return skipped
  const image = await Image.findOne({ where: { id: run.imageId, deletedAt: null } })
  if (!image) return skipped
  const recipe: AnalysisRecipe = normalizeRecipe(run.recipe as Partial<AnalysisRecipe>)
  const indices = (await Frame.findAll({ where: { imageId: image.id }, attributes: ['index'], order: [['index', 'ASC']] })).map((f) => f.index)
  // Late: every frame is taken (the owner is finishing), so fetching the original would be for nothing.
  if (!(await hasUnclaimedFrames(deps.sequelize, runId, indices))) return skipped
  await deps.requestHelp?.(runId).catch((err: Error) => console.error(`[worker] run ${runId}: help not requested: ${err.message}`))
  const original = await fetchOriginal(deps, image.objectKey)
  const file = deps.pool.openFile(original.path, image.name)
  try {
    let threshold = run.threshold ?? undefined
    const deadline = Date.now() + 2 * options.staleSeconds * 1000
    while (threshold === undefined && needsStackThreshold(recipe)) {
      await new Promise((resolve) => setTimeout(resolve, THRESHOLD_POLL_MS))
      await run.reload({ attributes: ['status', 'threshold', 'worker'] })
      if (run.status !== 'running' || Date.now() > deadline) return skipped
      threshold = run.threshold ?? undefined
    }
    const frames = await measureClaimedFrames(deps, { run, image, recipe, file, threshold, workerName: options.workerName, freshMasks: null }, indices)
    return { outcome: frames > 0 ? 'helped' : 'skipped', frames }
  } finally {
    deps.pool.releaseFile(file)
    await original.release()
  }
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

/** What the owner and the helpers of a run share: the run, its image and recipe, and the opened original. */
interface RunContext {
  run: StackRun
  image: Image
  recipe: AnalysisRecipe
  file: SharedFile
  threshold: number | undefined
  workerName: string
  /** The owner keeps the masks it measured (encoded) for the summary; a helper's are read back from the store. */
  freshMasks: Map<number, Uint8Array> | null
}

/** Measure one claimed frame and store its mask and result. */
async function measureFrame(deps: ProcessorDeps, ctx: RunContext, index: number) {
  const { run, image, recipe, file, threshold } = ctx
  const [outcome] = await deps.pool.measurePass(file, [index], recipe, { pixelSizeNm: image.pixelSizeNm, threshold })
  let maskKey: string | null = null
  if (outcome.ok) {
    maskKey = `${image.objectKey.replace(/\/original[^/]*$/, '')}/runs/${run.id}/masks/${outcome.index}.rmsk`
    const { encodedMask } = outcome.value
    await deps.store.put(maskKey, Buffer.from(encodedMask.buffer, encodedMask.byteOffset, encodedMask.byteLength), 'application/octet-stream')
    ctx.freshMasks?.set(outcome.index, encodedMask)
  }
  await StackFrameResult.upsert(
    { runId: run.id, frameIndex: outcome.index, measurements: outcome.ok ? (outcome.value.measurements as unknown as Record<string, unknown>) : null, maskKey, error: outcome.ok ? null : outcome.error.message },
    { conflictFields: ['run_id', 'frame_index'] as never },
  )
  await recordProgress(deps.sequelize, run.id)
}

/**
 * Claim and measure frames until none is left: `pool.size + 1` lanes, so no analysis thread idles while a finished
 * frame is being stored. A lane that fails stops claiming; the error is thrown once the others have finished.
 */
async function measureClaimedFrames(deps: ProcessorDeps, ctx: RunContext, indices: number[]): Promise<number> {
  let measured = 0
  const lane = async () => {
    for (let index = await claimNextFrame(deps.sequelize, ctx.run.id, indices, ctx.workerName); index !== null; index = await claimNextFrame(deps.sequelize, ctx.run.id, indices, ctx.workerName)) {
      await measureFrame(deps, ctx, index)
      measured++
    }
  }
  const lanes = await Promise.allSettled(Array.from({ length: deps.pool.size + 1 }, lane))
  const failure = lanes.find((l) => l.status === 'rejected')
  if (failure) throw (failure as PromiseRejectedResult).reason
  return measured
}

/** The owner waits for the frames its helpers claimed, and measures itself those of a helper that went quiet. */
async function awaitHelpers(deps: ProcessorDeps, ctx: RunContext, staleSeconds: number) {
  for (;;) {
    const { takenOver, waiting } = await pendingHelperFrames(deps.sequelize, ctx.run.id, ctx.workerName, staleSeconds)
    for (const index of takenOver) await measureFrame(deps, ctx, index)
    if (waiting === 0) return
    await recordProgress(deps.sequelize, ctx.run.id)
    await new Promise((resolve) => setTimeout(resolve, HELPER_POLL_MS))
  }
}

async function runPasses(deps: ProcessorDeps, run: StackRun, options: ProcessorOptions) {
  const { store, pool, sequelize } = deps
  // A run queued before its image was deleted is not processed: a purge could remove the image mid-run.
  const image = await Image.findOne({ where: { id: run.imageId, deletedAt: null } })
  if (!image) throw new Error(`image ${run.imageId} of run ${run.id} was deleted`)
  const recipe: AnalysisRecipe = normalizeRecipe(run.recipe as Partial<AnalysisRecipe>)
  const frames = await Frame.findAll({ where: { imageId: image.id }, order: [['index', 'ASC']] })
  const meta: StackMeta = { pixelSizeNm: image.pixelSizeNm, fieldUnit: frames.find((f) => f.fieldUnit)?.fieldUnit ?? null, frames: frames.map((f) => ({ field: f.field, temperatureK: f.temperatureK })) }
  // Claims of an earlier attempt without a result are void: their frames are measured again. Another worker's claim
  // younger than `staleSeconds` is kept: that helper is still on its frame (voided, its result would be stored
  // unclaimed and counted for no worker); the owner waits for it like for any helper's frame, or takes it over.
  await sequelize.query(
    `DELETE FROM stack_frame_claims c WHERE c.run_id = :runId AND ${CLAIM_WITHOUT_RESULT_SQL}
       AND (c.worker = :worker OR c.claimed_at < now() - make_interval(secs => :stale))`,
    { replacements: { runId: run.id, worker: options.workerName, stale: options.staleSeconds } },
  )
  // Asked for first, so that a helper fetches the original while this worker does and while the threshold pass runs.
  await deps.requestHelp?.(run.id).catch((err: Error) => console.error(`[worker] run ${run.id}: help not requested: ${err.message}`))
  const original = await fetchOriginal(deps, image.objectKey)
  const file = pool.openFile(original.path, image.name)
  const all = frames.map((f) => f.index)
  try {
    let threshold = run.threshold ?? undefined
    if (threshold === undefined && needsStackThreshold(recipe)) {
      const ranges = (await pool.rawRangePass(file, all)).filter((o) => o.ok).map((o) => (o as { value: { min: number; max: number } }).value)
      const range = safeHistogramRange(Math.min(...ranges.map((r) => r.min)), Math.max(...ranges.map((r) => r.max)), recipe)
      const histograms = (await pool.histogramPass(file, all, recipe, range)).filter((o) => o.ok).map((o) => (o as { value: Uint32Array }).value)
      threshold = pooledThreshold(histograms, range)
      await run.update({ threshold })
    }
    const ctx: RunContext = { run, image, recipe, file, threshold, workerName: options.workerName, freshMasks: new Map() }
    await measureClaimedFrames(deps, ctx, all)
    await awaitHelpers(deps, ctx, options.staleSeconds)
    const freshMasks = ctx.freshMasks!

    // Summary from the stored results (also those of helpers and of an earlier, interrupted attempt).
    const results = await StackFrameResult.findAll({ where: { runId: run.id }, order: [['frameIndex', 'ASC']] })
    const ok = results.filter((r) => r.measurements && r.maskKey)
    const measurements: FrameMeasurements[] = []
    // Encoded, as stored: decoded one at a time by the summary (a 1024² mask is 1 MB decoded, tens of kB encoded).
    const masks: Uint8Array[] = []
    let blank: Uint8Array | null = null
    const usable: StackMeta = { ...meta, frames: meta.frames.map((f) => ({ ...f })) }
    for (const f of frames) {
      const r = ok.find((x) => x.frameIndex === f.index)
      if (r) {
        measurements[f.index] = r.measurements as unknown as FrameMeasurements
        masks[f.index] = freshMasks.get(f.index) ?? new Uint8Array(await store.get(r.maskKey!))
      } else {
        // A failed frame drops out of the loop and the Curie fit instead of breaking them.
        usable.frames[f.index] = { field: null, temperatureK: null }
        measurements[f.index] = { magnetization: 0, contrast: null } as FrameMeasurements
        blank ??= encodeMask({ width: image.width, height: image.height, data: new Uint8Array(image.width * image.height) })
        masks[f.index] = blank
      }
    }
    const loop = await summarizeLoopInPool(pool, measurements, decodingMaskAt(masks), usable, recipe.minDomainArea)
    const maskFrame = contrastMaskFrame(measurements, usable)
    let curie = null
    if (maskFrame !== null) {
      const indices = all.filter((i) => usable.frames[i].temperatureK !== null)
      const outcomes = await pool.contrastPass(file, indices, recipe, decodeMask(masks[maskFrame]))
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
