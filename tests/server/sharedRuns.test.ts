/**
 * One stack run measured by two workers at once (server/jobs/stackRunProcessor.ts: the owner and a helper claim frames
 * one by one), against the real PostgreSQL and s3rver, with a real analysis thread pool for each worker: every frame
 * is measured exactly once, the helper's frames are read back for the summary, and the numbers are those of the
 * one-thread engine (the CLI's path). A helper that claims a frame and dies does not hold the run up: the owner takes
 * the frame over once the claim is stale; taking a run over voids the claims of the attempt before but not those of a
 * helper still on its frame; the owner's heartbeat moves while it stores no frame. Ground truth from the generators
 * in scripts/sampleImages.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { uploadImage } from './analysisFixtures'
import { renderFieldSweep } from '../../scripts/sampleImages'
import { analyzeStack } from '../../shared/analysis/analyzeStack'
import { normalizeRecipe } from '../../shared/analysis/recipe'
import { StackFrameResult, StackRun } from '../../server/models'
import { findOrphanedRuns, helpStackRun, processStackRun } from '../../server/jobs/stackRunProcessor'
import { createAnalysisPool, type AnalysisPool } from '../../server/analysis/analysisPool'

const HC_MT = 7.3
const STEP_MT = 2

describe('a stack run shared by workers', () => {
  let ctx: ReturnType<typeof startTestApp>
  let session: Awaited<ReturnType<typeof signIn>>
  let projectId: number
  const pools: AnalysisPool[] = []
  // Seed 21: a fixed nucleation map; 41 frames of 512² keep the owner busy long enough for a helper to join.
  const sweep = renderFieldSweep({ size: 512, seed: 21, coerciveFieldMT: HC_MT, stepMT: STEP_MT })
  const recipe = normalizeRecipe({ background: 'flatten' })

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    const lab = await createLabWithRoles('SharedRuns')
    projectId = lab.project.id
    session = await signIn(ctx.app, lab.people.microscopist.email)
  })
  afterAll(async () => {
    await Promise.all(pools.map((p) => p.close()))
    await ctx.stop()
  })

  /** Upload the sweep (a new name each time, so the duplicate check does not answer) and queue a run of it. */
  async function queueRun(name: string, frames = sweep.frames): Promise<number> {
    const { imageId } = await uploadImage(session, projectId, { name, frames, pixelSizeNm: 100, fieldsMT: sweep.fieldsMT.slice(0, frames.length) })
    const started = await session.agent.post(`/api/images/${imageId}/stack-runs`).set('x-csrf-token', session.csrf).send({ recipe })
    expect(started.status).toBe(202)
    return started.body.id as number
  }

  const claims = async (runId: number) =>
    (await ctx.deps.sequelize.query('SELECT frame_index, worker FROM stack_frame_claims WHERE run_id = :runId ORDER BY frame_index', { replacements: { runId } }))[0] as { frame_index: number; worker: string }[]

  function workerDeps(threads: number, requestHelp?: (runId: number) => Promise<void>) {
    const pool = createAnalysisPool({ size: threads })
    pools.push(pool)
    return { sequelize: ctx.deps.sequelize, store: ctx.deps.store, pool, requestHelp }
  }

  it('When a second worker joins a run, then both measure frames, none twice, and the run gives the one-thread engine\'s numbers with Hc within one field step', async () => {
    const runId = await queueRun('shared-sweep.tif')
    const options = { staleSeconds: 60 }
    let helped: Promise<{ outcome: string; frames: number }> = Promise.resolve({ outcome: 'not asked', frames: 0 })
    const helper = workerDeps(1)
    // The owner asks for help as the real worker does; here the helper is started at once instead of via pg-boss.
    const owner = workerDeps(1, async (id) => {
      helped = helpStackRun(helper, id, { ...options, workerName: 'helper:2' })
    })
    expect(await processStackRun(owner, runId, { ...options, workerName: 'owner:1' })).toBe('processed')
    const help = await helped
    expect(help.outcome).toBe('helped')

    const run = (await StackRun.findByPk(runId))!
    expect(run.status).toBe('done')
    expect(run.framesDone).toBe(41)
    const rows = await StackFrameResult.findAll({ where: { runId }, order: [['frameIndex', 'ASC']] })
    expect(rows.map((r) => r.frameIndex)).toEqual(sweep.fieldsMT.map((_, i) => i))
    const claimed = await claims(runId)
    expect(claimed.map((c) => c.frame_index)).toEqual(sweep.fieldsMT.map((_, i) => i))
    const byWorker = new Map<string, number>()
    for (const c of claimed) byWorker.set(c.worker, (byWorker.get(c.worker) ?? 0) + 1)
    expect([...byWorker.keys()].sort()).toEqual(['helper:2', 'owner:1'])
    expect(byWorker.get('helper:2')).toBe(help.frames)

    // Same numbers as one thread of the engine on the whole stack (the CLI's path), whoever measured the frame.
    const reference = analyzeStack(sweep.frames, recipe, { pixelSizeNm: 100, fieldUnit: 'mT', frames: sweep.fieldsMT.map((field) => ({ field, temperatureK: null })) })
    expect(rows.map((r) => (r.measurements as { magnetization: number }).magnetization)).toEqual(reference.frames.map((m) => m.magnetization))
    const detail = await session.agent.get(`/api/stack-runs/${runId}`)
    // The run says who measured its frames, most frames first.
    expect(detail.body.workers).toEqual([...byWorker].map(([name, frames]) => ({ name, frames, owner: name === 'owner:1' })).sort((a, b) => b.frames - a.frames || a.name.localeCompare(b.name)))
    expect(detail.body.loop.coerciveField).toBe(reference.loop!.coerciveField)
    expect(detail.body.loop.remanence).toBe(reference.loop!.remanence)
    expect(detail.body.loop.jumps).toEqual(JSON.parse(JSON.stringify(reference.loop!.jumps)))
    // constructed: the generator's tanh loop crosses M = 0 at ±Hc
    expect(Math.abs(detail.body.loop.coerciveField - HC_MT)).toBeLessThanOrEqual(STEP_MT)
  }, 120_000)

  it('When a helper claims a frame and dies, then the owner measures that frame itself once the claim is stale, and the run finishes', async () => {
    const frames = sweep.frames.map((f) => ({ ...f, data: Uint16Array.from(f.data as Uint16Array, (v) => Math.min(65535, v + 1)) }))
    const runId = await queueRun('orphaned-claim.tif', frames)
    // A helper that claimed frame 17 and was killed before storing it: its claim is an hour old.
    const owner = workerDeps(2, async (id) => {
      await ctx.deps.sequelize.query(`INSERT INTO stack_frame_claims (run_id, frame_index, worker, claimed_at) VALUES (:id, 17, 'gone:9', now() - interval '1 hour')`, { replacements: { id } })
    })
    expect(await processStackRun(owner, runId, { staleSeconds: 5, workerName: 'owner:3' })).toBe('processed')
    const run = (await StackRun.findByPk(runId))!
    expect(run.status).toBe('done')
    const rows = await StackFrameResult.findAll({ where: { runId } })
    expect(rows).toHaveLength(41)
    expect(rows.find((r) => r.frameIndex === 17)?.measurements).not.toBeNull()
    expect((await claims(runId)).every((c) => c.worker === 'owner:3')).toBe(true)
  }, 120_000)

  it('When a run is taken over while a helper is still on a frame, then that claim stays, the old ones are voided, and every frame counts for one worker', async () => {
    const frames = sweep.frames.map((f) => ({ ...f, data: Uint16Array.from(f.data as Uint16Array, (v) => Math.min(65535, v + 2)) }))
    const runId = await queueRun('taken-over.tif', frames)
    // Left by the attempt before: frame 5 claimed just now by a helper that is still measuring it, frame 6 by a
    // helper gone an hour ago, frame 7 by this very worker (its own earlier attempt is over).
    await ctx.deps.sequelize.query(
      `INSERT INTO stack_frame_claims (run_id, frame_index, worker, claimed_at) VALUES
         (:runId, 5, 'busy:7', now()), (:runId, 6, 'gone:8', now() - interval '1 hour'), (:runId, 7, 'owner:5', now())`,
      { replacements: { runId } },
    )
    let claimsAtStart: { frame_index: number; worker: string }[] = []
    const owner = workerDeps(2, async (id) => {
      claimsAtStart = await claims(id) // asked for right after the void claims are removed, before any frame
    })
    expect(await processStackRun(owner, runId, { staleSeconds: 3, workerName: 'owner:5' })).toBe('processed')
    expect(claimsAtStart).toEqual([{ frame_index: 5, worker: 'busy:7' }])
    expect(await StackFrameResult.count({ where: { runId } })).toBe(41)
    // The busy helper never stored frame 5 here, so the owner took it over once its claim went stale.
    const final = await claims(runId)
    expect(final.map((c) => c.frame_index)).toEqual(Array.from({ length: 41 }, (_, i) => i))
    expect(final.every((c) => c.worker === 'owner:5')).toBe(true)
  }, 120_000)

  it('When the owner stores no frame for longer than the stale time, then its heartbeat still moves and no other worker takes the run', async () => {
    const frames = sweep.frames.slice(0, 3).map((f) => ({ ...f, data: Uint16Array.from(f.data as Uint16Array, (v) => Math.min(65535, v + 3)) }))
    const runId = await queueRun('long-stretch.tif', frames)
    const staleSeconds = 3
    let orphanedDuringStretch: number[] | null = null
    // Asking for help is awaited before the first frame: held up for over twice the stale time, it stands for any long
    // stretch without a stored frame (a stack-wide threshold pass, the summary of a long stack, a slow store).
    const owner = workerDeps(1, async () => {
      await new Promise((resolve) => setTimeout(resolve, 2.5 * staleSeconds * 1000))
      orphanedDuringStretch = await findOrphanedRuns(staleSeconds, 'other:6', new Set())
    })
    expect(await processStackRun(owner, runId, { staleSeconds, workerName: 'owner:6' })).toBe('processed')
    expect(orphanedDuringStretch).not.toBeNull()
    expect(orphanedDuringStretch).not.toContain(runId)
    expect((await StackRun.findByPk(runId))!.status).toBe('done')
  }, 120_000)

  it('When a helper is offered a run that is not running, is its own, or has no frame left, then it skips it', async () => {
    const finished = (await StackRun.findOne({ where: { status: 'done' }, order: [['id', 'DESC']] }))!
    const helper = workerDeps(1)
    expect((await helpStackRun(helper, finished.id, { staleSeconds: 60, workerName: 'helper:4' })).outcome).toBe('skipped')
    await finished.update({ status: 'running' })
    try {
      expect((await helpStackRun(helper, finished.id, { staleSeconds: 60, workerName: finished.worker! })).outcome).toBe('skipped')
      // Running, but every frame is measured already (the owner is writing the summary): nothing to fetch.
      expect(await helpStackRun(helper, finished.id, { staleSeconds: 60, workerName: 'helper:4' })).toEqual({ outcome: 'skipped', frames: 0 })
    } finally {
      await finished.update({ status: 'done' })
    }
  })
})
