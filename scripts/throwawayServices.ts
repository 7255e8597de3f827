/**
 * Services of their own for the loopback load test and the upload benchmark: a database `<DATABASE_URL>_<name>`
 * (dropped and re-created, then migrated) on the PostgreSQL that `scripts/postgres.sh` runs, s3rver in a process of
 * its own (as a deployment's store is another machine: in the script's process it would share the event loop of the
 * load generator or benchmark and slow down what they time) and the SMTP sink, on free 127.0.0.1 ports with their
 * data in a temporary folder. `close()` stops them and removes the folder.
 */
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import pg from 'pg'
import { loadConfig, type AppConfig } from '../server/config'
import { createDeps } from '../server/runtime'
import { migrateToLatest } from '../server/migrator'
import { freePort, spawnService, waitForPort } from './processes'
import { startMailSink } from './mailSink'

async function recreateDatabase(url: URL) {
  const name = url.pathname.slice(1)
  const admin = new URL(url)
  admin.pathname = '/postgres'
  const client = new pg.Client({ connectionString: admin.toString() })
  await client.connect()
  try {
    await client.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`)
    await client.query(`CREATE DATABASE "${name}"`)
  } finally {
    await client.end()
  }
}

/** s3rver (scripts/s3Server.ts) as a child process on a free port; `close()` stops it. */
async function startS3Process(directory: string, bucket: string) {
  const port = await freePort()
  const child = spawnService('s3', process.execPath, ['--import', 'tsx', 'scripts/s3Server.ts'], {
    ...process.env,
    S3_PORT: String(port),
    S3_DATA_DIR: directory,
    S3_BUCKET: bucket,
  })
  const exited = new Promise((resolve) => child.once('exit', resolve))
  await waitForPort(port, 's3rver')
  return {
    endpoint: `http://127.0.0.1:${port}`,
    async close() {
      child.kill('SIGTERM')
      await exited
    },
  }
}

export async function startThrowawayServices(name: string, overrides: Partial<AppConfig> = {}) {
  const databaseUrl = new URL(process.env.DATABASE_URL ?? loadConfig().databaseUrl)
  databaseUrl.pathname = `${databaseUrl.pathname}_${name}`
  await recreateDatabase(databaseUrl)
  const work = mkdtempSync(path.join(tmpdir(), `remanence-${name}-`))
  const bucket = `remanence-${name.replace(/_/g, '-')}`
  const s3 = await startS3Process(path.join(work, 's3'), bucket)
  const mail = await startMailSink({ port: 0, directory: path.join(work, 'mail') })
  const config = loadConfig({
    databaseUrl: databaseUrl.toString(),
    s3: { endpoint: s3.endpoint, region: 'us-east-1', bucket, accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true },
    smtpUrl: mail.url,
    ...overrides,
  })
  const deps = createDeps(config)
  await migrateToLatest(deps.sequelize)
  await deps.store.ensureBucket()
  return {
    config,
    deps,
    /** A temporary folder that `close()` removes. */
    work,
    /** The environment that points a separately started server process (server/index.ts) at these services. */
    serverEnv: {
      DATABASE_URL: config.databaseUrl,
      S3_ENDPOINT: s3.endpoint,
      S3_BUCKET: bucket,
      S3_ACCESS_KEY_ID: 'S3RVER',
      S3_SECRET_ACCESS_KEY: 'S3RVER',
      SMTP_URL: mail.url,
    },
    async close() {
      await deps.dispose()
      await s3.close()
      await mail.close()
      rmSync(work, { recursive: true, force: true })
    },
  }
}
