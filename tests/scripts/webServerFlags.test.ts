/**
 * The web server's V8 flags and the analysis processes' environment live in scripts/processes.ts (used by npm start,
 * the benchmarks and the load test); `npm run serve` and `npm run worker` spell them out by hand. These checks keep
 * the two in step.
 */
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { ANALYSIS_PROCESS_ENV, WEB_SERVER_NODE_FLAGS } from '../../scripts/processes'

const scripts = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')).scripts as Record<string, string>

/** `NAME=${NAME:-value}` words at the start of a script: the environment it sets unless the caller already did. */
function environmentDefaults(script: string): Record<string, string> {
  const defaults: Record<string, string> = {}
  for (const word of script.split(/\s+/)) {
    const match = /^(\w+)=\$\{\1:-(.*)\}$/.exec(word)
    if (!match) break
    defaults[match[1]] = match[2]
  }
  return defaults
}

describe('web server flags', () => {
  it('When the server is started with npm run serve, then it gets every flag the start script gives it', () => {
    expect(WEB_SERVER_NODE_FLAGS.length).toBeGreaterThan(0)
    const serve = scripts.serve.split(/\s+/).filter((word) => !/^\w+=/.test(word))
    expect(serve.slice(0, 1)).toEqual(['node'])
    for (const flag of WEB_SERVER_NODE_FLAGS) expect(serve).toContain(flag)
    expect(serve.slice(-3)).toEqual(['--import', 'tsx', 'server/index.ts'])
  })

  it.each(['serve', 'worker'])('When the analysis processes are started with npm run %s, then they get the environment the start script gives them', (name) => {
    // An explicit MALLOC_ARENA_MAX in the caller's environment would change the constant; the defaults are what count.
    expect(environmentDefaults(scripts[name])).toEqual({ MALLOC_ARENA_MAX: '2' })
    expect(Object.keys(ANALYSIS_PROCESS_ENV)).toEqual(['MALLOC_ARENA_MAX'])
  })
})
