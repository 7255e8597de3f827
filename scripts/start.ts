/**
 * The body of `npm start`. Starts what is not configured to be elsewhere (PostgreSQL, s3rver, the SMTP sink),
 * migrates, seeds the demo lab once, builds the client, and serves client + API on one port. Ctrl-C stops everything
 * it started; data stays in .data/ for the next run.
 */
import type { ChildProcess } from 'node:child_process'
import { fileURLToPath } from 'node:url'
import { loadConfig, LOCAL_PORTS } from '../server/config'
import { createDeps } from '../server/runtime'
import { migrateToLatest } from '../server/migrator'
import { DEMO_PASSWORD, DEMO_PEOPLE } from './demoScenario'
import { ensureSamples } from './ensureSamples'
import { seedDemoLab } from './seed'
import { ANALYSIS_PROCESS_ENV, portIsOpen, run, spawnService, waitForPort, WEB_SERVER_NODE_FLAGS } from './processes'

const root = fileURLToPath(new URL('..', import.meta.url))
process.chdir(root)
const tsx = 'node_modules/.bin/tsx'
const children: ChildProcess[] = []
let startedPostgres = false
const env: NodeJS.ProcessEnv = { ...process.env }

async function startLocalServices() {
  if (!process.env.DATABASE_URL) {
    startedPostgres = !(await portIsOpen(LOCAL_PORTS.postgres))
    await run('bash', ['scripts/postgres.sh', 'start'])
  }
  if (!process.env.S3_ENDPOINT) {
    if (await portIsOpen(LOCAL_PORTS.s3)) console.log(`[s3] something already listens on ${LOCAL_PORTS.s3}: using it`)
    else children.push(spawnService('s3', tsx, ['scripts/s3Server.ts'], env))
    await waitForPort(LOCAL_PORTS.s3, 's3rver')
  }
  if (!process.env.SMTP_URL) {
    env.MAIL_SINK_DIR ??= `${root}.data/mail`
    if (await portIsOpen(LOCAL_PORTS.mail)) console.log(`[mail] something already listens on ${LOCAL_PORTS.mail}: using it`)
    else children.push(spawnService('mail', tsx, ['scripts/mailSink.ts'], env))
    await waitForPort(LOCAL_PORTS.mail, 'SMTP sink')
  }
}

async function prepareDatabase() {
  const deps = createDeps(loadConfig())
  try {
    const applied = await migrateToLatest(deps.sequelize)
    console.log(applied.length ? `[migrate] applied ${applied.join(', ')}` : '[migrate] schema is up to date')
    await deps.store.ensureBucket()
    console.log((await seedDemoLab(deps)) ? '[seed] demo lab created' : '[seed] demo lab already present')
  } finally {
    await deps.dispose()
  }
}

async function stopAll(code: number) {
  for (const child of children) child.kill('SIGTERM')
  await Promise.all(children.map((c) => new Promise((r) => (c.exitCode !== null ? r(null) : c.once('exit', r)))))
  if (startedPostgres) await run('bash', ['scripts/postgres.sh', 'stop']).catch(() => {})
  process.exit(code)
}

process.on('SIGINT', () => void stopAll(0))
process.on('SIGTERM', () => void stopAll(0))

try {
  await startLocalServices()
  ensureSamples()
  await prepareDatabase()
  console.log('[build] building the client')
  await run('node_modules/.bin/vite', ['build', '--logLevel', 'warn'])
  const config = loadConfig()
  const server = spawnService('web', process.execPath, [...WEB_SERVER_NODE_FLAGS, '--import', 'tsx', 'server/index.ts'], { ...env, ...ANALYSIS_PROCESS_ENV })
  children.push(server)
  server.once('exit', (code) => {
    console.error(`[web] exited with ${code}`)
    void stopAll(code ?? 1)
  })
  await waitForPort(config.port, 'web server')
  // One job worker beside the web server; `npm run worker` starts more (here or on other machines).
  const worker = spawnService('worker', tsx, ['server/worker.ts'], { ...env, ...ANALYSIS_PROCESS_ENV })
  children.push(worker)
  console.log(`\nRemanence is up: ${config.publicUrl}\n\nDemo sign-ins (password "${DEMO_PASSWORD}"):`)
  for (const p of DEMO_PEOPLE) console.log(`  ${p.role.padEnd(13)} ${p.email}  (${p.name})`)
  console.log('\nCtrl-C stops everything started here; data stays in .data/.')
} catch (err) {
  console.error(err instanceof Error ? err.message : err)
  await stopAll(1)
}
