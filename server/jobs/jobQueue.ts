/**
 * The job queue: pg-boss on the PostgreSQL we already run (no new server). The web server only sends jobs; worker
 * processes (server/worker.ts, `npm run worker`, one started by `npm start`) take them, on this machine or any other
 * pointed at the same DATABASE_URL and object store.
 */
import PgBoss from 'pg-boss'

export const STACK_QUEUE = 'stack-analysis'
/** Requests for an idle worker to join a run another worker owns (server/jobs/stackRunProcessor.ts, helpStackRun). */
export const STACK_HELP_QUEUE = 'stack-analysis-help'

export interface StackJobData {
  runId: number
}

export interface JobQueue {
  sendStackRun(runId: number): Promise<void>
  /** Ask for a worker to join the run, at once or after `delaySeconds` (a busy worker passes a request on). */
  sendStackHelp(runId: number, delaySeconds?: number): Promise<void>
  boss(): Promise<PgBoss>
  close(): Promise<void>
}

export function createJobQueue(databaseUrl: string): JobQueue {
  let started: Promise<PgBoss> | null = null
  const boss = () =>
    (started ??= startBoss(databaseUrl).catch((err) => {
      // A start that failed (database down) is tried again by the next caller, so the queue recovers by itself.
      started = null
      throw err
    }))
  return {
    boss,
    async sendStackRun(runId) {
      const id = await (await boss()).send(STACK_QUEUE, { runId } satisfies StackJobData)
      if (!id) throw new Error(`the job for stack run ${runId} was not queued`)
    },
    async sendStackHelp(runId, delaySeconds = 0) {
      await (await boss()).send(STACK_HELP_QUEUE, { runId } satisfies StackJobData, { startAfter: delaySeconds, retryLimit: 0, expireInMinutes: 30 })
    },
    async close() {
      if (!started) return
      const instance = await started.catch(() => null)
      started = null
      await instance?.stop({ graceful: false, wait: true }).catch(() => {})
    },
  }
}

async function startBoss(databaseUrl: string): Promise<PgBoss> {
  const instance = new PgBoss({ connectionString: databaseUrl, max: 4, retryLimit: 3, retryDelay: 2, expireInMinutes: 30 })
  instance.on('error', (err) => console.error('[jobs]', err.message))
  await instance.start()
  try {
    for (const queue of [STACK_QUEUE, STACK_HELP_QUEUE]) await createQueueRacing(instance, queue)
  } catch (err) {
    // Started but unusable: stop its timers and pool before the next caller starts another.
    await instance.stop({ graceful: false, wait: true }).catch(() => {})
    throw err
  }
  return instance
}

/** PostgreSQL errors of two processes creating the same queue at once: deadlock, and the loser's duplicate key or table. */
const CREATE_RACE_CODES = new Set(['40P01', '23505', '42P07'])

/**
 * pg-boss's createQueue is idempotent, but two processes creating a new queue at the same moment (workers started
 * together on a fresh or just-upgraded database) can deadlock on its partition table, and PostgreSQL aborts one of
 * them. The aborted one tries again, and then finds the queue made.
 */
async function createQueueRacing(instance: PgBoss, queue: string, attempts = 5): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await instance.createQueue(queue)
      return
    } catch (err) {
      if (attempt >= attempts || !CREATE_RACE_CODES.has((err as { code?: string }).code ?? '')) throw err
      await new Promise((resolve) => setTimeout(resolve, 50 + Math.random() * 200))
    }
  }
}
