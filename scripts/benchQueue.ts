/**
 * `npm run bench:queue`: stack runs end to end through the job queue, against the target of the "Stacks" issue: a
 * 41-frame 1024² stack processed in ≤ 10 s on this 2-core machine, and two workers faster than one.
 *
 * Services: PostgreSQL from `scripts/postgres.sh` (started when nothing is configured; a server named by DATABASE_URL
 * is used as it is) with a database of its own (`<database>_bench_queue`, created, migrated and dropped here), and
 * s3rver of its own on a free port (scripts/throwawayServices.ts), or the store named by S3_ENDPOINT when set. A lab,
 * a microscopist and a project are created, and the deterministic 41-frame 1024 × 1024 16-bit field sweep of
 * `npm run bench` is uploaded through the image service with its fields CSV, so frames and fields exist as in real use.
 * Workers are real processes (`node --import tsx server/worker.ts`, so the child's pid is the worker's own), started
 * and ready before anything is queued: their start-up is reported apart. Runs are queued through the stack-run service
 * (default recipe) and the database is polled every 100 ms.
 *   (a) one run, one worker with the default threads (one per core): time from queueing to status 'done', split into
 *       the wait for a worker (started_at − created_at) and the processing; then a second run on the same, now warm,
 *       worker (as a long-running worker would be); the worker's peak RSS (VmHWM, which covers its analysis threads);
 *   (b) throughput: N runs of the same image queued at once (the service allows several runs of one image), one worker
 *       with one thread per core against two workers with half as many each (the same total), time until all are done;
 *       fresh workers for every phase, each warmed up by one untimed run first (as long-running workers are), R rounds
 *       in the order 1, 2, 2, 1, … workers (the machine is shared: this keeps a drifting load from favouring one side),
 *       means reported;
 *   (c) scale-out of one run: one run queued, one worker with one thread against two workers with one thread each (an
 *       idle worker joins a run under way, frame by frame), fresh warmed-up workers per phase as in (b), R rounds in
 *       the order 1, 2, 2, 1, …, means reported, with the frames each worker measured (from the frame claims).
 * Cleanup (also on failure, Ctrl-C or when the time limit is hit): workers stopped, the objects it stored in the bucket
 * removed, the database dropped, PostgreSQL stopped if this script started it.
 * Usage: tsx scripts/benchQueue.ts [--json] [--runs N] [--rounds R] [--minutes M]   (N runs per (b) phase, default 4;
 *        R rounds of the two (b) phases, default 2; gives up after M min, default 30)
 */
import { execFile, spawn, type ChildProcess } from 'node:child_process'
import { readFileSync, statSync, writeFileSync } from 'node:fs'
import { availableParallelism, cpus, loadavg } from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { promisify } from 'node:util'
import pg from 'pg'
import { LOCAL_PORTS, loadConfig } from '../server/config'
import { loadSessionUser, type SessionUser } from '../server/auth/sessionUser'
import { Image, Lab, Membership, Project, StackFrameResult, StackRun, User } from '../server/models'
import type { ObjectStore } from '../server/storage/objectStore'
import { createImageService } from '../server/services/imageService'
import { createStackRunService } from '../server/services/stackRunService'
import { encodeTiff } from '../shared/imageio/encodeTiff'
import { benchFieldSweep } from './bench'
import { ANALYSIS_PROCESS_ENV, portIsOpen } from './processes'
import { startThrowawayServices } from './throwawayServices'

const TARGET_SINGLE_RUN_MS = 10_000
const POLL_MS = 100
const WORKER_START_LIMIT_MS = 120_000
const FINISHED = ['done', 'done-with-errors', 'failed']

