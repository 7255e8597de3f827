/**
 * `npm run loadtest`: a bounded load test on loopback only. It fills a separate database (`<DATABASE_URL>_load`) with
 * a realistic lab (50 projects, 2,000 images, 20,000 measurements), starts the real web server (`server/index.ts`, a
 * process of its own, as deployed, so the load generator does not share its event loop) on a free 127.0.0.1 port with
 * its own s3rver, signs in 50 people and runs two phases of LOAD_SECONDS each (default 20 s) with autocannon on the
 * list, image and measurement endpoints:
 * 0. a warm-up, not measured: one stack upload, then 5 s of requests;
 * 1. the target: each person sends LOAD_USER_RATE requests per second (default 1), the next only after the last was
 *    answered, the people out of step with each other, while 5 stack uploads run (see `pacedUsers`). Then it checks
 *    every upload was stored completely;
 * 2. for scale: the same 50 sessions with no pause at all, i.e. 50 requests always in flight — the capacity of the
 *    server on this machine, where by Little's law the mean latency is 50 / throughput.
 * Prints the latency percentiles of both (phase 1 also for the answers given while the uploads ran) and errors;
 * passes when phase 1 has p95 < 200 ms, over the whole phase and while the uploads ran, and neither phase has an error
 * or a non-2xx answer.
 * LOAD_SERVER_NODE_ARGS passes flags to the server's node, e.g. '--cpu-prof --cpu-prof-dir=/tmp/load-profile' to see
 * where its time goes.
 */
import autocannon from 'autocannon'
import { spawn } from 'node:child_process'
import type { Sequelize } from 'sequelize'
import { hashPassword } from '../server/auth/passwords'
import { Frame, Image } from '../server/models'
import { encodeTiff } from '../shared/imageio/encodeTiff'
import { renderFieldSweep } from './sampleImages'
import { latencySummary, type LatencySummary } from './latencyHistogram'
import { ANALYSIS_PROCESS_ENV, freePort, waitForPort, WEB_SERVER_NODE_FLAGS } from './processes'
import { startThrowawayServices } from './throwawayServices'

const SECONDS = Number(process.env.LOAD_SECONDS ?? 20)
const USERS = 50
/**
 * Requests per second per signed-in person in the target phase. A page of the app asks for 2–4 things at once and
 * its reader then looks at it for seconds, so one request a second per person, every second, is a heavy day.
 */
const USER_RATE = Number(process.env.LOAD_USER_RATE ?? 1)
const WARM_UP_SECONDS = 5
const PASSWORD = 'load-test-password-1'

