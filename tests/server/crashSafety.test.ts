/**
 * Crash safety: the real web server process (`node --import tsx server/index.ts`) is killed with SIGKILL in the middle
 * of a stack upload and of a mask save, then started again. Whatever moment the kill hit, the upload or the new mask
 * version exists completely or not at all once the consistency check (`check:consistency --fix`) has removed the
 * objects the killed request left behind, and everything committed before the kill is intact and readable.
 * The moment of the kill is racy by nature, so each case is tried at a few moments (one test each, one restart each)
 * and only the invariants are asserted.
 */
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { execFile, spawn, type ChildProcess } from 'node:child_process'
import { once } from 'node:events'
import { createHash } from 'node:crypto'
import { promisify } from 'node:util'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { createLabWithRoles, signIn, startTestApp, testConfig } from './testApp'
import { freePort } from '../../scripts/processes'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { maskToBase64 } from '../../shared/imageio/maskEncoding'
import type { BinaryMask, GrayImage } from '../../shared/analysis/types'
import { checkConsistency } from '../../server/services/consistencyService'
import { frameObjectKey } from '../../server/services/imageService'
import { Frame, Image, Project } from '../../server/models'

const SESSION_SECRET = 'crash-safety-session-secret'
/**
 * A bucket of this file's own: a killed upload can leave s3rver with a half-written object that makes every later
 * listing of the bucket fail (InternalError), which must not reach the other test files' whole-bucket checks.
 */
const CRASH_BUCKET = `crash-safety-${process.pid}`
const run = promisify(execFile)
/** The server's temporary folder (multer's upload parts): a killed upload leaves its parts there, removed after the run. */
const serverTmp = mkdtempSync(path.join(tmpdir(), 'remanence-crash-'))

function serverEnv(port: number): NodeJS.ProcessEnv {
  return {
    ...process.env,
    PORT: String(port),
    HOST: '127.0.0.1',
    DATABASE_URL: inject('databaseUrl'),
    S3_ENDPOINT: inject('s3Endpoint'),
    S3_BUCKET: CRASH_BUCKET,
    SMTP_URL: inject('smtpUrl'),
    // The same secret after a restart, so the session cookies stay valid.
    SESSION_SECRET,
    TMPDIR: serverTmp,
    LOGIN_RATE_MAX: '1000',
  }
}

/** The web server as a process of its own: node --import tsx (the tsx CLI forks a child that SIGKILL would miss). */
async function startServer(port: number): Promise<ChildProcess> {
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], { env: serverEnv(port), stdio: ['ignore', 'ignore', 'pipe'] })
  let stderr = ''
  child.stderr!.on('data', (d: Buffer) => (stderr += d.toString()))
  const deadline = Date.now() + 45_000
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited with ${child.exitCode} while starting:\n${stderr}`)
    const health = await fetch(`http://127.0.0.1:${port}/api/health`).catch(() => null)
    if (health?.status === 200) return child
    if (Date.now() > deadline) throw new Error(`the server did not answer /api/health within 45 s:\n${stderr}`)
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
}

async function killHard(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return
  const exited = once(child, 'exit')
  child.kill('SIGKILL')
  await exited
}

/** Frames of seeded 16-bit noise: every seed gives another file (another SHA-256), and noise keeps previews slow to encode. */
function noiseStack(seed: number, frameCount: number, size: number): Buffer {
  let state = seed >>> 0 || 1
  const next = () => {
    state ^= state << 13
    state ^= state >>> 17
    state ^= state << 5
    return state >>> 0
  }
  const frames: GrayImage[] = Array.from({ length: frameCount }, () => ({ width: size, height: size, data: Uint16Array.from({ length: size * size }, () => next() & 0xffff) }))
  return Buffer.from(encodeTiff(frames, { pixelSizeNm: 80 }))
}

const sha256 = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex')

