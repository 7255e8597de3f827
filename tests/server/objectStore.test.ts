/**
 * The object store client against the real s3rver: listings longer than one S3 page (1,000 keys) come back whole;
 * an object streamed to a file arrives byte for byte and never overwrites an existing file; objects of one folder
 * removed side by side are all removed.
 */
import { createHash, randomBytes, randomUUID } from 'node:crypto'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
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

  it('When an object larger than one multipart part is streamed to a file, then the file has the same SHA-256', async () => {
    const folder = mkdtempSync(path.join(tmpdir(), 'remanence-get-to-file-'))
    try {
      const body = randomBytes(12 * 1024 * 1024 + 17)
      const key = `${prefix}large.bin`
      await ctx.deps.store.put(key, body, 'application/octet-stream')
      const file = path.join(folder, 'large.bin')
      await ctx.deps.store.getToFile(key, file)
      const sha = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex')
      expect(sha(readFileSync(file))).toBe(sha(body))
      // An existing file is never overwritten (the caller picks a fresh name).
      const existing = path.join(folder, 'existing.bin')
      writeFileSync(existing, 'keep me')
      await expect(ctx.deps.store.getToFile(key, existing)).rejects.toThrow(/EEXIST/)
      expect(readFileSync(existing, 'utf8')).toBe('keep me')
    } finally {
      rmSync(folder, { recursive: true, force: true })
    }
  }, 60_000)

  it('When the objects of many frame folders are removed side by side, then each removal succeeds and nothing is left', async () => {
    // As a purge or a restore does: 50 removals at a time, in listing order, so that several of them empty sibling
    // folders at the same moment (s3rver then races to remove their common parent).
    const folder = `${prefix}purge/`
    const keys = Array.from({ length: 200 }, (_, n) => ['preview.png', 'thumbnail.png', 'pixels.bin'].map((name) => `${folder}images/${n >> 3}/frames/${n & 7}/${name}`)).flat()
    for (let i = 0; i < keys.length; i += 50) await Promise.all(keys.slice(i, i + 50).map((key) => ctx.deps.store.put(key, Buffer.from(key), 'application/octet-stream')))
    const listed = await ctx.deps.store.list(folder)
    const failures: unknown[] = []
    for (let i = 0; i < listed.length; i += 50) {
      const outcomes = await Promise.allSettled(listed.slice(i, i + 50).map((key) => ctx.deps.store.remove(key)))
      failures.push(...outcomes.filter((o) => o.status === 'rejected'))
    }
    expect(failures).toEqual([])
    expect(await ctx.deps.store.list(folder)).toEqual([])
    // Removing what is not there is no error either (S3 answers 204 for a missing key).
    await ctx.deps.store.remove(keys[0])
  }, 60_000)
})