const root = fileURLToPath(new URL('..', import.meta.url))
const args = process.argv.slice(2)
const json = args.includes('--json')
const numberArg = (name: string, fallback: number) => {
  const at = args.indexOf(name)
  const value = at === -1 ? fallback : Number(args[at + 1])
  if (!Number.isInteger(value) || value < 1) throw new Error(`${name} takes a positive whole number`)
  return value
}
const throughputRuns = numberArg('--runs', 4)
const rounds = numberArg('--rounds', 2)
// Generous: on this 2-core VM at a load average of 8 one round took about 10 min.
const limitMinutes = numberArg('--minutes', 30)
const benchStart = performance.now()
const progress = (message: string) => console.error(`[bench:queue +${((performance.now() - benchStart) / 1000).toFixed(0)} s] ${message}`)
const round1 = (value: number) => Math.round(value * 10) / 10
const runsPerMinute = (ms: number) => round1((throughputRuns * 60_000) / ms)
const meanMs = (phases: { ms: number }[]) => Math.round(phases.reduce((sum, p) => sum + p.ms, 0) / phases.length)
const load = () => loadavg().map(round1) as [number, number, number]

interface Worker {
  child: ChildProcess
  pid: number
  threads: number
}

interface PhaseResult {
  /** Position in the sequence of throughput phases, from 1. */
  order: number
  workers: number
  threadsPerWorker: number
  runs: number
  /** From the first run queued to the last one done, ms. */
  ms: number
  runsPerMinute: number
  /** From spawning the workers to all of them waiting for runs, ms. */
  workerStartMs: number
  /** Largest VmHWM among the workers, MB. */
  workerPeakRssMb: number
  /** CPU time the workers used from the first run queued to the last one done, all threads, ms. */
  workersCpuMs: number
  /** Whether the untimed warm-up runs went one to each worker. */
  everyWorkerWarmedUp: boolean
  /** os.loadavg() when the workers were ready and when the last run was done. */
  loadAverage: { start: number[]; end: number[] }
  /** Claims of all runs together; more than `runs` means a run was taken over (stale heartbeat) and partly redone. */
  attempts: number
}

interface SharedRunPhase {
  order: number
  workers: number
  /** Queued → done, ms. */
  ms: number
  /** Frames measured by each worker (claims), largest first. */
  framesPerWorker: number[]
  loadAverage: { start: number[]; end: number[] }
}

interface QueueBenchReport {
  node: string
  cpus: number
  cpuModel: string
  /** os.loadavg() (1, 5, 15 min): the machine is shared, so the figures are read against it. */
  loadAverage: { start: number[]; afterSingleRun: number[]; end: number[] }
  stack: { frames: number; width: number; height: number; bitDepth: number; recipe: string; imageId: number }
  /** (a) on a freshly started worker, queued → done. */
  singleRunMs: number
  /** (a) again on the same worker, now warm (as a long-running worker would be). */
  warmRunMs: number
  singleRun: SingleRunResult
  warmRun: SingleRunResult
  singleRunWorkerThreads: number
  singleRunWorkerPeakRssMb: number
  singleRunWorkerIdleRssMb: number
  workerStartMs: number
  throughputRuns: number
  throughputRounds: number
  /** Means over the rounds. */
  oneWorkerThroughputMs: number
  twoWorkersThroughputMs: number
  oneWorkerRunsPerMinute: number
  twoWorkersRunsPerMinute: number
  /** One entry per round. */
  oneWorker: PhaseResult[]
  twoWorkers: PhaseResult[]
  twoWorkersFaster: boolean
  /** (c) one run, 1 worker × 1 thread against 2 workers × 1 thread: means over the rounds, and every phase. */
  sharedRunOneWorkerMs: number
  sharedRunTwoWorkersMs: number
  sharedRunPhases: SharedRunPhase[]
  twoWorkersFasterOnOneRun: boolean
  targetSingleRunMs: number
  singleRunTargetMet: boolean
  warmRunTargetMet: boolean
}

