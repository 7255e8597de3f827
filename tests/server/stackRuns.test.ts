/**
 * Background stack processing through pg-boss and a real worker process, against the real PostgreSQL and s3rver:
 * a 41-frame field sweep survives a SIGKILL of its worker and finishes without duplicate frame results; its loop
 * equals the one-thread engine's (what the CLI computes); a known coercive field and a known Curie temperature come
 * back; two idle worker processes share one run through the help queue. Ground truth is constructed by the generators in scripts/sampleImages.ts.
 */
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { spawn, type ChildProcess } from 'node:child_process'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { renderFieldSweep, renderTemperatureRamp } from '../../scripts/sampleImages'
import { analyzeStack } from '../../shared/analysis/analyzeStack'
import { normalizeRecipe } from '../../shared/analysis/recipe'
import { StackFrameResult, StackRun } from '../../server/models'
import { findOrphanedRuns } from '../../server/jobs/stackRunProcessor'

const HC_MT = 7.3
const STEP_MT = 2
/** The workers' scratch folder (the run's original is streamed there): the killed worker's copy is removed with it. */
const scratchFolder = mkdtempSync(path.join(tmpdir(), 'remanence-stack-runs-'))

function startWorker(threads = 2): ChildProcess {
  // node --import tsx (not the tsx CLI, which runs the script in a child process): SIGKILL must hit the worker itself.
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker.ts'], {
    env: {
      ...process.env,
      DATABASE_URL: inject('databaseUrl'),
      S3_ENDPOINT: inject('s3Endpoint'),
      S3_BUCKET: inject('s3Bucket'),
      SMTP_URL: inject('smtpUrl'),
      STALE_RUN_SECONDS: '3',
      WORKER_THREADS: String(threads),
      UPLOAD_TMP_DIR: scratchFolder,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  child.stderr!.on('data', (d: Buffer) => process.stderr.write(`[worker] ${d}`))
  return child
}

async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 90_000): Promise<T> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const value = await probe()
    if (value) return value
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`)
    await new Promise((r) => setTimeout(r, 150))
  }
}

describe('stack runs', () => {
  let ctx: ReturnType<typeof startTestApp>
  let session: Awaited<ReturnType<typeof signIn>>
  let projectId: number
  const workers: ChildProcess[] = []

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    const lab = await createLabWithRoles('Stacks')
    projectId = lab.project.id
    session = await signIn(ctx.app, lab.people.microscopist.email)
  })
  afterAll(async () => {
    for (const w of workers) if (w.exitCode === null) w.kill('SIGKILL')
    await ctx.stop()
    rmSync(scratchFolder, { recursive: true, force: true })
  })

  async function uploadStack(name: string, frames: Parameters<typeof encodeTiff>[0], csv: string) {
    const res = await session.agent
      .post(`/api/projects/${projectId}/images`)
      .set('x-csrf-token', session.csrf)
      .attach('files', Buffer.from(encodeTiff(frames, { pixelSizeNm: 100 })), name)
      .attach('frames', Buffer.from(csv), `${name}.csv`)
    expect(res.status).toBe(201)
    return res.body[0].id as number
  }

  it('When the worker is killed mid-run and another starts, then the 41-frame run finishes once per frame, with the loop of the one-thread engine and Hc within one field step', async () => {
    const sweep = renderFieldSweep({ size: 256, seed: 11, coerciveFieldMT: HC_MT, stepMT: STEP_MT })
    expect(sweep.frames).toHaveLength(41)
    const csv = 'frame,field_mT\n' + sweep.fieldsMT.map((f, i) => `${i},${f}`).join('\n')
    const imageId = await uploadStack('sweep.tif', sweep.frames, csv)
    const recipe = normalizeRecipe({ background: 'flatten' })
    const started = await session.agent.post(`/api/images/${imageId}/stack-runs`).set('x-csrf-token', session.csrf).send({ recipe })
    expect(started.status).toBe(202)
    const runId = started.body.id as number

    const first = startWorker()
    workers.push(first)
    await waitFor('some frames done', async () => (await StackRun.findByPk(runId))!.framesDone >= 4)
    first.kill('SIGKILL')
    await new Promise((r) => first.once('exit', r))
    const midway = (await StackRun.findByPk(runId))!
    expect(midway.status).toBe('running')
    expect(midway.framesDone).toBeLessThan(41)

    workers.push(startWorker())
    const done = await waitFor('the run to finish', async () => {
      const run = await StackRun.findByPk(runId)
      return run && ['done', 'done-with-errors', 'failed'].includes(run.status) ? run : null
    })
    const failures = await StackFrameResult.findAll({ where: { runId, measurements: null } })
    expect(failures.map((f) => `${f.frameIndex}: ${f.error}`)).toEqual([])
    expect(done.status).toBe('done')
    expect(done.attempts).toBeGreaterThanOrEqual(2)
    const rows = await StackFrameResult.findAll({ where: { runId } })
    expect(rows).toHaveLength(41)
    expect(new Set(rows.map((r) => r.frameIndex)).size).toBe(41)

    const detail = await session.agent.get(`/api/stack-runs/${runId}`)
    expect(detail.status).toBe(200)
    expect(detail.body.frames).toHaveLength(41)
    const loop = detail.body.loop
    // constructed: the generator's tanh loop crosses M = 0 at ±Hc
    expect(Math.abs(loop.coerciveField - HC_MT)).toBeLessThanOrEqual(STEP_MT)
    expect(loop.fieldUnit).toBe('mT')

    // the same stack through the one-thread engine (the CLI's path) gives the same loop
    const reference = analyzeStack(sweep.frames, recipe, { pixelSizeNm: 100, fieldUnit: 'mT', frames: sweep.fieldsMT.map((field) => ({ field, temperatureK: null })) })
    expect(loop.coerciveField).toBe(reference.loop!.coerciveField)
    expect(loop.remanence).toBe(reference.loop!.remanence)
    expect(detail.body.frames.map((f: { measurements: { magnetization: number } }) => f.measurements.magnetization)).toEqual(reference.frames.map((m) => m.magnetization))
  }, 180_000)

  it('When a temperature stack with a known Curie temperature is processed, then Tc comes back within 2 %', async () => {
    const ramp = renderTemperatureRamp({ seed: 5, size: 128, curieTemperatureK: 390, beta: 0.35 })
    const csv = 'frame,temperature_K\n' + ramp.temperaturesK.map((t, i) => `${i},${t}`).join('\n')
    const imageId = await uploadStack('ramp.tif', ramp.frames, csv)
    const started = await session.agent.post(`/api/images/${imageId}/stack-runs`).set('x-csrf-token', session.csrf).send({ recipe: { background: 'flatten' } })
    expect(started.status).toBe(202)
    if (workers.every((w) => w.exitCode !== null)) workers.push(startWorker())
    const runId = started.body.id as number
    await waitFor('the ramp run to finish', async () => {
      const run = await StackRun.findByPk(runId)
      return run && ['done', 'done-with-errors', 'failed'].includes(run.status) ? run : null
    })
    const detail = await session.agent.get(`/api/stack-runs/${runId}`)
    // constructed: contrast ∝ (1 − T/Tc)^β with Tc = 390 K
    expect(Math.abs(detail.body.curie.tc - 390) / 390).toBeLessThan(0.02)
    expect(detail.body.curie.beta).toBeGreaterThan(0.2)
  }, 120_000)

  it('When two worker processes are idle and one run is queued, then one takes it, the other joins through the help queue, and they split the frames', async () => {
    for (const w of workers) if (w.exitCode === null) w.kill('SIGKILL')
    // Seed 31, 512², 0.5 mT steps (161 frames): a one-thread worker needs about ten seconds for them, time enough for
    // the second to join even on a busy machine (it fetches the original and starts its cold analysis thread
    // meanwhile; with 41 frames, and once with 81, a loaded CI machine let the owner finish alone).
    const stepMT = 0.5
    const sweep = renderFieldSweep({ size: 512, seed: 31, coerciveFieldMT: HC_MT, stepMT })
    const csv = 'frame,field_mT\n' + sweep.fieldsMT.map((f, i) => `${i},${f}`).join('\n')
    const pair = [startWorker(1), startWorker(1)]
    workers.push(...pair)
    // Both ready (each prints its "waiting for stack runs" line) before the run is queued.
    await Promise.all(pair.map((w) => new Promise<void>((resolve) => w.stdout!.on('data', (d: Buffer) => d.toString().includes('waiting for stack runs') && resolve()))))
    const imageId = await uploadStack('shared-by-processes.tif', sweep.frames, csv)
    const started = await session.agent.post(`/api/images/${imageId}/stack-runs`).set('x-csrf-token', session.csrf).send({ recipe: { background: 'flatten' } })
    expect(started.status).toBe(202)
    const runId = started.body.id as number
    const done = await waitFor('the shared run to finish', async () => {
      const run = await StackRun.findByPk(runId)
      return run && ['done', 'done-with-errors', 'failed'].includes(run.status) ? run : null
    })
    expect(done.status).toBe('done')
    expect(await StackFrameResult.count({ where: { runId } })).toBe(sweep.frames.length)
    const detail = await session.agent.get(`/api/stack-runs/${runId}`)
    expect(detail.body.workers).toHaveLength(2)
    expect(detail.body.workers.reduce((sum: number, w: { frames: number }) => sum + w.frames, 0)).toBe(sweep.frames.length)
    expect(detail.body.workers.filter((w: { owner: boolean }) => w.owner).map((w: { name: string }) => w.name)).toEqual([done.worker])
    // constructed: the generator's tanh loop crosses M = 0 at ±Hc
    expect(Math.abs(detail.body.loop.coerciveField - HC_MT)).toBeLessThanOrEqual(stepMT)
  }, 180_000)

  it('When a run reads "running" with a stale heartbeat, then it is queued again unless its own worker is still on it', async () => {
    // E.g. an attempt that ended while the database was down could not mark its run failed.
    const run = (await StackRun.findOne({ order: [['id', 'DESC']] }))!
    const before = { status: run.status, worker: run.worker, heartbeatAt: run.heartbeatAt }
    await run.update({ status: 'running', worker: 'here:1', heartbeatAt: new Date(Date.now() - 120_000) })
    try {
      expect(await findOrphanedRuns(60, 'here:1', new Set())).toContain(run.id)
      expect(await findOrphanedRuns(60, 'here:1', new Set([run.id]))).not.toContain(run.id)
      expect(await findOrphanedRuns(60, 'elsewhere:2', new Set())).toContain(run.id)
      await run.update({ heartbeatAt: new Date() })
      expect(await findOrphanedRuns(60, 'elsewhere:2', new Set())).not.toContain(run.id)
    } finally {
      await run.update(before)
    }
  })

  it('When a reviewer of another lab asks for the run, then 404', async () => {
    const other = await createLabWithRoles('StacksElsewhere')
    const outsider = await signIn(ctx.app, other.people.reviewer.email)
    const run = await StackRun.findOne({ order: [['id', 'DESC']] })
    expect((await outsider.agent.get(`/api/stack-runs/${run!.id}`)).status).toBe(404)
  })
})
