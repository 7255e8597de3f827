/**
 * The web server's V8 flags are listed once (scripts/processes.ts) for the scripts that spawn it; `npm run serve`, the
 * command a deployment uses, has to spell them out in package.json. This keeps the two from drifting apart.
 */
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { WEB_SERVER_NODE_FLAGS } from '../../scripts/processes'

describe('web server flags', () => {
  it('When the server is started with npm run serve, then it gets every flag the start script gives it', () => {
    const scripts = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')).scripts as Record<string, string>
    expect(WEB_SERVER_NODE_FLAGS.length).toBeGreaterThan(0)
    const serve = scripts.serve.split(/\s+/)
    expect(serve.slice(0, 1)).toEqual(['node'])
    for (const flag of WEB_SERVER_NODE_FLAGS) expect(serve).toContain(flag)
    expect(serve.slice(-3)).toEqual(['--import', 'tsx', 'server/index.ts'])
  })
})
