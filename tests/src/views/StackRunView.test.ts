import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { analyzeStack, summarizeLoop, type StackAnalysis, type StackMeta } from '@shared/analysis/analyzeStack'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import { ENGINE_VERSION } from '@shared/analysis/engineVersion'
import { normalizeRecipe } from '@shared/analysis/recipe'
import type { BinaryMask } from '@shared/analysis/types'
import { maskToBase64 } from '@shared/imageio/maskEncoding'
import type { ImageDetailDto } from '@shared/types/image'
import type { StackFrameResultDto, StackRunDetailDto, StackRunStatus } from '@shared/types/stack'
import { createAppRouter } from '@/router'
import StackRunView from '@/views/StackRunView.vue'
import { formatNumber } from '@/formatQuantity'
import { renderFieldSweep, renderTemperatureRamp } from '../../../scripts/sampleImages'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { imageDetailDto } from '../labDtos'
import { alertTexts, getButton } from '../domQueries'

const RUN_ID = 3
const IMAGE_ID = 12
/** Constructed loop of the sweep: M/Ms = tanh((H ± Hc)/w), Hc = 6 mT, w = 2.5 mT, ±20 mT in 2 mT steps (41 frames). */
const HC_MT = 6
const LOOP_WIDTH_MT = 2.5
const STEP_MT = 2
/** Constructed temperature ramp: Kerr contrast ∝ (1 − T/390 K)^0.35 on 300…420 K (25 frames). */
const TC_K = 390
const BETA = 0.35

const RECIPE = normalizeRecipe({})
let sweepFields: number[]
let sweep: StackAnalysis
let rampTemperatures: number[]
let ramp: StackAnalysis

beforeAll(() => {
  // Both stacks are generated (scripts/sampleImages.ts) and measured by the real engine, as a worker would.
  const fieldSweep = renderFieldSweep({ size: 128, seed: 5, coerciveFieldMT: HC_MT, loopWidthMT: LOOP_WIDTH_MT, stepMT: STEP_MT })
  sweepFields = fieldSweep.fieldsMT
  sweep = analyzeStack(fieldSweep.frames, RECIPE, { pixelSizeNm: 200, fieldUnit: 'mT', frames: sweepFields.map((field) => ({ field, temperatureK: null })) })
  const temperatureRamp = renderTemperatureRamp({ size: 128, seed: 5, curieTemperatureK: TC_K, beta: BETA })
  rampTemperatures = temperatureRamp.temperaturesK
  ramp = analyzeStack(temperatureRamp.frames, RECIPE, { pixelSizeNm: 100, fieldUnit: null, frames: rampTemperatures.map((temperatureK) => ({ field: null, temperatureK })) })
}, 120_000)

function image(name: string, frameCount: number): ImageDetailDto {
  return imageDetailDto({ id: IMAGE_ID, name, width: 128, height: 128, frameCount, coverFrameIndex: 0, byteSize: 340_000 })
}
const SWEEP_IMAGE = image('KB24-A300_field-sweep.tif', 41)
const RAMP_IMAGE = image('KB24-A300_temperature-ramp.tif', 25)

/** A run as GET /api/stack-runs/:id answers it (server/services/stackRunService.ts `detail`). */
function run(status: StackRunStatus, frames: StackFrameResultDto[], overrides: Partial<StackRunDetailDto> = {}): StackRunDetailDto {
  const finished = status === 'done' || status === 'done-with-errors' || status === 'failed'
  return {
    id: RUN_ID,
    imageId: IMAGE_ID,
    recipe: RECIPE,
    engineVersion: ENGINE_VERSION,
    status,
    framesTotal: frames.length,
    framesDone: frames.filter((f) => f.measurements || f.error).length,
    threshold: sweep.threshold,
    error: null,
    createdAt: '2026-11-12T15:00:00.000Z',
    startedAt: status === 'queued' ? null : '2026-11-12T15:00:02.000Z',
    finishedAt: finished ? '2026-11-12T15:01:30.000Z' : null,
    frames,
    workers: status === 'queued' ? [] : [{ name: 'kerr-ws-01:4312', frames: frames.length, owner: true }],
    loop: null,
    curie: null,
    ...overrides,
  }
}

