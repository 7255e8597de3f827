/**
 * A PostgreSQL cluster of a test's own (Debian's server binaries, as in scripts/postgres.sh), in a temporary folder
 * on a free loopback port with trust auth, so a test can stop and start the database under a running app without
 * touching the shared test database.
 */
import { execFile } from 'node:child_process'
import { mkdtempSync, readdirSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { promisify } from 'node:util'
import pg from 'pg'
import { freePort } from '../../scripts/processes'

const run = promisify(execFile)

/** initdb refuses to run as root, so as root the cluster belongs to the postgres user (as in scripts/postgres.sh). */
const AS_POSTGRES = process.getuid?.() === 0 ? ['runuser', '-u', 'postgres', '--'] : []

function serverBinaries(): string {
  const versions = readdirSync('/usr/lib/postgresql').sort((a, b) => Number(a) - Number(b))
  if (!versions.length) throw new Error('no PostgreSQL server binaries under /usr/lib/postgresql (run scripts/postgres.sh start once)')
  return `/usr/lib/postgresql/${versions.at(-1)}/bin`
}

async function asPostgres(command: string, args: string[]): Promise<void> {
  const [program, ...prefix] = [...AS_POSTGRES, command]
  await run(program, [...prefix, ...args])
}

export interface ThrowawayPostgres {
  /** A database of its own on the cluster, for the app under test. */
  databaseUrl: string
  start(): Promise<void>
  /** `pg_ctl stop -m fast`: open connections are terminated, as in a database restart. */
  stop(): Promise<void>
  destroy(): Promise<void>
}

export async function startThrowawayPostgres(databaseName = 'remanence'): Promise<ThrowawayPostgres> {
  const bin = serverBinaries()
  const root = mkdtempSync(path.join(tmpdir(), 'remanence-pg-'))
  const data = path.join(root, 'data')
  if (AS_POSTGRES.length) await run('chown', ['postgres:postgres', root])
  await asPostgres(`${bin}/initdb`, ['-D', data, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8'])
  const port = await freePort()
  const pgCtl = (...args: string[]) => asPostgres(`${bin}/pg_ctl`, ['-D', data, '-w', '-t', '30', ...args])
  const start = () => pgCtl('-l', path.join(root, 'server.log'), '-o', `-p ${port} -k ${root} -c listen_addresses=127.0.0.1 -c fsync=off`, 'start')
  const stop = () => pgCtl('-m', 'fast', 'stop')
  const destroy = async () => {
    await stop().catch(() => {})
    rmSync(root, { recursive: true, force: true })
  }
  try {
    await start()
    const admin = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${port}/postgres` })
    await admin.connect()
    try {
      await admin.query(`CREATE DATABASE "${databaseName}"`)
    } finally {
      await admin.end()
    }
  } catch (err) {
    await destroy()
    throw err
  }
  return { databaseUrl: `postgres://postgres@127.0.0.1:${port}/${databaseName}`, start, stop, destroy }
}
