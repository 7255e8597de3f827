/**
 * The object store client against the real s3rver: listings longer than one S3 page (1,000 keys) come back whole.
 */
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startTestApp } from './testApp'

describe('object store listing', () => {
  let ctx: ReturnType<typeof startTestApp>
  const prefix = `listing-test/${randomUUID()}/`

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
  })

  afterAll(async () => {
    for (const key of await ctx.deps.store.list(prefix)) await ctx.deps.store.remove(key)
    await ctx.stop()
  })

  it('When a folder holds more keys than one S3 page, then the listing returns every key once', async () => {
    const keys = Array.from({ length: 1_050 }, (_, i) => `${prefix}${String(i).padStart(4, '0')}.txt`)
    for (let i = 0; i < keys.length; i += 50) await Promise.all(keys.slice(i, i + 50).map((key) => ctx.deps.store.put(key, Buffer.from(key), 'text/plain')))
    const listed = await ctx.deps.store.list(prefix)
    expect(listed.length).toBe(keys.length)
    expect([...listed].sort()).toEqual(keys)
  }, 120_000)
})