/** The sweep's frames, measured up to (not including) frame `measured`. */
function sweepFrames(measured = sweepFields.length): StackFrameResultDto[] {
  return sweepFields.map((field, index) => ({ index, field, fieldUnit: 'mT', temperatureK: null, measurements: index < measured ? sweep.frames[index] : null, error: null }))
}

const doneSweep = () => run('done', sweepFrames(), { loop: sweep.loop })

function doneRamp(): StackRunDetailDto {
  const frames = rampTemperatures.map((temperatureK, index) => ({ index, field: null, fieldUnit: null, temperatureK, measurements: ramp.frames[index], error: null }))
  return run('done', frames, { threshold: ramp.threshold, curie: ramp.curie })
}

/** The run's stored masks, as GET /api/stack-runs/:id/frames/:index/mask answers them. */
function maskRoutes(masks: BinaryMask[]): Record<string, () => Response> {
  return Object.fromEntries(masks.map((mask, index) => [`GET /api/stack-runs/${RUN_ID}/frames/${index}/mask`, () => jsonResponse(200, { mask: maskToBase64(mask) })]))
}

let pinia: Pinia

/** `answers` are given out one per request of the run; the last one keeps being given. */
async function mountRun(answers: (() => Response | Promise<Response>)[], options: { image?: ImageDetailDto; masks?: BinaryMask[] } = {}) {
  let calls = 0
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 4, email: 'tobias.lindgren@thin-film.example', name: 'Tobias Lindgren', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'microscopist' }], csrfToken: 't' }),
    [`GET /api/stack-runs/${RUN_ID}`]: () => answers[Math.min(calls++, answers.length - 1)](),
    [`GET /api/images/${IMAGE_ID}`]: () => jsonResponse(200, options.image ?? SWEEP_IMAGE),
    ...maskRoutes(options.masks ?? []),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push(`/stack-runs/${RUN_ID}`)
  const wrapper = mount(StackRunView, { props: { runId: RUN_ID }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  const runRequests = () => requests.filter((r) => r.url === `/api/stack-runs/${RUN_ID}`)
  return { wrapper, router, requests, runRequests }
}

type Mounted = Awaited<ReturnType<typeof mountRun>>['wrapper']

const statusTag = (wrapper: Mounted) => wrapper.get('[data-testid="run-status"]').text()
const headings = (wrapper: Mounted) => wrapper.findAll('h2').map((h) => h.text())

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

afterEach(() => {
  vi.useRealTimers()
})

/**
 * The page polls with setTimeout; Date is faked with it, so that Element Plus's debounced table layout (lodash, which
 * reads the clock) runs out too. Promises and flushPromises (setImmediate) stay real.
 */
function useFakeClock(): void {
  vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout', 'Date'] })
}

describe('StackRunView while the run is processed', () => {
  it('When the run is half-way, then the page shows the frame being processed, the frames done and the workers, and no results yet', async () => {
    useFakeClock()
    const workers = [
      { name: 'kerr-ws-01:4312', frames: 10, owner: true },
      { name: 'kerr-ws-02:977', frames: 7, owner: false },
    ]
    const { wrapper } = await mountRun([() => jsonResponse(200, run('running', sweepFrames(17), { workers }))])

    expect(wrapper.get('h1').text()).toBe(`Stack run #${RUN_ID} · KB24-A300_field-sweep.tif`)
    expect(statusTag(wrapper)).toBe('Processing frame 18 of 41')
    expect(wrapper.get('[aria-label="Progress"]').text()).toContain('17 of 41 frames measured')
    // 17 of 41 frames: 41 %.
    expect(wrapper.get('[role="progressbar"]').attributes('aria-valuenow')).toBe('41')
    expect(wrapper.get('[data-testid="run-workers"]').text()).toBe('shared by 2 workers')
    expect(headings(wrapper)).toEqual(['Frames'])
    expect(wrapper.text()).not.toContain('No loop or Curie fit')
    const problems = wrapper.findAll('[aria-label="Per-frame measurements"] tbody tr').map((row) => row.findAll('td').at(-1)!.text())
    expect(problems.filter((text) => text === 'Not measured yet')).toHaveLength(41 - 17)
    wrapper.unmount()
  })

  it('When the run is still queued, then the page says it waits for a worker and keeps asking every second until the run is done', async () => {
    useFakeClock()
    const { wrapper, runRequests } = await mountRun([
      () => jsonResponse(200, run('queued', sweepFrames(0))),
      () => jsonResponse(200, run('running', sweepFrames(30))),
      () => jsonResponse(200, doneSweep()),
    ])
    expect(statusTag(wrapper)).toBe('Waiting for a worker')
    expect(wrapper.get('[aria-label="Progress"]').text()).toContain('0 of 41 frames measured')

    await vi.advanceTimersByTimeAsync(999)
    expect(runRequests()).toHaveLength(1)
    await vi.advanceTimersByTimeAsync(1)
    await flushPromises()
    expect(runRequests()).toHaveLength(2)
    expect(statusTag(wrapper)).toBe('Processing frame 31 of 41')
    expect(wrapper.get('[aria-label="Progress"]').text()).toContain('30 of 41 frames measured')

    await vi.advanceTimersByTimeAsync(1000)
    await flushPromises()
    expect(statusTag(wrapper)).toBe('Done')
    expect(headings(wrapper)).toContain('Hysteresis loop')

    // Done: no further polls.
    await vi.advanceTimersByTimeAsync(5000)
    expect(runRequests()).toHaveLength(3)
    wrapper.unmount()
  })

  it('When a progress refresh fails, then the last progress stays on the page with a warning, and the next refresh clears it', async () => {
    useFakeClock()
    const { wrapper, runRequests } = await mountRun([
      () => jsonResponse(200, run('running', sweepFrames(12))),
      () => errorResponse(503, 'unavailable', 'The server is restarting.'),
      () => jsonResponse(200, run('running', sweepFrames(20))),
    ])
    await vi.advanceTimersByTimeAsync(1000)
    await flushPromises()
    expect(runRequests()).toHaveLength(2)
    expect(statusTag(wrapper)).toBe('Processing frame 13 of 41')
    expect(alertTexts(wrapper)).toContain('Progress could not be refreshed: The server is restarting.')

    await vi.advanceTimersByTimeAsync(1000)
    await flushPromises()
    expect(statusTag(wrapper)).toBe('Processing frame 21 of 41')
    expect(alertTexts(wrapper).join(' ')).not.toContain('Progress could not be refreshed')
    wrapper.unmount()
  })

  it('When the page is left while the run is processed, then it stops asking for progress and leaves no timer behind', async () => {
    useFakeClock()
    const { wrapper, runRequests } = await mountRun([() => jsonResponse(200, run('running', sweepFrames(5)))])
    wrapper.unmount()
    await vi.advanceTimersByTimeAsync(5000)
    expect(vi.getTimerCount()).toBe(0)
    expect(runRequests()).toHaveLength(1)
  })
})

describe('StackRunView left during a request', () => {
  it('When the page is left while a progress request is out, then its late answer starts no new polling', async () => {
    useFakeClock()
    let answerLate: (response: Response) => void = () => {}
    const { wrapper, runRequests } = await mountRun([
      () => jsonResponse(200, run('running', sweepFrames(5))),
      () => new Promise<Response>((resolve) => (answerLate = resolve)),
    ])
    await vi.advanceTimersByTimeAsync(1000)
    expect(runRequests()).toHaveLength(2)
    wrapper.unmount()
    answerLate(jsonResponse(200, run('running', sweepFrames(6))))
    await flushPromises()
    await vi.advanceTimersByTimeAsync(5000)
    expect(runRequests()).toHaveLength(2)
    expect(vi.getTimerCount()).toBe(0)
  })
})

describe('StackRunView of a finished field sweep', () => {
  it('When the sweep is done, then the loop is drawn and Hc, its branches and the remanence are given with their units', async () => {
    const { wrapper } = await mountRun([() => jsonResponse(200, doneSweep())], { masks: sweep.masks })
    const loop = sweep.loop!

    expect(statusTag(wrapper)).toBe('Done')
    expect(wrapper.get('[aria-label="Progress"]').text()).toContain('41 of 41 frames measured')
    expect(wrapper.text()).toContain('41 frames · Otsu threshold, one for the stack · flat-field σ 40 px · smoothing σ 1 px · clean-up open-close · smallest domain 9 px')
    expect(headings(wrapper)).toEqual(['Hysteresis loop', 'Jumps between frames', 'Frames'])
    expect(wrapper.find('[aria-label="Hysteresis loop: M/Ms against the applied field"]').exists()).toBe(true)

    // Hc as recorded (μ0H in mT), then in A/m and Oe; the engine finds the constructed 6 mT within one field step.
    const hc = wrapper.get('[data-testid="loop-hc"]').text()
    const shown = Number(/^([\d.]+) mT \(μ0H\)$/.exec(wrapper.get('[data-testid="loop-hc"] .stack-loop-summary__main').text())![1])
    expect(Math.abs(shown - HC_MT)).toBeLessThanOrEqual(STEP_MT)
    expect(shown).toBe(Number(formatNumber(loop.coerciveField, 6)))
    expect(hc).toMatch(/= [\d.]+ A\/m = [\d.]+ Oe/)
    expect(wrapper.get('[data-testid="loop-hc-minus"]').text()).toMatch(/^Hc− \(descending branch\)\s*−[\d.]+ mT \(μ0H\)/)
    expect(wrapper.get('[data-testid="loop-hc-plus"]').text()).toMatch(/^Hc\+ \(ascending branch\)\s*[\d.]+ mT \(μ0H\)/)

    // Remanence: the constructed loop has Mr = tanh(Hc/w) = 0.984 at H = 0.
    const remanence = wrapper.get('[data-testid="loop-remanence"]').text()
    expect(remanence).toContain(formatNumber(loop.remanence, 3))
    expect(Math.abs(loop.remanence! - Math.tanh(HC_MT / LOOP_WIDTH_MT))).toBeLessThan(0.05)
    expect(wrapper.text()).not.toContain('Loop not saturated')
    // Half the 2 mT field step.
    expect(wrapper.text()).toContain('known to half a field step (± 1 mT (μ0H))')
  })

  it('When the sweep is done, then the largest jumps are listed with their frames, fields and ΔM, each with the flipped pixels of the stored masks', async () => {
    const { wrapper } = await mountRun([() => jsonResponse(200, doneSweep())], { masks: sweep.masks })
    const jumps = sweep.loop!.jumps
    const largest = [...jumps].sort((a, b) => Math.abs(b.deltaM) - Math.abs(a.deltaM) || a.fromFrame - b.fromFrame)[0]

    const items = wrapper.findAll('.stack-jumps-panel__jump')
    expect(items).toHaveLength(10)
    const first = items[0].text()
    expect(first).toContain(`Frames ${largest.fromFrame} → ${largest.toFrame}`)
    // The frames' fields as recorded (the sign is compared whichever minus character is printed).
    const fieldLabel = (index: number) => `${sweepFields[index]} mT`
    expect(first.replace(/−/g, '-')).toContain(`${fieldLabel(largest.fromFrame)} → ${fieldLabel(largest.toFrame)}`)
    expect(first).toContain(`ΔM/Ms = ${formatNumber(largest.deltaM, 3)}`)
    const clusters = largest.clusterSizesPx.length
    expect(first).toContain(clusters === 1 ? '1 cluster' : `${clusters} clusters`)
    expect(wrapper.text()).toContain(`Jump-size distribution (${jumps.flatMap((j) => j.clusterSizesPx).length} clusters)`)

    // The overlay compares the two masks the run stored for those frames.
    const before = sweep.masks[largest.fromFrame].data
    const after = sweep.masks[largest.toFrame].data
    const upToDown = before.filter((v, i) => v && !after[i]).length
    const downToUp = before.filter((v, i) => !v && after[i]).length
    await vi.waitFor(() =>
      expect(items[0].get('canvas').attributes('aria-label')).toBe(`Flipped pixels from frame ${largest.fromFrame} to ${largest.toFrame}: ${upToDown} up to down, ${downToUp} down to up`),
    )
  })

  it('When the frame after a jump is opened, then the image page opens at that frame', async () => {
    const { wrapper, router } = await mountRun([() => jsonResponse(200, doneSweep())], { masks: sweep.masks })
    const largest = [...sweep.loop!.jumps].sort((a, b) => Math.abs(b.deltaM) - Math.abs(a.deltaM) || a.fromFrame - b.fromFrame)[0]
    await wrapper.get(`button[aria-label="Open frame ${largest.toFrame}"]`).trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe(`/images/${IMAGE_ID}?frame=${largest.toFrame}`), { timeout: 10_000 })
  })

  it('When some frames failed, then the run is done with a warning, the failed frames say why, and the loop is made of the others', async () => {
    const failed = [39, 40]
    const frameError = 'The frame could not be aligned with frame 0 (no overlap).'
    const frames = sweepFrames().map((f) => (failed.includes(f.index) ? { ...f, measurements: null, error: frameError } : f))
    // As the worker does: failed frames drop out of the loop (stackRunProcessor.ts).
    const usable: StackMeta = { pixelSizeNm: 200, fieldUnit: 'mT', frames: sweepFields.map((field, i) => ({ field: failed.includes(i) ? null : field, temperatureK: null })) }
    const measurements = sweep.frames.map((m, i) => (failed.includes(i) ? ({ magnetization: 0, contrast: null } as FrameMeasurements) : m))
    const loop = summarizeLoop(measurements, sweep.masks, usable, RECIPE.minDomainArea)
    const answer = run('done-with-errors', frames, { loop, error: '2 frame(s) could not be analysed; the others are kept.' })
    const { wrapper } = await mountRun([() => jsonResponse(200, answer)], { masks: sweep.masks })

    expect(statusTag(wrapper)).toBe('Done, some frames failed')
    expect(wrapper.get('[aria-label="Progress"]').text()).toContain('41 of 41 frames measured · 2 failed')
    expect(alertTexts(wrapper)).toContain('2 frame(s) could not be analysed; the others are kept.')
    expect(wrapper.get('[data-testid="loop-hc"]').text()).toContain(`${formatNumber(loop!.coerciveField, 6)} mT (μ0H)`)
    const rows = wrapper.findAll('[aria-label="Per-frame measurements"] tbody tr').map((row) => row.findAll('td').map((cell) => cell.text()))
    expect(rows.filter((cells) => cells.at(-1) === frameError).map((cells) => cells[0])).toEqual(['39', '40'])
  })
})

