/**
 * `npm run bench:upload`: memory and speed of one large stack upload, against the target of the "Ingest" issue: a
 * 200 MB upload streams without the server's memory growing by more than about 100 MB.
 *
 * Generates a 100-frame 1024 × 1024 16-bit TIFF (200 MiB, deterministic) in a temporary folder, starts services of
 * its own (scripts/throwawayServices.ts) with the demo lab seeded, runs the web server as a child process
 * (`node --import tsx server/index.ts`, one process, so its RSS is the server's), signs in as the demo microscopist
 * and uploads the file as a multipart body streamed from disk. Before the measured upload a small stack is uploaded
 * once, so the decoders the server loads on first use count in the baseline, not in the growth.
 * The server's RSS is read from /proc/<pid>/status every 50 ms; its peak-RSS counter (VmHWM) is reset after the
 * baseline (clear_refs 5), and the peak reported is the larger of the samples and that counter. Loopback only.
 * Usage: tsx scripts/benchUpload.ts [--json] [--frames N]   (N frames of 1024 × 1024, default 100)
 */
import { spawn, type ChildProcess } from 'node:child_process'
import { createReadStream, readFileSync, writeFileSync } from 'node:fs'
import { cpus } from 'node:os'
import path from 'node:path'
import { fileURLToPath } from 'node:url'
import { Image } from '../server/models'
import { createRandom, type SeededRandom } from '../shared/analysis/seededRandom'
import type { GrayImage } from '../shared/analysis/types'
import { encodeTiff } from '../shared/imageio/encodeTiff'
import { DEMO_PASSWORD, DEMO_PEOPLE } from './demoScenario'
import { ensureSamples } from './ensureSamples'
import { seedDemoLab } from './seed'
import { startThrowawayServices } from './throwawayServices'
import { ANALYSIS_PROCESS_ENV, freePort, waitForPort, WEB_SERVER_NODE_FLAGS } from './processes'

const SIZE = 1024
const DEFAULT_FRAMES = 100
/** Fixed seed so every run uploads the same bytes. */
const STACK_SEED = 200
const TARGET_GROWTH_MIB = 100
const SAMPLE_INTERVAL_MS = 50
const MIB = 1024 * 1024

const root = fileURLToPath(new URL('..', import.meta.url))
const json = process.argv.includes('--json')
const framesArg = process.argv.indexOf('--frames')
const frameCount = framesArg === -1 ? DEFAULT_FRAMES : Number(process.argv[framesArg + 1])
if (!Number.isInteger(frameCount) || frameCount < 1) throw new Error('--frames takes a positive whole number')
const progress = (message: string) => console.error(`[bench:upload] ${message}`)

/** Stripe domains that shift from frame to frame, with Gaussian noise: realistic values for the contrast stretch. */
function stripeFrame(index: number, size: number, random: SeededRandom): GrayImage {
  const data = new Uint16Array(size * size)
  const phase = index / 10
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const up = Math.sin((x + 0.3 * y) / 7 + phase) > 0
      data[y * size + x] = Math.max(0, Math.min(65535, Math.round((up ? 34_000 : 26_000) + random.normal(0, 900))))
    }
  }
  return { width: size, height: size, data }
}

/** Write a `frames`-page stack of `size` × `size` frames; returns its length in bytes. */
function writeStack(file: string, frames: number, size: number, seed: number): number {
  const random = createRandom(seed)
  const bytes = encodeTiff(Array.from({ length: frames }, (_, i) => stripeFrame(i, size, random)), { pixelSizeNm: 80 })
  writeFileSync(file, bytes)
  return bytes.byteLength
}

/** VmRSS and VmHWM of a process, KiB. */
function memoryOf(pid: number): { rssKiB: number; hwmKiB: number } {
  const status = readFileSync(`/proc/${pid}/status`, 'utf8')
  const field = (name: string) => Number(new RegExp(`^${name}:\\s+(\\d+) kB`, 'm').exec(status)?.[1] ?? NaN)
  return { rssKiB: field('VmRSS'), hwmKiB: field('VmHWM') }
}