interface SingleRunResult {
  /** Queued → seen done, ms. */
  ms: number
  /** created_at → started_at: the wait for a worker to take the run. */
  queueWaitMs: number
  /** started_at → finished_at. */
  processingMs: number
  /** CPU time the worker used meanwhile (all threads): on an otherwise idle machine the run needs about this divided by
   * its threads, plus its serial parts. */
  workerCpuMs: number
  /** Where the processing went, from the rows' timestamps: claim → first frame result (stack-wide threshold passes and
   * the first chunk of frames), first → last frame result, last frame result → summary written. */
  steps: { untilFirstFrameResultMs: number; frameResultsMs: number; summaryMs: number }
}

/** CPU time (user + system) a process has used so far, all its threads, ms; /proc counts in clock ticks of 10 ms. */
function cpuTimeMs(pid: number): number {
  // The command name in field 2 may hold spaces, so the fields are counted from its closing parenthesis.
  const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ')
  return (Number(fields[11]) + Number(fields[12])) * 10
}

/** Peak and current RSS of a process from /proc, MB. */
function memoryOf(pid: number): { peakMb: number; rssMb: number } {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8')
  const kib = (name: string) => Number(new RegExp(`^${name}:\\s+(\\d+) kB`, 'm').exec(status)?.[1] ?? NaN)
  return { peakMb: Math.round(kib('VmHWM') / 1024), rssMb: Math.round(kib('VmRSS') / 1024) }
}

/** A worker process, resolved once it says it waits for runs (its pool is up and it polls the queue). */
function startWorker(env: NodeJS.ProcessEnv, threads: number | null): Promise<Worker> {
  const workerEnv: NodeJS.ProcessEnv = { ...env, ...ANALYSIS_PROCESS_ENV }
  if (threads === null) delete workerEnv.WORKER_THREADS
  else workerEnv.WORKER_THREADS = String(threads)
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/worker.ts'], { cwd: root, env: workerEnv, stdio: ['ignore', 'pipe', 'pipe'] })
  // Worker output goes to stderr, so --json leaves one document on stdout.
  child.stderr!.on('data', (chunk: Buffer) => process.stderr.write(`[worker ${child.pid}] ${chunk}`))
  return new Promise((resolve, reject) => {
    let output = ''
    const timer = setTimeout(() => reject(new Error(`worker ${child.pid} was not ready within ${WORKER_START_LIMIT_MS / 1000} s`)), WORKER_START_LIMIT_MS)
    child.stdout!.on('data', (chunk: Buffer) => {
      process.stderr.write(`[worker ${child.pid}] ${chunk}`)
      output += chunk.toString()
      const ready = /waiting for stack runs \((\d+) analysis threads\)/.exec(output)
      if (ready) {
        clearTimeout(timer)
        resolve({ child, pid: child.pid!, threads: Number(ready[1]) })
      }
    })
    child.once('exit', (code) => {
      clearTimeout(timer)
      reject(new Error(`worker ${child.pid} exited with ${code} before it was ready`))
    })
    child.once('error', reject)
  })
}

function stopWorker(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve()
  return new Promise((resolve) => {
    const force = setTimeout(() => child.kill('SIGKILL'), 10_000)
    child.once('exit', () => {
      clearTimeout(force)
      resolve()
    })
    child.kill('SIGTERM')
  })
}

/** Poll every POLL_MS until every run has finished; throws unless all are 'done'. Returns when the last one was seen done. */
async function waitForRuns(ids: number[]): Promise<number> {
  for (;;) {
    const runs = await StackRun.findAll({ where: { id: ids }, attributes: ['id', 'status', 'error'] })
    if (runs.every((r) => FINISHED.includes(r.status))) {
      const seen = performance.now()
      const bad = runs.filter((r) => r.status !== 'done')
      if (bad.length) throw new Error(`run(s) ${bad.map((r) => `${r.id} ${r.status}: ${r.error}`).join('; ')}`)
      return seen
    }
    await new Promise((r) => setTimeout(r, POLL_MS))
  }
}