describe('StackRunView of a finished temperature series', () => {
  it('When the temperature ramp is done, then Tc and β are shown with their standard errors, beside the reference exponents', async () => {
    const { wrapper } = await mountRun([() => jsonResponse(200, doneRamp())], { image: RAMP_IMAGE })
    const curie = ramp.curie!

    expect(wrapper.get('h1').text()).toBe(`Stack run #${RUN_ID} · KB24-A300_temperature-ramp.tif`)
    expect(headings(wrapper)).toEqual(['Temperature series: Curie fit', 'Frames'])
    expect(wrapper.find('[aria-label="Domain contrast against temperature with the fitted critical law"]').exists()).toBe(true)

    const fit = wrapper.get('[data-testid="curie-fit"]').text()
    const [, tc, tcError] = /Curie temperature Tc\s*([\d.]+) ± ([\d.]+) K/.exec(fit)!
    // The engine finds the constructed Tc = 390 K within 1 % and β = 0.35 within 0.03.
    expect(Math.abs(Number(tc) - TC_K)).toBeLessThan(4)
    expect([tc, tcError]).toEqual([formatNumber(curie.tc, 5), formatNumber(curie.tcStdErr, 2)])
    const [, beta, betaError] = /Exponent β\s*([\d.]+) ± ([\d.]+)/.exec(fit)!
    expect([beta, betaError]).toEqual([formatNumber(curie.beta, 3), formatNumber(curie.betaStdErr, 2)])
    expect(Math.abs(Number(beta) - BETA)).toBeLessThan(0.03)
    expect(Number(betaError)).toBeGreaterThan(0)

    const classes = wrapper.findAll('[aria-label="Reference exponents"] tbody tr').map((row) => row.find('td').text())
    expect(classes).toEqual(expect.arrayContaining(['Mean field', '3-D Ising', '3-D Heisenberg', '2-D Ising', '3-D XY']))
    expect(wrapper.text()).not.toContain('Hysteresis loop')
  })

  it('When the frames carry neither field nor temperature, then the page says why there is no loop or Curie fit', async () => {
    const frames = sweepFrames().map((f) => ({ ...f, field: null, fieldUnit: null }))
    const { wrapper } = await mountRun([() => jsonResponse(200, run('done', frames))])
    expect(statusTag(wrapper)).toBe('Done')
    expect(alertTexts(wrapper).join(' ')).toContain('No loop or Curie fit')
    expect(alertTexts(wrapper).join(' ')).toContain('A loop needs at least three frames with a field, a Curie fit at least four with a temperature.')
    expect(headings(wrapper)).toEqual(['Frames'])
  })
})