/** Bulk rows straight in SQL: the point is a realistic size, not the upload path (which the uploads below exercise). */
async function fill(sequelize: Sequelize) {
  const hash = await hashPassword(PASSWORD)
  const q = (sql: string, replacements: Record<string, unknown> = {}) => sequelize.query(sql, { replacements })
  await q(`INSERT INTO labs (name, institution, created_at, updated_at) VALUES ('Load-test lab', 'Loopback', now(), now())`)
  await q(
    `INSERT INTO users (email, name, password_hash, created_at, updated_at)
     SELECT 'user' || g || '@load.example', 'Load user ' || g, :hash, now(), now() FROM generate_series(1, ${USERS}) g`,
    { hash },
  )
  await q(`INSERT INTO memberships (lab_id, user_id, role, created_at, updated_at) SELECT 1, id, (ARRAY['pi','microscopist','annotator','reviewer','admin'])[1 + id % 5], now(), now() FROM users`)
  await q(`INSERT INTO projects (lab_id, name, description, created_at, updated_at) SELECT 1, 'Project ' || g, '', now(), now() FROM generate_series(1, 50) g`)
  await q(
    `INSERT INTO samples (project_id, name, anneal_temperature_c, created_at, updated_at)
     SELECT p.id, 'S' || p.id || '-' || t, t, now(), now() FROM projects p, unnest(ARRAY[200, 250, 300, 350]) t`,
  )
  await q(
    `INSERT INTO images (project_id, sample_id, name, technique, object_key, sha256, byte_size, media_type, width, height, bit_depth, frame_count, pixel_size_nm, created_at, updated_at)
     SELECT 1 + (g - 1) % 50, NULL, 'image-' || g || '.tif', 'kerr-polar', 'load/' || g || '/original.tif', md5(g::text) || md5(g::text), 1000, 'image/tiff', 1024, 1024, 16, 1, 80, now() - (g || ' minutes')::interval, now()
     FROM generate_series(1, 2000) g`,
  )
  await q(`INSERT INTO frames (image_id, index, annotation_status, created_at, updated_at) SELECT id, 0, 'in-progress', now(), now() FROM images`)
  await q(
    `INSERT INTO analyses (frame_id, recipe, engine_version, results, status, created_at, updated_at)
     SELECT f.id, '{"method":"otsu"}', 'load', json_build_object('measurements', json_build_object('magnetization', random(), 'meanWidthPx', 10 + random() * 5, 'periodPx', 20 + random() * 10)), 'draft', now(), now()
     FROM frames f, generate_series(1, 10)`,
  )
  const [[counts]] = (await q(`SELECT (SELECT count(*) FROM projects) AS projects, (SELECT count(*) FROM images) AS images, (SELECT count(*) FROM analyses) AS measurements`)) as [Record<string, number>[], unknown]
  return counts
}

const services = await startThrowawayServices('load')
const { deps } = services
console.log('[load] filling the database…')
const counts = await fill(deps.sequelize)
console.log(`[load] ${counts.projects} projects, ${counts.images} images, ${counts.measurements} measurements`)
const port = await freePort()
// 50 sign-ins within a minute are this test's set-up, not an attack: the sign-in limit is raised for it.
const serverNodeArgs = (process.env.LOAD_SERVER_NODE_ARGS ?? '').split(' ').filter(Boolean)
const server = spawn(process.execPath, [...WEB_SERVER_NODE_FLAGS, ...serverNodeArgs, '--import', 'tsx', 'server/index.ts'], {
  env: { ...process.env, ...ANALYSIS_PROCESS_ENV, ...services.serverEnv, PORT: String(port), HOST: '127.0.0.1', LOGIN_RATE_MAX: '10000', LOGIN_RATE_WINDOW_MS: '60000' },
  stdio: ['ignore', 'inherit', 'inherit'],
})
await waitForPort(port, 'web server', 60_000)
const url = `http://127.0.0.1:${port}`

