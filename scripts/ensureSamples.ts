/** The demo images are generated (deterministically) when missing, not committed: `npm start` and the benchmarks seed them. */
import { spawnSync } from 'node:child_process'
import { existsSync, readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'

const root = fileURLToPath(new URL('..', import.meta.url))

export function ensureSamples(): void {
  const manifest = JSON.parse(readFileSync(`${root}samples/manifest.json`, 'utf8')) as { files: { file: string }[] }
  if (manifest.files.every((f) => existsSync(`${root}samples/${f.file}`))) return
  console.error('[samples] generating the demo images')
  // Progress goes to stderr, so a caller's stdout (e.g. a benchmark's --json document) stays clean.
  const result = spawnSync(`${root}node_modules/.bin/tsx`, [`${root}scripts/generateSamples.ts`], { stdio: ['ignore', 2, 2] })
  if (result.status !== 0) throw new Error(`scripts/generateSamples.ts exited with ${result.status ?? result.signal}`)
}