describe('StackRunView when something went wrong', () => {
  it('When the run failed, then the page says so with the worker’s reason and offers no results', async () => {
    const reason = 'Frame 12 could not be decoded: the TIFF strip is truncated.'
    const { wrapper } = await mountRun([() => jsonResponse(200, run('failed', sweepFrames(12), { error: reason }))])

    expect(statusTag(wrapper)).toBe('Failed')
    expect(wrapper.get('[aria-label="Progress"]').text()).toContain('12 of 41 frames measured')
    expect(alertTexts(wrapper)).toContain(reason)
    expect(wrapper.find('.el-progress.is-exception').exists()).toBe(true)
    expect(wrapper.text()).not.toContain('No loop or Curie fit')
    expect(headings(wrapper)).toEqual(['Frames'])
  })

  it('When the run does not exist, then the page says so and leads to the image list, without Retry', async () => {
    const { wrapper, router } = await mountRun([() => errorResponse(404, 'not-found', 'No such stack-run.')])
    expect(wrapper.text()).toContain('Stack run not found')
    expect(wrapper.text()).toContain('There is no such run in your labs.')
    expect(wrapper.findAll('button').map((b) => b.text())).not.toContain('Retry')
    await getButton(wrapper, 'All images').trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/images'), { timeout: 10_000 })
  })

  it('When the run cannot be loaded, then the page says what failed and Retry loads it', async () => {
    const { wrapper, runRequests } = await mountRun([() => errorResponse(500, 'internal', 'Something went wrong on the server.'), () => jsonResponse(200, doneSweep())], { masks: sweep.masks })
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the stack run')
    expect(alertTexts(wrapper).join(' ')).toContain('Something went wrong on the server.')

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(runRequests()).toHaveLength(2)
    expect(alertTexts(wrapper).join(' ')).not.toContain('Could not load')
    expect(statusTag(wrapper)).toBe('Done')
    expect(wrapper.get('.stack-run__back').text()).toBe('KB24-A300_field-sweep.tif')
  })
})
