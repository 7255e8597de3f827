import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { SampleMeasurementsDto } from '@shared/types/sampleMeasurements'
import { createAppRouter } from '@/router'
import SampleMeasurementsPanel from '@/components/SampleMeasurementsPanel.vue'
import SampleDetailView from '@/views/SampleDetailView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'
import { sampleDto, sampleFrameMeasurementDto, sampleStackRunDto } from '../labDtos'

let pinia: Pinia
let router: Router

const ELENA = { id: 3, email: 'elena.varga@thin-film.example', name: 'Elena Varga', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'microscopist' }], csrfToken: 't' }



function measurements(parts: Partial<Pick<SampleMeasurementsDto, 'frames' | 'stackRuns'>> = {}): SampleMeasurementsDto {
  return { sample: sampleDto(), labId: 1, projectName: 'KB-24 anneal series', frames: [], stackRuns: [], ...parts }
}

async function mountPanel(data: SampleMeasurementsDto) {
  // Signed in, so the router lets links lead on; the pages they open find nothing else (404).
  stubFetch({ 'GET /api/auth/me': () => jsonResponse(200, ELENA) })
  router = createAppRouter(createMemoryHistory())
  await router.push('/samples/3')
  const wrapper = mount(SampleMeasurementsPanel, { props: { measurements: data }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}

/** The header and body cells of the table named `label`, as texts. */
function table(wrapper: Pick<VueWrapper, 'find'>, label: string): { headers: string[]; rows: string[][] } {
  const found = wrapper.find(`[aria-label="${label}"]`)
  if (!found.exists()) throw new Error(`No table "${label}"`)
  return {
    headers: found.findAll('.el-table__header-wrapper th').map((th) => th.text().trim()),
    // A cell's parts (a link and the image name under it) read as separate words.
    rows: found.findAll('.el-table__body-wrapper tbody tr').map((row) => row.findAll('td .cell').map((cell) => [...cell.element.children].map((part) => part.textContent?.trim()).join(' ') || cell.text().trim())),
  }
}

const RUNS = "Stack runs of this sample's images"
const FRAMES = "Latest analyses of this sample's frames"

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SampleMeasurementsPanel', () => {
  it('When nothing has been measured yet, then both sections say so and say how to get measurements, with no empty tables', async () => {
    const wrapper = await mountPanel(measurements())
    expect(wrapper.get('h2').text()).toBe('Measured')
    expect(wrapper.findAll('h3').map((h) => h.text())).toEqual(['Stack runs', 'Saved frame analyses (latest per frame)'])
    expect(wrapper.text()).toContain("No stack runs of this sample's images yet. Process a stack from its image page.")
    expect(wrapper.text()).toContain("No saved analyses of this sample's frames yet. Saving a mask in the workspace measures its frame.")
    expect(wrapper.find(`[aria-label="${RUNS}"]`).exists()).toBe(false)
    expect(wrapper.find(`[aria-label="${FRAMES}"]`).exists()).toBe(false)
  })

  it('When the sample has stack runs, then each shows its state in words and its lengths in nm when calibrated, in px otherwise, never guessed', async () => {
    const wrapper = await mountPanel(
      measurements({
        stackRuns: [
          sampleStackRunDto({ runId: 9, status: 'running', framesDone: 12, finishedAt: null, framesMeasured: 12, nearZeroFrame: null, medianWidthPx: null, medianWidthNm: null, medianPeriodPx: null, medianPeriodNm: null, coerciveField: null, fieldUnit: null }),
          sampleStackRunDto(),
          // A temperature series of an uncalibrated image: pixels only, with its Curie fit.
          sampleStackRunDto({
            runId: 6,
            imageId: 13,
            imageName: 'KB24-A300_heating.tif',
            pixelSizeNm: null,
            nearZeroFrame: { index: 3, magnetization: 0.004, meanWidthPx: 2.046, meanWidthNm: null, periodPx: 4.1, periodNm: null },
            medianWidthPx: 2.2,
            medianWidthNm: null,
            coerciveField: 22.5,
            fieldUnit: 'Oe',
            tcK: 612.35,
            beta: 0.3265,
          }),
          sampleStackRunDto({ runId: 5, status: 'failed', framesDone: 0, framesMeasured: 0, nearZeroFrame: null, medianWidthPx: null, medianWidthNm: null, medianPeriodPx: null, medianPeriodNm: null, coerciveField: null, fieldUnit: null }),
        ],
      }),
    )

    const runs = table(wrapper, RUNS)
    expect(runs.headers).toEqual(['Run', 'Status', 'Width near M = 0', 'Period near M = 0', 'Median width', 'Hc', 'Tc, β'])
    expect(runs.rows).toEqual([
      ['Run #9 KB24-A300_field-sweep.tif', 'Processing frame 13 of 41', '—', '—', '—', '—', '—'],
      ['Run #7 KB24-A300_field-sweep.tif', 'Done', '410 nm', '840 nm', '440 nm', '1.8 mT', '—'],
      // px to 3 significant digits (2.046 → 2.05); Tc to 5 (612.35 K); β to 3 (0.3265 → 0.327).
      ['Run #6 KB24-A300_heating.tif', 'Done', '2.05 px', '4.1 px', '2.2 px', '22.5 Oe', '612.35 K, 0.327'],
      ['Run #5 KB24-A300_field-sweep.tif', 'Failed', '—', '—', '—', '—', '—'],
    ])
    // The status tags carry the colour of the state.
    const tags = wrapper.findAll(`[aria-label="${RUNS}"] .el-tag`).map((t) => t.classes().find((c) => /^el-tag--(info|primary|success|warning|danger)$/.test(c)))
    expect(tags).toEqual(['el-tag--primary', 'el-tag--success', 'el-tag--success', 'el-tag--danger'])
  })

  it('When a run number is clicked, then its stack run page opens', async () => {
    const wrapper = await mountPanel(measurements({ stackRuns: [sampleStackRunDto()] }))
    const link = wrapper.findAll('a').find((a) => a.text() === 'Run #7')!
    expect(link.attributes('href')).toBe('/stack-runs/7')
    await link.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/stack-runs/7'), { timeout: 10_000 })
  })

  it('When frames have saved analyses, then each lists its condition, M/Ms, lengths and review state, and links to its frame', async () => {
    const wrapper = await mountPanel(
      measurements({
        frames: [
          sampleFrameMeasurementDto(),
          sampleFrameMeasurementDto({ analysisId: 40, imageId: 12, imageName: 'KB24-A300_field-sweep.tif', frameIndex: 17, field: -12.5, temperatureK: null, status: 'draft', pixelSizeNm: null, magnetization: -0.412, meanWidthPx: 5.254, meanWidthNm: null, periodPx: null, periodNm: null }),
          sampleFrameMeasurementDto({ analysisId: 41, imageId: 14, imageName: 'KB24-A300_overview.tif', frameIndex: 0, field: null, fieldUnit: null, temperatureK: null, status: 'draft', magnetization: null, meanWidthNm: 1234.56, periodNm: null, periodPx: null }),
        ],
      }),
    )

    const frames = table(wrapper, FRAMES)
    expect(frames.headers).toEqual(['Image, frame', 'Condition', 'M/Ms', 'Mean width', 'Period', 'Review status'])
    // Everything but the review state, which is checked below.
    expect(frames.rows.map((cells) => cells.slice(0, 5))).toEqual([
      ['KB24-A300_remanent.tif · frame 0', '0 mT · 295 K', '0.02', '500 nm', '1000 nm'],
      // True minus signs (U+2212); an uncalibrated width in px to 3 digits; a period not measured is "—".
      ['KB24-A300_field-sweep.tif · frame 17', '\u221212.5 mT', '\u22120.412', '5.25 px', '—'],
      // No condition recorded; nm to 4 significant digits.
      ['KB24-A300_overview.tif · frame 0', '—', '—', '1235 nm', '—'],
    ])
    // The review state of each analysis in words, as the review pages write it (ANALYSIS_STATUS_LABELS).
    expect(frames.rows.map((cells) => cells[5])).toEqual(['Approved', 'Draft', 'Draft'])

    const links = wrapper.findAll(`[aria-label="${FRAMES}"] a`).map((a) => a.attributes('href'))
    expect(links).toEqual(['/images/4?frame=0', '/images/12?frame=17', '/images/14?frame=0'])
  })

  it('When the sample page cannot load the measurements, then it says what failed instead of showing an empty Measured panel, and Retry shows them', async () => {
    let calls = 0
    const data = measurements({ stackRuns: [sampleStackRunDto()], frames: [sampleFrameMeasurementDto()] })
    stubFetch({
      'GET /api/auth/me': () => jsonResponse(200, ELENA),
      'GET /api/samples/3/measurements': () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, data)),
      'GET /api/labs/1/materials': () => jsonResponse(200, []),
      'GET /api/images': () => jsonResponse(200, { items: [], total: 0, page: 1, pageSize: 200 }),
    })
    router = createAppRouter(createMemoryHistory())
    await router.push('/samples/3')
    const wrapper = mount(SampleDetailView, { props: { sampleId: 3 }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
    await flushPromises()

    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the sample')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect(wrapper.find('#sample-measured-heading').exists()).toBe(false)
    expect(wrapper.text()).not.toContain('No stack runs of this sample')

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(calls).toBe(2)
    expect(wrapper.get('#sample-measured-heading').text()).toBe('Measured')
    expect(table(wrapper, RUNS).rows.map((cells) => cells[0])).toEqual(['Run #7 KB24-A300_field-sweep.tif'])
    expect(table(wrapper, FRAMES).rows.map((cells) => cells[0])).toEqual(['KB24-A300_remanent.tif · frame 0'])
  })
})
