/**
 * The analysis worker as one plain ES module, bundled with esbuild (the bundler tsx itself runs on).
 *
 * Why: a worker thread that loads the TypeScript sources through tsx's loader hooks resolves and compiles every module
 * again, through a hooks thread of its own, and then resolves each file of its npm packages: close to a second and
 * tens of MB per worker. The bundle (our sources and the small pure-JS packages in one file) loads in a fraction of
 * that. jimp (loaded only for PNG/JPEG, and big) and geotiff (which starts helper workers of its own) stay external,
 * resolved from the project's node_modules as in the sources. The code is the same esbuild output tsx would run, so
 * results are identical.
 * Bundles live under node_modules/.cache/remanence, named by the SHA-256 of their code, so processes started from
 * the same sources share one file and never overwrite each other's. A manifest records the size and modification
 * time of every input: when none changed, the next process reuses the bundle without building (a build takes about
 * half a second).
 * When bundling is impossible (no write access to node_modules, esbuild missing), the workers fall back to the
 * TypeScript sources through analysisWorkerBootstrap.mjs.
 */
import { createHash } from 'node:crypto'
import { existsSync, mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'
import { buildSync } from 'esbuild'

const ROOT = fileURLToPath(new URL('../..', import.meta.url))
const WORKER_SOURCE = fileURLToPath(new URL('./analysisWorker.ts', import.meta.url))
const BOOTSTRAP = new URL('./analysisWorkerBootstrap.mjs', import.meta.url)
const CACHE_FOLDER = path.join(ROOT, 'node_modules', '.cache', 'remanence')
const MANIFEST = path.join(CACHE_FOLDER, 'analysis-worker.json')
/** Packages left out of the bundle (see the header). */
const EXTERNAL_PACKAGES = ['jimp', 'geotiff']

/** The bundle's file name and, per input path (relative to the project), its [size, mtimeMs] when it was built. */
interface Manifest {
  bundle: string
  inputs: Record<string, [number, number]>
}

let script: { url: URL; bundled: boolean } | null = null

function fingerprint(file: string): [number, number] | null {
  try {
    const stats = statSync(path.join(ROOT, file))
    return [stats.size, stats.mtimeMs]
  } catch {
    return null
  }
}

/** The bundle of the last build when it exists and none of its inputs changed since. */
function cachedBundle(): string | null {
  try {
    const manifest = JSON.parse(readFileSync(MANIFEST, 'utf8')) as Manifest
    const file = path.join(CACHE_FOLDER, path.basename(manifest.bundle))
    if (!existsSync(file)) return null
    for (const [input, [size, mtimeMs]] of Object.entries(manifest.inputs)) {
      const now = fingerprint(input)
      if (now === null || now[0] !== size || now[1] !== mtimeMs) return null
    }
    return file
  } catch {
    return null
  }
}

/** Written aside and renamed: a process starting at the same moment never reads a half-written file. */
function writeAtomically(file: string, contents: string | Uint8Array): void {
  const partial = `${file}.${process.pid}.partial`
  writeFileSync(partial, contents)
  renameSync(partial, file)
}

function build(): string {
  const result = buildSync({
    absWorkingDir: ROOT,
    entryPoints: [WORKER_SOURCE],
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    external: EXTERNAL_PACKAGES,
    metafile: true,
    write: false,
    logLevel: 'silent',
  })
  const code = result.outputFiles[0].contents
  const file = path.join(CACHE_FOLDER, `analysis-worker-${createHash('sha256').update(code).digest('hex').slice(0, 16)}.mjs`)
  mkdirSync(CACHE_FOLDER, { recursive: true })
  if (!existsSync(file)) writeAtomically(file, code)
  const inputs: Manifest['inputs'] = {}
  for (const input of Object.keys(result.metafile.inputs)) {
    const now = fingerprint(input)
    if (now !== null) inputs[input] = now
  }
  writeAtomically(MANIFEST, JSON.stringify({ bundle: path.basename(file), inputs } satisfies Manifest))
  return file
}

/**
 * The module every analysis worker thread starts from: the bundle (reused, or built on the first call in this
 * process), or the TypeScript bootstrap when no bundle can be built.
 */
export function analysisWorkerScript(): { url: URL; bundled: boolean } {
  if (script === null) {
    try {
      script = { url: pathToFileURL(cachedBundle() ?? build()), bundled: true }
    } catch (err) {
      console.warn(`[analysis] could not bundle the analysis worker (${(err as Error).message}); workers load the TypeScript sources instead`)
      script = { url: BOOTSTRAP, bundled: false }
    }
  }
  return script
}
