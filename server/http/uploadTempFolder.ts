/**
 * The folder multer writes upload parts to (UPLOAD_TMP_DIR, default `<system temp>/remanence-uploads`). Each request
 * removes its own parts when it ends, but a server killed mid-upload cannot: its parts stay. So the folder is swept
 * when the server starts and every hour after, removing the files not modified for an hour.
 *
 * By age, not "everything at start", because several server processes may share the folder (two on one host, or
 * replicas on a shared volume) and a part another process is still receiving or ingesting is not ours to delete. An
 * hour is far beyond a live part's age: Node ends a request whose body has not arrived within 5 minutes
 * (server.requestTimeout), and a file is ingested within minutes of that; files this process still uses are skipped
 * whatever their age, as a request with many large files can take longer. Created owner-only: parts are lab data.
 * Job workers stream the original of the stack run they process into the same folder (stackRunProcessor.ts): the
 * analysis threads open that file once when the run starts, so even a run longer than an hour, whose file another
 * process's sweep might remove, keeps reading it (an unlinked file stays readable while open).
 */
import { mkdirSync } from 'node:fs'
import { lstat, readdir, unlink } from 'node:fs/promises'
import path from 'node:path'

/** A part not modified for this long belongs to no live request. */
export const STALE_UPLOAD_AGE_MS = 60 * 60 * 1000
const SWEEP_INTERVAL_MS = 60 * 60 * 1000

export interface UploadTempFolder {
  readonly path: string
  /** The sweep made at start; resolves to the number of files it removed. */
  readonly initialSweep: Promise<number>
  /** Keep `paths` from being swept while a request uses them; call the returned function when it is done. */
  hold(paths: string[]): () => void
  /** Remove the files not modified for STALE_UPLOAD_AGE_MS before `now` (ms since the epoch) and not held. */
  sweep(now?: number): Promise<number>
  /** Stop the hourly sweep. */
  close(): void
}

/** Create the folder when missing, sweep it now and then hourly. */
export function openUploadTempFolder(folderPath: string): UploadTempFolder {
  const folder = path.resolve(folderPath)
  mkdirSync(folder, { recursive: true, mode: 0o700 })
  // Multer names each part with 16 random bytes, so a path is held by one request at most.
  const held = new Set<string>()

  async function sweep(now = Date.now()): Promise<number> {
    let removed = 0
    for (const entry of await readdir(folder, { withFileTypes: true })) {
      const file = path.join(folder, entry.name)
      if (!entry.isFile() || held.has(file)) continue
      const stats = await lstat(file).catch(() => null)
      if (stats === null || now - stats.mtimeMs < STALE_UPLOAD_AGE_MS) continue
      // Gone already (its request ended, or another server swept it): nothing to do.
      if (await unlink(file).then(() => true, () => false)) removed++
    }
    return removed
  }

  async function sweepAndReport(): Promise<number> {
    try {
      const removed = await sweep()
      if (removed > 0) console.warn(`[uploads] removed ${removed} upload part(s) older than an hour from ${folder} (left by a server that stopped mid-upload)`)
      return removed
    } catch (err) {
      console.warn(`[uploads] could not sweep ${folder}: ${(err as Error).message}`)
      return 0
    }
  }

  const timer = setInterval(() => void sweepAndReport(), SWEEP_INTERVAL_MS)
  timer.unref()
  return {
    path: folder,
    initialSweep: sweepAndReport(),
    hold(paths) {
      const files = paths.map((file) => path.resolve(file))
      for (const file of files) held.add(file)
      return () => {
        for (const file of files) held.delete(file)
      }
    },
    sweep,
    close: () => clearInterval(timer),
  }
}
