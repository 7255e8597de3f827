/**
 * A job worker process (`npm run worker`; `npm start` runs one beside the web server). It takes stack runs from the
 * pg-boss queue and processes them in a pool of analysis threads. Start more on this machine or others pointed at the
 * same DATABASE_URL and object store to scale out: each run is owned by exactly one worker, and a worker with nothing
 * to do joins a run that is under way, measuring frames beside its owner (frame by frame claims, no frame twice).
 */
import { hostname } from 'node:os'
import { loadConfig } from './config'
import { createDeps } from './runtime'
import { createAnalysisPool } from './analysis/analysisPool'
import { createJobQueue, STACK_HELP_QUEUE, STACK_QUEUE, type StackJobData } from './jobs/jobQueue'
import { findOrphanedRuns, helpStackRun, processStackRun } from './jobs/stackRunProcessor'
import { StackRun } from './models'
import { createDeletionService } from './services/deletionService'
import { openUploadTempFolder } from './http/uploadTempFolder'

const config = loadConfig()
const deps = createDeps(config)
const pool = createAnalysisPool({ size: Number(process.env.WORKER_THREADS ?? 0) || undefined })
const jobs = createJobQueue(config.databaseUrl)
const staleSeconds = Number(process.env.STALE_RUN_SECONDS ?? 60)
const workerName = `${hostname()}:${process.pid}`
/** How often deleted items past their retention period are removed for good (the sweep also runs at start). */
const DELETION_SWEEP_MS = 60 * 60 * 1000
const deletion = createDeletionService(deps)
/** Originals of the runs being processed are streamed here; the folder's sweep removes what a killed worker left. */
const scratch = openUploadTempFolder(config.uploadTmpDir)

/** Runs this worker is processing now (any other run of its own that still reads "running" was left by a failure). */
const activeRuns = new Set<number>()
/** Runs this worker is helping with. */
const helpedRuns = new Set<number>()
/** A busy worker passes a request for help on after this long, for an idle one to take. */
const HELP_PASS_ON_SECONDS = 1
const processorDeps = { ...deps, pool, scratch, requestHelp: (runId: number) => jobs.sendStackHelp(runId) }

/** Runs whose worker died are queued again; the claim in processStackRun makes a double send harmless. */
async function requeueOrphans() {
  for (const id of await findOrphanedRuns(staleSeconds, workerName, activeRuns)) {
    const [updated] = await StackRun.update({ status: 'queued' }, { where: { id, status: 'running' } })
    if (updated) {
      console.log(`[worker] run ${id} lost its worker: queued again`)
      await jobs.sendStackRun(id)
    }
  }
}

const boss = await jobs.boss()
await pool.ready()
await boss.work<StackJobData>(STACK_QUEUE, { pollingIntervalSeconds: 0.5, batchSize: 1 }, async ([job]) => {
  const started = Date.now()
  activeRuns.add(job.data.runId)
  const outcome = await processStackRun(processorDeps, job.data.runId, { workerName, staleSeconds }).finally(() => activeRuns.delete(job.data.runId))
  if (outcome === 'processed') console.log(`[worker] run ${job.data.runId} finished in ${((Date.now() - started) / 1000).toFixed(1)} s`)
})
await boss.work<StackJobData>(STACK_HELP_QUEUE, { pollingIntervalSeconds: 0.5, batchSize: 1 }, async ([job]) => {
  const { runId } = job.data
  if (activeRuns.size + helpedRuns.size > 0) {
    // Busy (often with this very run): leave the request to an idle worker, as long as the run is under way.
    if ((await StackRun.count({ where: { id: runId, status: 'running' } })) > 0) await jobs.sendStackHelp(runId, HELP_PASS_ON_SECONDS)
    return
  }
  helpedRuns.add(runId)
  const help = await helpStackRun(processorDeps, runId, { workerName, staleSeconds }).finally(() => helpedRuns.delete(runId))
  if (help.outcome === 'helped') console.log(`[worker] helped with run ${runId}: measured ${help.frames} frame(s)`)
})
await requeueOrphans().catch((err) => console.error('[worker] requeue failed:', err.message))
/** Several workers may sweep at once: each item is locked while it is removed, so nothing is removed twice. */
async function sweepDeletedItems() {
  const report = await deletion.purgeExpired()
  if (report.purgedProjects + report.purgedImages > 0) console.log(`[worker] retention sweep: ${report.purgedProjects} projects, ${report.purgedImages} images, ${report.objectsRemoved} objects removed for good`)
  for (const failure of report.failures) console.error(`[worker] retention sweep: ${failure.kind} ${failure.id} not removed: ${failure.message}`)
}
await sweepDeletedItems().catch((err) => console.error('[worker] retention sweep failed:', err.message))
const sweeper = setInterval(() => sweepDeletedItems().catch((err) => console.error('[worker] retention sweep failed:', err.message)), DELETION_SWEEP_MS)
const reaper = setInterval(() => requeueOrphans().catch((err) => console.error('[worker] requeue failed:', err.message)), Math.max(1000, (staleSeconds * 1000) / 2))
console.log(`[worker] ${workerName} waiting for stack runs (${pool.size} analysis threads)`)

async function shutdown(signal: string) {
  console.log(`[worker] ${signal}: stopping`)
  clearInterval(reaper)
  clearInterval(sweeper)
  scratch.close()
  await jobs.close()
  await pool.close()
  await deps.dispose()
  process.exit(0)
}
process.on('SIGINT', () => void shutdown('SIGINT'))
process.on('SIGTERM', () => void shutdown('SIGTERM'))