/** Queue one run, poll until it is done, and split its time with the timestamps the worker wrote. */
async function timeOneRun(workerPid: number, enqueueOne: () => Promise<number[]>): Promise<SingleRunResult> {
  const cpuBefore = cpuTimeMs(workerPid)
  const queuedAt = performance.now()
  const [id] = await enqueueOne()
  const ms = Math.round((await waitForRuns([id])) - queuedAt)
  const workerCpuMs = cpuTimeMs(workerPid) - cpuBefore
  const run = (await StackRun.findByPk(id))!
  const [created, started, finished] = [run.createdAt.getTime(), run.startedAt!.getTime(), run.finishedAt!.getTime()]
  const resultTimes = (await StackFrameResult.findAll({ where: { runId: id }, attributes: ['createdAt'] })).map((r) => r.createdAt.getTime())
  const [firstResult, lastResult] = [Math.min(...resultTimes), Math.max(...resultTimes)]
  return {
    ms,
    queueWaitMs: started - created,
    processingMs: finished - started,
    workerCpuMs,
    steps: { untilFirstFrameResultMs: firstResult - started, frameResultsMs: lastResult - firstResult, summaryMs: finished - lastResult },
  }
}

async function ensurePostgres(): Promise<boolean> {
  if (process.env.DATABASE_URL) return false
  const wasRunning = await portIsOpen(LOCAL_PORTS.postgres)
  const { stdout } = await promisify(execFile)('bash', ['scripts/postgres.sh', 'start'], { cwd: root })
  if (stdout.trim()) progress(stdout.trim())
  return !wasRunning
}

