/**
 * The upload folder (server/http/uploadTempFolder.ts, UPLOAD_TMP_DIR): created at start, parts a killed server left
 * behind removed by age at start, live parts never touched, and an upload's parts written there and removed when the
 * request ends. Each test has a folder of its own.
 */
import { afterAll, describe, expect, it } from 'vitest'
import { once } from 'node:events'
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs'
import { request as httpRequest, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { createLabWithRoles, startTestApp, TEST_PASSWORD } from './testApp'
import { openUploadTempFolder, STALE_UPLOAD_AGE_MS } from '../../server/http/uploadTempFolder'
import { encodeTiff } from '../../shared/imageio/encodeTiff'

const root = mkdtempSync(path.join(tmpdir(), 'remanence-upload-folder-'))
afterAll(() => rmSync(root, { recursive: true, force: true }))

const MINUTE = 60 * 1000

/** A file in `folder` last modified `ageMs` ago. */
function partAged(folder: string, name: string, ageMs: number): string {
  const file = path.join(folder, name)
  writeFileSync(file, 'part of an upload')
  const when = new Date(Date.now() - ageMs)
  utimesSync(file, when, when)
  return file
}

describe('the upload folder', () => {
  it('When the server starts, then a part not modified for over an hour is removed and younger ones are kept', async () => {
    const folder = path.join(root, 'shared')
    mkdirSync(folder)
    const stale = partAged(folder, 'left-by-a-killed-server', 61 * MINUTE)
    const recent = partAged(folder, 'another-server-is-ingesting-it', 59 * MINUTE)
    const fresh = partAged(folder, 'arriving-now', 0)
    const ctx = startTestApp({ uploadTmpDir: folder })
    try {
      expect(await ctx.uploadFolder.initialSweep).toBe(1)
      expect(existsSync(stale)).toBe(false)
      expect(existsSync(recent)).toBe(true)
      expect(existsSync(fresh)).toBe(true)
    } finally {
      await ctx.stop()
    }
  })

  it('When the folder does not exist, then the server creates it, readable by its own user only', async () => {
    const folder = path.join(root, 'missing', 'uploads')
    const ctx = startTestApp({ uploadTmpDir: folder })
    try {
      await ctx.uploadFolder.initialSweep
      expect(statSync(folder).mode & 0o777).toBe(0o700)
    } finally {
      await ctx.stop()
    }
  })

  it('When a request still holds an old part, then a sweep leaves it; once released, the next sweep removes it', async () => {
    const folder = openUploadTempFolder(path.join(root, 'held'))
    try {
      await folder.initialSweep
      const part = partAged(folder.path, 'long-ingest', 0)
      const release = folder.hold([part])
      const later = Date.now() + STALE_UPLOAD_AGE_MS + MINUTE
      expect(await folder.sweep(later)).toBe(0)
      expect(existsSync(part)).toBe(true)
      release()
      expect(await folder.sweep(later)).toBe(1)
      expect(existsSync(part)).toBe(false)
    } finally {
      folder.close()
    }
  })

  it('When an upload is in flight, then its part is in the upload folder, and it is gone once the request ends', async () => {
    const folder = path.join(root, 'in-flight')
    const ctx = startTestApp({ uploadTmpDir: folder })
    const server: Server = ctx.app.listen(0, '127.0.0.1')
    try {
      await once(server, 'listening')
      const { port } = server.address() as AddressInfo
      const { project, people } = await createLabWithRoles('Upload folder')
      const base = `http://127.0.0.1:${port}`
      const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: people.microscopist.email, password: TEST_PASSWORD }) })
      const cookie = login.headers.get('set-cookie')!.split(';')[0]
      const { csrfToken } = (await login.json()) as { csrfToken: string }

      const tiff = Buffer.from(encodeTiff([{ width: 64, height: 64, data: new Uint16Array(64 * 64).map((_, i) => i) }]))
      const boundary = 'remanence-upload-folder-test'
      const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="in-flight.tif"\r\nContent-Type: image/tiff\r\n\r\n`)
      const tail = Buffer.from(`\r\n--${boundary}--\r\n`)
      const req = httpRequest(`${base}/api/projects/${project.id}/images`, {
        method: 'POST',
        headers: { cookie, 'x-csrf-token': csrfToken, 'content-type': `multipart/form-data; boundary=${boundary}`, 'content-length': head.length + tiff.length + tail.length },
      })
      const answered = new Promise<number>((resolve, reject) => {
        req.on('response', (res) => {
          res.resume()
          res.on('end', () => resolve(res.statusCode!))
        })
        req.on('error', reject)
      })
      // Half the file, then wait: multer has opened the part in the upload folder.
      req.write(Buffer.concat([head, tiff.subarray(0, tiff.length >> 1)]))
      const deadline = Date.now() + 10_000
      while (readdirSync(folder).length === 0 && Date.now() < deadline) await new Promise((resolve) => setTimeout(resolve, 20))
      expect(readdirSync(folder)).toHaveLength(1)
      req.end(Buffer.concat([tiff.subarray(tiff.length >> 1), tail]))
      expect(await answered).toBe(201)
      expect(readdirSync(folder)).toEqual([])
    } finally {
      await new Promise((resolve) => server.close(resolve))
      await ctx.stop()
    }
  })
})