async function waitUntil(probe: () => Promise<boolean>, timeoutMs: number): Promise<boolean> {
  const deadline = Date.now() + timeoutMs
  while (Date.now() < deadline) {
    if (await probe()) return true
    await new Promise((resolve) => setTimeout(resolve, 10))
  }
  return false
}

describe('crash safety: the web server process killed with SIGKILL and started again', () => {
  let ctx: ReturnType<typeof startTestApp>
  let lab: Awaited<ReturnType<typeof createLabWithRoles>>
  let port: number
  let baseUrl: string
  let server: ChildProcess
  let microscopist: Awaited<ReturnType<typeof signIn>>
  let annotator: Awaited<ReturnType<typeof signIn>>
  let committedImage: { id: number; sha256: string }
  const labPrefix = () => `labs/${lab.lab.id}/`

  beforeAll(async () => {
    // In-process only for seeding and for reading the stored state; every request goes to the server process.
    ctx = startTestApp({ s3: { ...testConfig().s3, bucket: CRASH_BUCKET } })
    await ctx.deps.store.ensureBucket()
    lab = await createLabWithRoles('Crash')
    port = await freePort()
    baseUrl = `http://127.0.0.1:${port}`
    server = await startServer(port)
    microscopist = await signIn(baseUrl, lab.people.microscopist.email)
    annotator = await signIn(baseUrl, lab.people.annotator.email)
    const bytes = noiseStack(1, 3, 128)
    const up = await microscopist.agent.post(`/api/projects/${lab.project.id}/images`).set('x-csrf-token', microscopist.csrf).attach('files', bytes, 'committed.tif')
    expect(up.status).toBe(201)
    committedImage = { id: up.body[0].id, sha256: sha256(bytes) }
  })
  afterAll(async () => {
    if (server) await killHard(server)
    // This file's images live in its own bucket: their rows go too, so later whole-database checks (dataSafety) do
    // not find rows whose objects are in a bucket they never look at.
    if (lab) {
      const projects = await Project.findAll({ where: { labId: lab.lab.id }, attributes: ['id'] })
      await Image.destroy({ where: { projectId: projects.map((p) => p.id) } })
    }
    await ctx?.stop()
    rmSync(serverTmp, { recursive: true, force: true })
  })

  async function restart() {
    await killHard(server)
    server = await startServer(port)
  }

  /**
   * What the consistency check reports for this lab (grace period 0: no upload is in flight after a restart). With
   * `fix` it removes every orphan in the test bucket, which is safe because the server test files run one at a time.
   */
  async function labReport(options: { fix?: boolean } = {}) {
    const report = await checkConsistency(ctx.deps, { minAgeMinutes: 0, ...options })
    const ours = (key: string) => key.startsWith(labPrefix())
    const imageIds = new Set((await Image.findAll({ where: { projectId: lab.project.id }, attributes: ['id'] })).map((i) => i.id))
    return {
      orphaned: report.orphanedObjects.filter(ours),
      removed: report.removedObjects.filter(ours),
      missing: report.missingObjects.filter((m) => ours(m.key)),
      incomplete: report.incompleteImages.filter((i) => imageIds.has(i.imageId)),
    }
  }

  async function expectCommittedImageIntact() {
    const image = (await Image.findByPk(committedImage.id))!
    expect(sha256(await ctx.deps.store.get(image.objectKey))).toBe(committedImage.sha256)
    const detail = await microscopist.agent.get(`/api/images/${committedImage.id}`)
    expect(detail.status).toBe(200)
    expect(detail.body.frames).toHaveLength(3)
    const preview = await microscopist.agent.get(`/api/images/${committedImage.id}/frames/2/preview.png`)
    expect(preview.status).toBe(200)
  }

  type UploadInFlight = { keysBefore: Set<string>; digest: string }
  const uploadMoments = [
    { moment: 'while the body is arriving', seed: 101, killWhen: () => new Promise<boolean>((resolve) => setTimeout(() => resolve(true), 20)) },
    {
      moment: 'once its first objects are stored',
      seed: 102,
      killWhen: ({ keysBefore }: UploadInFlight) => waitUntil(async () => (await ctx.deps.store.list(labPrefix())).some((key) => !keysBefore.has(key)), 20_000),
    },
    {
      moment: 'once its row is committed',
      seed: 103,
      killWhen: ({ digest }: UploadInFlight) => waitUntil(async () => (await Image.count({ where: { projectId: lab.project.id, sha256: digest } })) > 0, 20_000),
    },
  ]

  it.each(uploadMoments)('When killed during a stack upload ($moment), then after --fix the upload exists completely or not at all, and the committed image is intact', async ({ seed, killWhen }) => {
    const bytes = noiseStack(seed, 12, 256)
    const digest = sha256(bytes)
    const keysBefore = new Set(await ctx.deps.store.list(labPrefix()))
    const watching = killWhen({ keysBefore, digest })
    const request = microscopist.agent
      .post(`/api/projects/${lab.project.id}/images`)
      .set('x-csrf-token', microscopist.csrf)
      .attach('files', bytes, `killed-${seed}.tif`)
      .then(
        (res) => res.status,
        () => 'connection lost' as const,
      )
    await watching
    await restart()
    const outcome = await request

    const rows = await Image.findAll({ where: { projectId: lab.project.id, sha256: digest } })
    expect(rows.length).toBeLessThanOrEqual(1)
    if (outcome === 201) expect(rows, 'answered 201, so the row must be there').toHaveLength(1)
    const newKeys = (await ctx.deps.store.list(labPrefix())).filter((key) => !keysBefore.has(key))
    const found = await labReport()
    expect(found.missing).toEqual([])
    expect(found.incomplete).toEqual([])
    if (rows.length === 1) {
      // Committed: every object is there and the original is the uploaded file, byte for byte.
      const image = rows[0]
      expect(found.orphaned).toEqual([])
      expect(sha256(await ctx.deps.store.get(image.objectKey))).toBe(digest)
      expect(await Frame.count({ where: { imageId: image.id } })).toBe(12)
      expect(await ctx.deps.store.exists(frameObjectKey(image, 11, 'pixels.bin'))).toBe(true)
    } else {
      // Not committed: whatever the killed request stored is exactly what the check reports as orphaned.
      expect(found.orphaned.sort()).toEqual(newKeys.sort())
    }
    const fixed = await labReport({ fix: true })
    expect(fixed.removed.sort()).toEqual(found.orphaned.sort())
    expect((await labReport()).orphaned, 'nothing orphaned after --fix').toEqual([])
    if (rows.length === 0) expect((await ctx.deps.store.list(labPrefix())).filter((key) => !keysBefore.has(key))).toEqual([])
    await expectCommittedImageIntact()

    // Nothing is lost for the person uploading: sending the file again after the restart stores it (or finds it).
    const again = await microscopist.agent.post(`/api/projects/${lab.project.id}/images`).set('x-csrf-token', microscopist.csrf).attach('files', bytes, `killed-${seed}.tif`)
    expect(again.status).toBe(201)
    expect(again.body[0].frameCount).toBe(12)
  })

  it('When an object has no row (a kill between storing and committing), then the check:consistency script lists it and --fix removes it', async () => {
    const key = `${labPrefix()}images/killed-between-store-and-commit/original.tif`
    await ctx.deps.store.put(key, Buffer.from('half an upload'), 'image/tiff')
    const script = (...args: string[]) => run(process.execPath, ['--import', 'tsx', 'scripts/checkConsistency.ts', '--min-age', '0', ...args], { env: serverEnv(port) }).catch((err: { stdout: string; code: number }) => ({ stdout: err.stdout, code: err.code }))
    const listed = await script()
    expect(listed.stdout).toContain(`orphan  ${key}`)
    expect('code' in listed ? listed.code : 0).toBe(1)
    expect(await ctx.deps.store.exists(key)).toBe(true)
    const fixed = await script('--fix')
    expect(fixed.stdout).toContain(`removed ${key}`)
    expect(await ctx.deps.store.exists(key)).toBe(false)
  })

  describe('a mask save', () => {
    const size = 512
    let frameId: number
    let maskPrefix: string
    /** The mask of every committed version, as sent (base64), to compare with what is read back. */
    const committed: Record<number, string> = {}
    const stripes = (period: number): BinaryMask => ({ width: size, height: size, data: Uint8Array.from({ length: size * size }, (_, i) => (Math.floor((i % size) / period) % 2 ? 1 : 0)) })
    const save = (mask: BinaryMask, baseVersion: number | null) =>
      annotator.agent.post(`/api/frames/${frameId}/annotations`).set('x-csrf-token', annotator.csrf).send({ baseVersion, mask: maskToBase64(mask), shapes: [], recipe: {} })
    const latestVersion = async () => (await annotator.agent.get(`/api/frames/${frameId}/annotations/latest`)).body.version as number

    beforeAll(async () => {
      const up = await microscopist.agent.post(`/api/projects/${lab.project.id}/images`).set('x-csrf-token', microscopist.csrf).attach('files', noiseStack(201, 1, size), 'masked.tif')
      expect(up.status).toBe(201)
      const image = (await Image.findByPk(up.body[0].id))!
      frameId = (await Frame.findOne({ where: { imageId: image.id, index: 0 } }))!.id
      maskPrefix = frameObjectKey(image, 0, 'pixels.bin').replace(/pixels\.bin$/, 'masks/')
      const first = await save(stripes(8), null)
      expect(first.status).toBe(201)
      committed[1] = maskToBase64(stripes(8))
    })

    const maskMoments = [
      { moment: 'right after the request left', period: 12, killWhen: () => new Promise<boolean>((resolve) => setTimeout(() => resolve(true), 5)) },
      {
        moment: 'once the new mask object is stored',
        period: 16,
        killWhen: (masksBefore: Set<string>) => waitUntil(async () => (await ctx.deps.store.list(maskPrefix)).some((key) => !masksBefore.has(key)), 10_000),
      },
    ]

    it.each(maskMoments)('When killed during a mask save ($moment), then every committed version is intact and readable, and nothing is left orphaned after --fix', async ({ period, killWhen }) => {
      const before = await latestVersion()
      const masksBefore = new Set(await ctx.deps.store.list(maskPrefix))
      const mask = stripes(period)
      const watching = killWhen(masksBefore)
      const request = save(mask, before).then(
        (res) => res.status,
        () => 'connection lost' as const,
      )
      await watching
      await restart()
      const outcome = await request

      // Either the save committed as the next version or it left no version at all.
      const latest = await latestVersion()
      expect([before, before + 1]).toContain(latest)
      if (outcome === 201) expect(latest, 'answered 201').toBe(before + 1)
      if (latest === before + 1) committed[latest] = maskToBase64(mask)
      for (const [version, sent] of Object.entries(committed)) {
        const read = await annotator.agent.get(`/api/frames/${frameId}/annotations/${version}`)
        expect(read.status, `version ${version} readable`).toBe(200)
        expect(read.body.mask, `version ${version} unchanged`).toBe(sent)
      }
      const newMasks = (await ctx.deps.store.list(maskPrefix)).filter((key) => !masksBefore.has(key))
      const found = await labReport()
      expect(found.missing).toEqual([])
      // A committed save leaves nothing orphaned; one cut short leaves at most its own mask object.
      expect(found.orphaned).toEqual(latest === before + 1 ? [] : newMasks)
      await labReport({ fix: true })
      expect((await labReport()).orphaned, 'nothing orphaned after --fix').toEqual([])
    })

    it('When the server is back after the kills, then the next save builds on the latest version and the earlier image is intact', async () => {
      const latest = await latestVersion()
      const next = await save(stripes(20), latest)
      expect(next.status).toBe(201)
      expect(next.body.annotation.version).toBe(latest + 1)
      await expectCommittedImageIntact()
    })
  })
})