async function dropDatabase(databaseUrl: string): Promise<void> {
  const admin = new URL(databaseUrl)
  const name = admin.pathname.slice(1)
  admin.pathname = '/postgres'
  const client = new pg.Client({ connectionString: admin.toString() })
  await client.connect()
  try {
    await client.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`)
  } finally {
    await client.end()
  }
}

/** Remove the image's objects: the original, the frame renderings and the masks of every run. Returns how many. */
async function removeImageObjects(store: ObjectStore, imageId: number): Promise<number> {
  const image = (await Image.findByPk(imageId))!
  const folder = image.objectKey.replace(/\/original[^/]*$/, '')
  const runs = await StackRun.findAll({ where: { imageId }, attributes: ['id'] })
  // Two limits of s3rver: it cannot page past 1000 keys (its continuation token needs the DES cipher, which OpenSSL 3
  // no longer offers) and the runs here leave more, so each run's folder is listed on its own and the image's last; and
  // removals in one folder at the same time fail with an internal error, so they go one by one.
  let removed = 0
  for (const prefix of [...runs.map((r) => `${folder}/runs/${r.id}/`), `${folder}/`]) {
    for (const key of await store.list(prefix)) {
      await store.remove(key)
      removed++
    }
  }
  return removed
}

/** A lab of its own in the Kestrel Bay scenario, with one microscopist (who may upload and start runs). */
async function createBenchLab(): Promise<{ user: SessionUser; projectId: number }> {
  const lab = await Lab.create({ name: 'Thin-Film Magnetism Group (queue benchmark)', institution: 'Kestrel Bay Institute' })
  const person = await User.create({ email: 'queue.bench@kestrel-lab.example', name: 'Queue Bench', passwordHash: null, lockedUntil: null })
  await Membership.create({ labId: lab.id, userId: person.id, role: 'microscopist' })
  const project = await Project.create({ labId: lab.id, name: 'Field sweeps for the queue benchmark', description: '', createdById: person.id, deletedAt: null })
  return { user: (await loadSessionUser(person.id))!, projectId: project.id }
}

async function main(): Promise<void> {
  const loadAtStart = load()
  const cores = availableParallelism()
  const startedPostgres = await ensurePostgres()
  const reuseS3 = Boolean(process.env.S3_ENDPOINT)
  // startThrowawayServices always starts an s3rver of its own; with S3_ENDPOINT set, that one stays idle and the store
  // and the workers use the given one.
  const services = await startThrowawayServices('bench_queue', reuseS3 ? { s3: loadConfig().s3 } : {})
  const { deps, config } = services
  const workerEnv: NodeJS.ProcessEnv = reuseS3 ? { ...process.env, DATABASE_URL: config.databaseUrl, SMTP_URL: services.serverEnv.SMTP_URL } : { ...process.env, ...services.serverEnv }
  const workers: ChildProcess[] = []
  let imageId: number | null = null
  let cleaned: Promise<void> | null = null
  const cleanup = () =>
    (cleaned ??= (async () => {
      // Every step is tried even when one before it failed, so a hiccup of the store does not leave the database.
      const failures: string[] = []
      const step = async (what: string, work: () => Promise<unknown>) => {
        try {
          await work()
        } catch (err) {
          failures.push(`${what}: ${(err as Error).message}`)
        }
      }
      await step('stopping the workers', () => Promise.all(workers.map(stopWorker)))
      if (imageId !== null) {
        const id = imageId
        await step(`removing the objects of image ${id} from bucket ${config.s3.bucket}`, async () => progress(`removed ${await removeImageObjects(deps.store, id)} objects from bucket ${config.s3.bucket}`))
      }
      await step('stopping the services', () => services.close())
      await step(`dropping ${config.databaseUrl.replace(/.*\//, '')}`, () => dropDatabase(config.databaseUrl))
      if (startedPostgres) await step('stopping PostgreSQL', () => promisify(execFile)('bash', ['scripts/postgres.sh', 'stop'], { cwd: root }))
      if (failures.length) throw new Error(`cleanup incomplete: ${failures.join('; ')}`)
    })())
  const abort = (why: string) => {
    console.error(`[bench:queue] ABORTED: ${why} (load average ${load().join(', ')}); cleaning up`)
    void cleanup()
      .catch((err: Error) => console.error(`[bench:queue] cleanup failed: ${err.message}`))
      .finally(() => process.exit(2))
  }
  const watchdog = setTimeout(() => abort(`not finished within ${limitMinutes} min`), limitMinutes * 60_000)
  for (const signal of ['SIGINT', 'SIGTERM'] as const) process.once(signal, () => abort(signal))

  try {
    const lab = await createBenchLab()
    progress('generating the 41-frame 1024 × 1024 16-bit field sweep')
    const sweep = benchFieldSweep()
    const stackFile = path.join(services.work, 'field-sweep-41x1024.tif')
    const csvFile = path.join(services.work, 'field-sweep-41x1024.csv')
    writeFileSync(stackFile, encodeTiff(sweep.frames, { pixelSizeNm: 100 }))
    writeFileSync(csvFile, `frame,field_mT\n${sweep.fieldsMT.map((h, i) => `${i},${h}`).join('\n')}\n`)
    const frameCount = sweep.frames.length
    const [width, height] = [sweep.frames[0].width, sweep.frames[0].height]
    progress('storing it through the image service')
    const images = createImageService(deps)
    const file = (name: string) => ({ originalName: path.basename(name), path: name, size: statSync(name).size })
    const [image] = await images.upload(lab.user, lab.projectId, [file(stackFile)], file(csvFile), { technique: 'kerr-polar' })
    imageId = image.id
    const stackRuns = createStackRunService({ ...deps, images })
    // The queue is started here before any timing, so the first send does not carry pg-boss's start.
    await deps.jobs.boss()

    const enqueue = async (count: number) => {
      const ids: number[] = []
      for (let i = 0; i < count; i++) ids.push((await stackRuns.start(lab.user, image.id, {})).id)
      return ids
    }
    const startWorkers = async (count: number, threads: number | null) => {
      const t0 = performance.now()
      const started = await Promise.all(Array.from({ length: count }, () => startWorker(workerEnv, threads)))
      workers.push(...started.map((w) => w.child))
      return { started, startMs: Math.round(performance.now() - t0) }
    }
    const stopAll = async (started: Worker[]) => Promise.all(started.map((w) => stopWorker(w.child)))

    // (a) One run, one worker with the default threads.
    progress('(a) one run, one worker with the default threads')
    const single = await startWorkers(1, null)
    const [singleWorker] = single.started
    const idleRssMb = memoryOf(singleWorker.pid).rssMb
    const singleRun = await timeOneRun(singleWorker.pid, () => enqueue(1))
    progress('(a) the same again on the now warm worker')
    const warmRun = await timeOneRun(singleWorker.pid, () => enqueue(1))
    const singlePeak = memoryOf(singleWorker.pid).peakMb
    await stopAll(single.started)
    const loadAfterSingle = load()

    // (b) N runs at once: one worker with every core as a thread, or two with half each.
    const phases: PhaseResult[] = []
    const phase = async (workerCount: number): Promise<PhaseResult> => {
      const threadsPerWorker = Math.max(1, Math.floor(cores / workerCount))
      progress(`(b) ${throughputRuns} runs, ${workerCount} worker(s) × ${threadsPerWorker} thread(s)`)
      const { started, startMs } = await startWorkers(workerCount, threadsPerWorker)
      // One untimed run per worker first, so every worker is warm as a long-running one is (a busy worker fetches no
      // second job, so each takes one); otherwise two workers would pay the first-run warm-up twice.
      const warmUpIds = await enqueue(workerCount)
      await waitForRuns(warmUpIds)
      const warmedUp = new Set((await StackRun.findAll({ where: { id: warmUpIds }, attributes: ['worker'] })).map((r) => r.worker)).size === workerCount
      const loadBefore = load()
      const cpuBefore = started.reduce((sum, w) => sum + cpuTimeMs(w.pid), 0)
      const t0 = performance.now()
      const ids = await enqueue(throughputRuns)
      const ms = Math.round((await waitForRuns(ids)) - t0)
      const loadAfter = load()
      const workersCpuMs = started.reduce((sum, w) => sum + cpuTimeMs(w.pid), 0) - cpuBefore
      const workerPeakRssMb = Math.max(...started.map((w) => memoryOf(w.pid).peakMb))
      await stopAll(started)
      const attempts = (await StackRun.findAll({ where: { id: ids }, attributes: ['attempts'] })).reduce((sum, r) => sum + r.attempts, 0)
      return { order: phases.length + 1, workers: workerCount, threadsPerWorker, runs: throughputRuns, ms, runsPerMinute: runsPerMinute(ms), workerStartMs: startMs, workerPeakRssMb, workersCpuMs, everyWorkerWarmedUp: warmedUp, loadAverage: { start: loadBefore, end: loadAfter }, attempts }
    }
    // Rounds in the order 1, 2, 2, 1, … workers, so that a load that drifts during the benchmark favours neither.
    for (let round = 0; round < rounds; round++) for (const workerCount of round % 2 === 0 ? [1, 2] : [2, 1]) phases.push(await phase(workerCount))
    const oneWorker = phases.filter((p) => p.workers === 1)
    const twoWorkers = phases.filter((p) => p.workers === 2)
    // (c) One run, one or two one-thread workers: a second worker joins the run under way.
    const sharedRunPhases: SharedRunPhase[] = []
    const sharedRunPhase = async (workerCount: number): Promise<SharedRunPhase> => {
      progress(`(c) one run, ${workerCount} worker(s) × 1 thread`)
      const { started } = await startWorkers(workerCount, 1)
      await waitForRuns(await enqueue(workerCount))
      const loadBefore = load()
      const t0 = performance.now()
      const [id] = await enqueue(1)
      const ms = Math.round((await waitForRuns([id])) - t0)
      const loadAfter = load()
      await stopAll(started)
      const [perWorker] = (await deps.sequelize.query('SELECT count(*)::int AS frames FROM stack_frame_claims WHERE run_id = :id GROUP BY worker ORDER BY 1 DESC', { replacements: { id } })) as [{ frames: number }[], unknown]
      return { order: sharedRunPhases.length + 1, workers: workerCount, ms, framesPerWorker: perWorker.map((r) => r.frames), loadAverage: { start: loadBefore, end: loadAfter } }
    }
    for (let round = 0; round < rounds; round++) for (const workerCount of round % 2 === 0 ? [1, 2] : [2, 1]) sharedRunPhases.push(await sharedRunPhase(workerCount))
    const sharedRunOneWorkerMs = meanMs(sharedRunPhases.filter((p) => p.workers === 1))
    const sharedRunTwoWorkersMs = meanMs(sharedRunPhases.filter((p) => p.workers === 2))

    const oneWorkerThroughputMs = meanMs(oneWorker)
    const twoWorkersThroughputMs = meanMs(twoWorkers)

    const report: QueueBenchReport = {
      node: process.version,
      cpus: cores,
      cpuModel: cpus()[0]?.model ?? 'unknown',
      loadAverage: { start: loadAtStart, afterSingleRun: loadAfterSingle, end: load() },
      stack: { frames: frameCount, width, height, bitDepth: 16, recipe: 'default', imageId: image.id },
      singleRunMs: singleRun.ms,
      warmRunMs: warmRun.ms,
      singleRun,
      warmRun,
      singleRunWorkerThreads: singleWorker.threads,
      singleRunWorkerPeakRssMb: singlePeak,
      singleRunWorkerIdleRssMb: idleRssMb,
      workerStartMs: single.startMs,
      throughputRuns,
      throughputRounds: rounds,
      oneWorkerThroughputMs,
      twoWorkersThroughputMs,
      oneWorkerRunsPerMinute: runsPerMinute(oneWorkerThroughputMs),
      twoWorkersRunsPerMinute: runsPerMinute(twoWorkersThroughputMs),
      oneWorker,
      twoWorkers,
      twoWorkersFaster: twoWorkersThroughputMs < oneWorkerThroughputMs,
      sharedRunOneWorkerMs,
      sharedRunTwoWorkersMs,
      sharedRunPhases,
      twoWorkersFasterOnOneRun: sharedRunTwoWorkersMs < sharedRunOneWorkerMs,
      targetSingleRunMs: TARGET_SINGLE_RUN_MS,
      singleRunTargetMet: singleRun.ms <= TARGET_SINGLE_RUN_MS,
      warmRunTargetMet: warmRun.ms <= TARGET_SINGLE_RUN_MS,
    }
    if (json) process.stdout.write(`${JSON.stringify(report, null, 2)}\n`)
    else printTable(report)
  } finally {
    clearTimeout(watchdog)
    await cleanup()
  }
}

