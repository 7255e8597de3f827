/**
 * Backups: a pg_dump of the database (custom format) plus a copy of every object in the bucket, with a manifest of
 * SHA-256 checksums; restore verifies every checksum first, then replaces the database and makes the bucket equal to
 * the backup. The PostgreSQL client tools come from Debian's postgresql-client (installed with the server).
 */
import { createHash } from 'node:crypto'
import { spawn } from 'node:child_process'
import { mkdir, readFile, writeFile } from 'node:fs/promises'
import path from 'node:path'
import pLimit from 'p-limit'
import type { ObjectStore } from '../storage/objectStore'

export interface BackupManifest {
  format: 'remanence-backup-1'
  createdAt: string
  database: { file: string; sha256: string }
  objects: { key: string; file: string; sha256: string; bytes: number }[]
}

/**
 * Objects are copied this many at a time: one by one, each request waits its round trip, and a bucket of a few
 * thousand small objects (previews, thumbnails, masks) takes minutes; a few in flight hide the latency without
 * flooding the store or holding more than a few objects in memory.
 */
const OBJECTS_IN_FLIGHT = 8

/** Runs `task` for every item, at most OBJECTS_IN_FLIGHT at once; results keep the items' order. */
function forEachObject<T, R>(items: readonly T[], task: (item: T) => Promise<R>): Promise<R[]> {
  const limit = pLimit(OBJECTS_IN_FLIGHT)
  return Promise.all(items.map((item) => limit(() => task(item))))
}

const sha256 = (data: Buffer) => createHash('sha256').update(data).digest('hex')

function runTool(command: string, args: string[]): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { stdio: ['ignore', 'ignore', 'pipe'] })
    let stderr = ''
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()))
    child.on('error', (err) => reject(new Error(`${command} could not start: ${err.message}`)))
    child.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(`${command} exited with ${code}: ${stderr.trim().slice(0, 500)}`))))
  })
}

/** Object keys become file names under objects/, with their folders. Keys never contain "..": they are ours. */
const objectFile = (key: string) => path.join('objects', ...key.split('/'))

export async function backup(deps: { databaseUrl: string; store: ObjectStore }, folder: string): Promise<BackupManifest> {
  await mkdir(folder, { recursive: true })
  const dumpFile = path.join(folder, 'database.dump')
  // The job queue's schema (pg-boss) is left out: queued jobs are transient, and its partitioned tables cannot be
  // dropped by pg_restore --clean. After a restore, start stack runs again if some were in flight.
  await runTool('pg_dump', ['--format=custom', '--no-owner', '--no-privileges', '--exclude-schema=pgboss', `--file=${dumpFile}`, deps.databaseUrl])
  const objects = await forEachObject(await deps.store.listDetailed(), async ({ key }) => {
    const body = await deps.store.get(key)
    const file = objectFile(key)
    await mkdir(path.dirname(path.join(folder, file)), { recursive: true })
    await writeFile(path.join(folder, file), body)
    return { key, file, sha256: sha256(body), bytes: body.length }
  })
  const manifest: BackupManifest = { format: 'remanence-backup-1', createdAt: new Date().toISOString(), database: { file: 'database.dump', sha256: sha256(await readFile(dumpFile)) }, objects }
  await writeFile(path.join(folder, 'manifest.json'), JSON.stringify(manifest, null, 2))
  return manifest
}

export async function restore(deps: { databaseUrl: string; store: ObjectStore }, folder: string): Promise<{ objects: number }> {
  const manifest = JSON.parse(await readFile(path.join(folder, 'manifest.json'), 'utf8')) as BackupManifest
  if (manifest.format !== 'remanence-backup-1') throw new Error(`${folder} is not a Remanence backup (format ${String(manifest.format)})`)
  // Verify everything before touching anything.
  if (sha256(await readFile(path.join(folder, manifest.database.file))) !== manifest.database.sha256) throw new Error('database.dump does not match its checksum: backup damaged')
  await forEachObject(manifest.objects, async (o) => {
    if (sha256(await readFile(path.join(folder, o.file))) !== o.sha256) throw new Error(`${o.file} does not match its checksum: backup damaged`)
  })
  await runTool('pg_restore', ['--clean', '--if-exists', '--no-owner', '--no-privileges', '--single-transaction', `--dbname=${deps.databaseUrl}`, path.join(folder, manifest.database.file)])
  await deps.store.ensureBucket()
  const wanted = new Set(manifest.objects.map((o) => o.key))
  const unwanted = (await deps.store.listDetailed()).filter(({ key }) => !wanted.has(key))
  await forEachObject(unwanted, ({ key }) => deps.store.remove(key))
  await forEachObject(manifest.objects, async (o) => deps.store.put(o.key, await readFile(path.join(folder, o.file)), 'application/octet-stream'))
  return { objects: manifest.objects.length }
}
