/**
 * Faults while the app runs: PostgreSQL stopped under a running app (its own throwaway cluster) gives clear 503s and
 * a health report naming the database, and the app recovers by itself once the database is back — same process,
 * same session. An unhandled 'error' event or rejection on the way (a pool, the job queue, the session store) would
 * fail the run: vitest reports them.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createApp } from '../../server/app'
import { createDeps } from '../../server/runtime'
import { createSequelize } from '../../server/db'
import { migrateToLatest } from '../../server/migrator'
import { createJobQueue, STACK_QUEUE, type JobQueue, type StackJobData } from '../../server/jobs/jobQueue'
import { createLabWithRoles, signIn, testConfig } from './testApp'
import { startThrowawayPostgres, type ThrowawayPostgres } from './throwawayPostgres'

/** A request that hangs instead of failing fails the test after this long (not a speed target: a hang check). */
const NO_HANG_MS = 15_000

async function waitFor(what: string, probe: () => boolean, timeoutMs = 15_000): Promise<void> {
  const deadline = Date.now() + timeoutMs
  while (!probe()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`)
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
}

describe('database outage while the app runs', () => {
  let cluster: ThrowawayPostgres
  let deps: ReturnType<typeof createDeps>
  let built: ReturnType<typeof createApp>
  let session: Awaited<ReturnType<typeof signIn>>
  let labId: number
  let workerQueue: JobQueue
  const received: number[] = []

  beforeAll(async () => {
    cluster = await startThrowawayPostgres()
    const migrations = createSequelize(cluster.databaseUrl)
    await migrateToLatest(migrations)
    await migrations.close()
    deps = createDeps(testConfig({ databaseUrl: cluster.databaseUrl }))
    built = createApp(deps)
    const lab = await createLabWithRoles('Faults')
    labId = lab.lab.id
    session = await signIn(built.app, lab.people.pi.email)
    // A polling queue like the worker's holds connections of its own, so the outage reaches it too. The app's own
    // queue is left unstarted: its first start happens during the outage.
    workerQueue = createJobQueue(cluster.databaseUrl)
    await (await workerQueue.boss()).work<StackJobData>(STACK_QUEUE, { pollingIntervalSeconds: 0.5 }, async ([job]) => {
      received.push(job.data.runId)
    })
  })
  afterAll(async () => {
    await workerQueue?.close()
    await built?.close()
    await deps?.dispose()
    await cluster?.destroy()
  })

  it('When PostgreSQL stops and starts again, then requests answer 503 db-unavailable, health names the database, and the same session and job queue work again without restarting the app', async () => {
    const before = await session.agent.get('/api/labs').timeout(NO_HANG_MS)
    expect(before.status).toBe(200)
    expect(before.body.map((l: { id: number }) => l.id)).toContain(labId)

    await cluster.stop()

    const health = await session.agent.get('/api/health').timeout(NO_HANG_MS)
    expect(health.status).toBe(503)
    expect(health.body).toEqual({ ok: false, db: 'down', storage: 'up', mail: 'up' })
    for (const attempt of [
      () => session.agent.get('/api/labs'),
      () => session.agent.post('/api/projects').set('x-csrf-token', session.csrf).send({ labId, name: 'During the outage', description: '' }),
    ]) {
      const res = await attempt().timeout(NO_HANG_MS)
      expect(res.status).toBe(503)
      expect(res.body.error.code).toBe('db-unavailable')
      expect(res.body.error.message).toMatch(/database is not reachable/)
    }
    // #9: a queue start that failed during an outage was cached, so no job could be sent until the app restarted.
    await expect(deps.jobs.sendStackRun(1)).rejects.toThrow()
    // Long enough for the worker's queue to poll the stopped database a few times.
    await new Promise((resolve) => setTimeout(resolve, 2_000))

    await cluster.start()

    const healthAgain = await session.agent.get('/api/health').timeout(NO_HANG_MS)
    expect(healthAgain.status).toBe(200)
    expect(healthAgain.body).toEqual({ ok: true, db: 'up', storage: 'up', mail: 'up' })
    const after = await session.agent.get('/api/labs').timeout(NO_HANG_MS)
    expect(after.status).toBe(200)
    expect(after.body).toEqual(before.body)
    const created = await session.agent.post('/api/projects').set('x-csrf-token', session.csrf).send({ labId, name: 'After the outage', description: '' }).timeout(NO_HANG_MS)
    expect(created.status).toBe(201)
    await deps.jobs.sendStackRun(2)
    await waitFor('the job sent after the restart to reach the worker', () => received.includes(2))
  })
})