const seconds = (ms: number) => `${(ms / 1000).toFixed(1)} s`

function singleRunRows(label: string, run: SingleRunResult, met: boolean): string[] {
  const s = seconds
  return [
    `| ${label}: queued → done | ${s(run.ms)} | ≤ ${s(TARGET_SINGLE_RUN_MS)} | ${met ? 'met' : 'missed'} |`,
    `| … waiting for the worker to take it | ${s(run.queueWaitMs)} | | |`,
    `| … processing: claim → first frame result (threshold passes + first chunk) | ${s(run.steps.untilFirstFrameResultMs)} | | |`,
    `| … processing: first → last frame result | ${s(run.steps.frameResultsMs)} | | |`,
    `| … processing: last frame result → summary written (masks read back, loop, jumps) | ${s(run.steps.summaryMs)} | | |`,
    `| … CPU time of the worker meanwhile (all threads) | ${s(run.workerCpuMs)} | | |`,
  ]
}

function printTable(r: QueueBenchReport): void {
  const { oneWorker: one, twoWorkers: two } = r
  const s = seconds
  const lines = [
    '# Stack runs through the job queue',
    '',
    `Node ${r.node}, ${r.cpus} logical CPU(s) (${r.cpuModel}); load average (1/5/15 min) ${r.loadAverage.start.join(' / ')} at the start, ${r.loadAverage.end.join(' / ')} at the end.`,
    `Stack: ${r.stack.frames} frames of ${r.stack.width} × ${r.stack.height} 16-bit (field sweep of \`npm run bench\`, fields CSV), stored through the image service; default recipe. Workers started and ready before queueing; in the throughput phases each worker first does one untimed run.`,
    '',
    '| measure | result | target | status |',
    '|---|---:|---:|---|',
    ...singleRunRows(`one run, one worker (${r.singleRunWorkerThreads} threads), first after its start`, r.singleRun, r.singleRunTargetMet),
    ...singleRunRows('the next run on the same (warm) worker', r.warmRun, r.warmRunTargetMet),
    `| worker peak RSS (VmHWM; ${r.singleRunWorkerIdleRssMb} MB when idle) | ${r.singleRunWorkerPeakRssMb} MB | | |`,
    `| worker start-up (spawn → waiting for runs), not in the times above | ${s(r.workerStartMs)} | | |`,
    `| ${r.throughputRuns} runs, 1 worker × ${one[0].threadsPerWorker} threads, mean of ${one.length} | ${s(r.oneWorkerThroughputMs)} (${r.oneWorkerRunsPerMinute} runs/min) | | |`,
    `| ${r.throughputRuns} runs, 2 workers × ${two[0].threadsPerWorker} thread(s), mean of ${two.length} | ${s(r.twoWorkersThroughputMs)} (${r.twoWorkersRunsPerMinute} runs/min) | faster than 1 worker | ${r.twoWorkersFaster ? 'met' : 'missed'} |`,
    `| one run, 1 worker × 1 thread, mean of ${r.sharedRunPhases.filter((p) => p.workers === 1).length} | ${s(r.sharedRunOneWorkerMs)} | | |`,
    `| one run, 2 workers × 1 thread (the second joins the run), mean of ${r.sharedRunPhases.filter((p) => p.workers === 2).length} | ${s(r.sharedRunTwoWorkersMs)} | faster than 1 worker | ${r.twoWorkersFasterOnOneRun ? 'met' : 'missed'} |`,
    '',
    'One run, phases in the order run:',
    '',
    '| workers × threads | queued → done | frames per worker | load average (1 min) start → end |',
    '|---|---:|---|---|',
    ...r.sharedRunPhases.map((p) => `| ${p.workers} × 1 | ${s(p.ms)} | ${p.framesPerWorker.join(' + ')} | ${p.loadAverage.start[0]} → ${p.loadAverage.end[0]} |`),
    '',
    'Throughput phases in the order run:',
    '',
    '| workers × threads | all runs done | CPU time of the workers | load average (1 min) start → end | worker start-up | peak RSS per worker | claims | warmed up |',
    '|---|---:|---:|---|---:|---:|---:|---|',
    ...[...one, ...two]
      .sort((a, b) => a.order - b.order)
      .map((p) => `| ${p.workers} × ${p.threadsPerWorker} | ${s(p.ms)} | ${s(p.workersCpuMs)} | ${p.loadAverage.start[0]} → ${p.loadAverage.end[0]} | ${s(p.workerStartMs)} | ${p.workerPeakRssMb} MB | ${p.attempts} for ${p.runs} runs | ${p.everyWorkerWarmedUp ? 'each worker' : 'NOT each worker'} |`),
  ]
  process.stdout.write(`${lines.join('\n')}\n`)
}

process.chdir(root)
main().catch((err: unknown) => {
  console.error(`[bench:queue] ${err instanceof Error ? err.message : err}`)
  process.exit(1)
})