// 50 signed-in people, one session cookie each.
const sessions: { cookie: string; csrf: string }[] = []
for (let i = 1; i <= USERS; i++) {
  const res = await fetch(`${url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: `user${i}@load.example`, password: PASSWORD }) })
  if (!res.ok) throw new Error(`sign-in ${i} failed: ${res.status}`)
  sessions.push({ cookie: res.headers.get('set-cookie')!.split(';')[0], csrf: ((await res.json()) as { csrfToken: string }).csrfToken })
}
const frameIds = (await Frame.findAll({ attributes: ['id', 'imageId'], limit: 2000 })).map((f) => ({ frameId: f.id, imageId: f.imageId }))

let connection = 0
let pick = 0
const next = () => frameIds[(pick = (pick * 7919 + 13) % frameIds.length)]
const failures = new Map<string, number>()
const noteFailure = (route: string) => (status: number) => {
  if (status >= 300) failures.set(`${route} → ${status}`, (failures.get(`${route} → ${status}`) ?? 0) + 1)
}
const endpoints = [
  { setupRequest: (req: { path: string }) => ({ ...req, path: `/api/images?page=${1 + (pick % 80)}&pageSize=25&sort=name&order=asc` }), onResponse: noteFailure('GET /api/images') },
  { setupRequest: (req: { path: string }) => ({ ...req, path: `/api/images/${next().imageId}` }), onResponse: noteFailure('GET /api/images/:id') },
  { setupRequest: (req: { path: string }) => ({ ...req, path: `/api/frames/${next().frameId}/analysis` }), onResponse: noteFailure('GET /api/frames/:id/analysis') },
  { setupRequest: (req: { path: string }) => ({ ...req, path: '/api/projects' }), onResponse: noteFailure('GET /api/projects') },
]

/** Capacity: every session sends its next request the moment the last one is answered, 50 always in flight. */
function backToBack(seconds: number): Promise<autocannon.Result> {
  connection = 0
  return autocannon({
    url,
    connections: USERS,
    duration: seconds,
    setupClient: (client: { setHeaders(h: Record<string, string>): void }) => client.setHeaders({ cookie: sessions[connection++ % USERS].cookie }),
    requests: endpoints,
  } as never) as unknown as Promise<autocannon.Result>
}

/** One answer of the paced phase: when it arrived (performance.now(), ms) and how long it took, ms. */
interface Answer {
  at: number
  ms: number
}

/**
 * People: each session is an autocannon instance of one connection sending USER_RATE requests a second (the next
 * only after the last was answered), the instances started evenly over the first second so that 50 people do not
 * click in step (autocannon's rate timer would otherwise fire every connection of one instance in the same
 * millisecond: a burst of 50 each second). Every 2xx answer is kept with its time, so that the answers given while the
 * uploads ran can be told apart; percentiles come from latencySummary.
 */
async function pacedUsers(seconds: number): Promise<{ result: autocannon.Result; answers: Answer[] }> {
  const options = { url, connections: USERS }
  const answers: Answer[] = []
  const runs = sessions.map(async (session, k) => {
    await new Promise((resolve) => setTimeout(resolve, (1000 * k) / USERS))
    const instance = autocannon({
      url,
      connections: 1,
      connectionRate: USER_RATE,
      // Its histograms are not used for the percentiles (see latencySummary for why).
      ignoreCoordinatedOmission: true,
      duration: seconds,
      skipAggregateResult: true,
      headers: { cookie: session.cookie },
      requests: endpoints,
    } as never) as unknown as Promise<autocannon.Result> & NodeJS.EventEmitter
    instance.on('response', (_client: unknown, statusCode: number, _bytes: number, ms: number) => {
      if (statusCode >= 200 && statusCode < 300) answers.push({ at: performance.now(), ms })
    })
    return instance
  })
  const results = await Promise.all(runs)
  const result = (autocannon as unknown as { aggregateResult(results: autocannon.Result[], opts: object): autocannon.Result }).aggregateResult(results, options)
  return { result, answers }
}

/** Counts, rates and latency percentiles of a phase (autocannon's, or `latencies` when given). */
const summarize = (result: autocannon.Result, latencies?: LatencySummary) => ({
  requests: result.requests.total,
  requestsPerSecond: Math.round(result.requests.total / SECONDS),
  latencyMs: latencies ?? { p50: result.latency.p50, p90: result.latency.p90, p97_5: result.latency.p97_5, p99: result.latency.p99, max: result.latency.max },
  errors: result.errors,
  timeouts: result.timeouts,
  non2xx: result.non2xx,
})

// Stack uploads, their bodies made beforehand (the generator's event loop times the answers).
const sweep = renderFieldSweep({ size: 128, seed: 3 })
function stackUpload(name: string, offset: number): FormData {
  const tiff = encodeTiff(sweep.frames.map((f) => ({ ...f, data: Uint16Array.from(f.data as Uint16Array, (v) => Math.min(65535, v + offset)) })))
  const form = new FormData()
  form.append('files', new Blob([Buffer.from(tiff)]), `${name}.tif`)
  form.append('frames', new Blob(['frame,field_mT\n' + sweep.fieldsMT.map((f, i) => `${i},${f}`).join('\n')]), `${name}.csv`)
  return form
}
/** user ids 1, 6, 11, … are microscopists (role = 1 + id % 5 in the fill above), so they may upload. */
async function upload(form: FormData, k: number) {
  const session = sessions[5 * k]
  const res = await fetch(`${url}/api/projects/1/images`, { method: 'POST', headers: { cookie: session.cookie, 'x-csrf-token': session.csrf }, body: form })
  return { status: res.status, body: (await res.json()) as { id: number; frameCount: number }[] }
}
const uploadForms = Array.from({ length: 5 }, (_, k) => stackUpload(`load-stack-${k}`, k))

// Warm-up, not measured: a server that has been running has compiled its routes, filled its connection pools, and
// started its analysis thread and loaded the upload path's modules for an earlier upload (here: one stack, beforehand).
console.log(`[load] warming up for ${WARM_UP_SECONDS} s, with one stack upload…`)
const warmUpUpload = await upload(stackUpload('warm-up-stack', 100), 0)
if (warmUpUpload.status !== 201) throw new Error(`the warm-up upload answered ${warmUpUpload.status}`)
await backToBack(WARM_UP_SECONDS)
failures.clear()
// Phase 1, the target: 50 people at a person's pace while 5 stack uploads run.
console.log(`[load] 50 users, ${USER_RATE} request(s) per second each, ${SECONDS} s, with 5 stack uploads…`)
const paced = pacedUsers(SECONDS)
const uploadsStarted = performance.now()
const uploads = Promise.all(uploadForms.map(upload)).then((answers) => ({ answers, finished: performance.now() }))
const [{ result, answers }, { answers: uploaded, finished: uploadsFinished }] = await Promise.all([paced, uploads])
const personInterval = 1000 / USER_RATE
const whole = latencySummary(answers.map((a) => a.ms), personInterval)
// The answers given while the uploads ran (the target's hardest seconds), on their own.
const duringUploads = latencySummary(answers.filter((a) => a.at >= uploadsStarted && a.at <= uploadsFinished).map((a) => a.ms), personInterval)
const pacedFailures = Object.fromEntries(failures)
failures.clear()
// Phase 2, for scale: the same 50 sessions with no pause between requests (the server's capacity on this machine).
console.log(`[load] 50 connections back to back, ${SECONDS} s…`)
const saturated = await backToBack(SECONDS)
let complete = 0
for (const u of uploaded) {
  if (u.status !== 201) continue
  const image = await Image.findByPk(u.body[0].id)
  const frames = await Frame.count({ where: { imageId: u.body[0].id } })
  const objects = (await deps.store.list(image!.objectKey.replace(/original\.tif$/, ''))).length
  if (frames === 41 && objects === 1 + 41 * 3) complete++
}
const report = {
  seconds: SECONDS,
  users: USERS,
  perUserRequestsPerSecond: USER_RATE,
  paced: { ...summarize(result, whole), duringUploads: { seconds: Math.round(uploadsFinished - uploadsStarted) / 1000, latencyMs: duringUploads }, failures: pacedFailures },
  stackUploads: { started: 5, storedCompletely: complete },
  backToBack: { ...summarize(saturated), failures: Object.fromEntries(failures) },
}
console.log(JSON.stringify(report, null, 2))
for (const u of uploaded) if (u.status !== 201) console.log(`[load] an upload answered ${u.status}: ${JSON.stringify(u.body).slice(0, 300)}`)
server.kill('SIGTERM')
await new Promise((resolve) => server.once('exit', resolve))
await services.close()
const ok = whole.p95 < 200 && duringUploads.p95 < 200 && result.errors === 0 && result.non2xx === 0 && complete === 5 && saturated.errors === 0 && saturated.non2xx === 0
console.log(ok ? '[load] PASS: paced p95 < 200 ms, over the whole phase and while the uploads ran; no errors in either phase, all 5 stacks stored completely' : '[load] FAIL: see the figures above')
process.exit(ok ? 0 : 1)