/** Sample a process's RSS every SAMPLE_INTERVAL_MS until stopped. */
function sampleRss(pid: number) {
  const samples: number[] = []
  const timer = setInterval(() => samples.push(memoryOf(pid).rssKiB), SAMPLE_INTERVAL_MS)
  samples.push(memoryOf(pid).rssKiB)
  return {
    samples,
    stop() {
      clearInterval(timer)
      samples.push(memoryOf(pid).rssKiB)
      return samples
    },
  }
}

/** Reset the kernel's peak-RSS counter of a process to its current RSS (Linux ≥ 4.0; false where not allowed). */
function resetPeakRss(pid: number): boolean {
  try {
    writeFileSync(`/proc/${pid}/clear_refs`, '5')
    return true
  } catch {
    return false
  }
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[values.length >> 1]

async function signIn(url: string, email: string) {
  const res = await fetch(`${url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, password: DEMO_PASSWORD }) })
  if (!res.ok) throw new Error(`sign-in as ${email} answered ${res.status}`)
  return { cookie: res.headers.get('set-cookie')!.split(';')[0], csrf: ((await res.json()) as { csrfToken: string }).csrfToken }
}

/**
 * Upload one file as a multipart body streamed from disk (never whole in memory on either side). Returns the stored
 * image and when the last byte of the file was handed to the socket, to split transfer from processing time.
 */
async function uploadFile(url: string, session: { cookie: string; csrf: string }, projectId: number, file: string) {
  const boundary = `remanence-bench-${Date.now()}`
  const encoder = new TextEncoder()
  let fileSentAt = 0
  async function* multipartBody() {
    yield encoder.encode(`--${boundary}\r\nContent-Disposition: form-data; name="files"; filename="${path.basename(file)}"\r\nContent-Type: image/tiff\r\n\r\n`)
    for await (const chunk of createReadStream(file)) yield chunk as Buffer
    fileSentAt = performance.now()
    yield encoder.encode(`\r\n--${boundary}--\r\n`)
  }
  const res = await fetch(`${url}/api/projects/${projectId}/images`, {
    method: 'POST',
    headers: { cookie: session.cookie, 'x-csrf-token': session.csrf, 'content-type': `multipart/form-data; boundary=${boundary}` },
    body: multipartBody() as unknown as BodyInit,
    duplex: 'half',
  } as RequestInit)
  const body = (await res.json()) as { id: number; frameCount: number }[] | { error: { code: string; message: string } }
  if (res.status !== 201 || !Array.isArray(body)) throw new Error(`upload of ${path.basename(file)} answered ${res.status}: ${JSON.stringify(body).slice(0, 300)}`)
  return { image: body[0], fileSentAt }
}

function stopServer(server: ChildProcess): Promise<void> {
  if (server.exitCode !== null) return Promise.resolve()
  return new Promise((resolve) => {
    server.once('exit', () => resolve())
    server.kill('SIGTERM')
  })
}

process.chdir(root)
ensureSamples()
const services = await startThrowawayServices('bench_upload')
let server: ChildProcess | undefined
try {
  progress('seeding the demo lab')
  await seedDemoLab(services.deps)
  progress(`writing a ${frameCount}-frame ${SIZE} × ${SIZE} 16-bit TIFF`)
  const stackFile = path.join(services.work, 'bench-stack.tif')
  const warmUpFile = path.join(services.work, 'warm-up.tif')
  const stackBytes = writeStack(stackFile, frameCount, SIZE, STACK_SEED)
  writeStack(warmUpFile, 2, 256, STACK_SEED + 1)

  const port = await freePort()
  const url = `http://127.0.0.1:${port}`
  // The child's output goes to stderr, so --json leaves one document on stdout.
  server = spawn(process.execPath, [...WEB_SERVER_NODE_FLAGS, '--import', 'tsx', 'server/index.ts'], { env: { ...process.env, ...ANALYSIS_PROCESS_ENV, ...services.serverEnv, PORT: String(port), HOST: '127.0.0.1' }, stdio: ['ignore', 2, 2] })
  await waitForPort(port, 'web server')
  const pid = server.pid!

  const microscopist = DEMO_PEOPLE.find((p) => p.role === 'microscopist')!
  const session = await signIn(url, microscopist.email)
  const projects = (await (await fetch(`${url}/api/projects`, { headers: { cookie: session.cookie } })).json()) as { id: number }[]
  const projectId = projects[0].id
  await uploadFile(url, session, projectId, warmUpFile)

  const settle = sampleRss(pid)
  await new Promise((r) => setTimeout(r, 1000))
  const baselineKiB = median(settle.stop())
  const peakCounterReset = resetPeakRss(pid)

  progress(`uploading ${(stackBytes / MIB).toFixed(1)} MiB`)
  const during = sampleRss(pid)
  const started = performance.now()
  const { image: uploaded, fileSentAt } = await uploadFile(url, session, projectId, stackFile)
  const seconds = (performance.now() - started) / 1000
  const samples = during.stop()
  const { hwmKiB } = memoryOf(pid)

  const row = await Image.findByPk(uploaded.id)
  const objects = (await services.deps.store.list(row!.objectKey.replace(/original\.tif$/, ''))).length
  const peakKiB = Math.max(...samples, peakCounterReset ? hwmKiB : 0)
  const report = {
    file: { frames: frameCount, width: SIZE, height: SIZE, bitDepth: 16, mib: round(stackBytes / MIB) },
    baselineRssMib: round(baselineKiB / 1024),
    peakRssMib: round(peakKiB / 1024),
    growthMib: round((peakKiB - baselineKiB) / 1024),
    peakFrom: peakCounterReset && hwmKiB >= Math.max(...samples) ? 'VmHWM' : `largest ${SAMPLE_INTERVAL_MS} ms sample`,
    uploadSeconds: round(seconds),
    transferSeconds: round((fileSentAt - started) / 1000),
    mibPerSecond: round(stackBytes / MIB / seconds),
    storedCompletely: uploaded.frameCount === frameCount && objects === 1 + 3 * frameCount,
    targetGrowthMib: TARGET_GROWTH_MIB,
    machine: { cpus: cpus().length, node: process.version },
  }
  const ok = report.storedCompletely && report.growthMib <= TARGET_GROWTH_MIB
  if (json) {
    console.log(JSON.stringify(report))
  } else {
    console.log(`Upload of a ${frameCount}-frame ${SIZE} × ${SIZE} 16-bit TIFF (${report.file.mib} MiB), server on ${report.machine.cpus} cores, Node ${process.version}`)
    console.log(`  server RSS before   ${report.baselineRssMib} MiB (after a small warm-up upload)`)
    console.log(`  server RSS peak     ${report.peakRssMib} MiB (${report.peakFrom})`)
    console.log(`  growth              ${report.growthMib} MiB (target ≤ ${TARGET_GROWTH_MIB} MiB)`)
    console.log(`  upload time         ${report.uploadSeconds} s, request to answer (${report.mibPerSecond} MiB/s)`)
    console.log(`    of which sending  ${report.transferSeconds} s; the rest: hash, store the original, decode, render and store ${frameCount} frames`)
    console.log(`  stored completely   ${report.storedCompletely ? 'yes' : 'NO'} (${uploaded.frameCount} frames, ${objects} objects)`)
    console.log(ok ? 'PASS' : 'FAIL: see the figures above')
  }
  process.exitCode = ok ? 0 : 1
} finally {
  if (server) await stopServer(server)
  await services.close()
}

function round(value: number): number {
  return Math.round(value * 10) / 10
}
