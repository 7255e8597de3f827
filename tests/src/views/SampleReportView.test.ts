import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import type { ReportAnalysisDto, ReportImageDto, SampleReportDto } from '@shared/types/report'
import { createAppRouter } from '@/router'
import SampleReportView from '@/views/SampleReportView.vue'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { sampleDto } from '../labDtos'
import { alertTexts, getButton } from '../domQueries'

const SAMPLE_ID = 3
let pinia: Pinia
let router: Router

const REVIEWER = { id: 9, name: 'Tomás Lindqvist' }
const ANNOTATOR = { id: 6, name: 'Nadia Kowalski' }

function measurements(overrides: Partial<FrameMeasurements> = {}): FrameMeasurements {
  return {
    width: 256,
    height: 256,
    pixelSizeNm: 80,
    threshold: 0.42,
    analysedPx: 65536,
    upFraction: 0.55,
    downFraction: 0.45,
    magnetization: 0.1,
    domainCount: 48,
    upDomainCount: 25,
    downDomainCount: 23,
    meanUpDiameterPx: 6.5,
    meanWidthPx: 5,
    meanWidthStdErrPx: 0.2,
    meanWidthNm: 400,
    upMeanWidthPx: 5.2,
    downMeanWidthPx: 4.8,
    periodPx: 10,
    periodNm: 800,
    orientationDeg: 12,
    orderParameter: 0.3,
    wallDensityPerPx: 0.2,
    wallDensityPerUm: 2.5,
    wallLengthPx: 13000,
    reassignedFraction: 0.01,
    contrast: 0.3,
    ...overrides,
  }
}

function analysis(overrides: Partial<ReportAnalysisDto> = {}): ReportAnalysisDto {
  return {
    id: 31,
    status: 'approved',
    statusLabel: 'Approved',
    engineVersion: '1.2.0',
    recipe: {},
    annotationVersion: 2,
    annotator: ANNOTATOR,
    reviewer: REVIEWER,
    approvedAt: '2026-11-20T09:30:00.000Z',
    measurements: measurements(),
    ...overrides,
  }
}

const FIELD_SWEEP: ReportImageDto = {
  id: 5,
  name: 'KB24-A300_field-sweep.tif',
  sha256: 'ab'.repeat(32),
  technique: 'kerr-polar',
  width: 256,
  height: 256,
  frameCount: 2,
  coverFrameIndex: 0,
  pixelSizeNm: 80,
  acquiredAt: null,
  frames: [
    { frameId: 50, index: 0, field: 12.5, fieldUnit: 'mT', fieldMT: 12.5, temperatureK: null, analysis: analysis() },
    { frameId: 51, index: 1, field: 15, fieldUnit: 'mT', fieldMT: 15, temperatureK: null, analysis: null },
  ],
  stackRun: null,
}

function report(overrides: Partial<SampleReportDto> = {}): SampleReportDto {
  return {
    generatedAt: '2026-11-21T10:00:00.000Z',
    generatedBy: { id: 4, name: 'Priya Raman' },
    includeDrafts: false,
    engineVersion: '1.2.0',
    lab: { id: 1, name: 'Thin-Film Magnetism Group' },
    project: { id: 1, name: 'KB-24 anneal series' },
    sample: sampleDto({ id: SAMPLE_ID, notes: 'Cleaved from the wafer centre.' }),
    images: [FIELD_SWEEP],
    approvals: [
      { analysisId: 31, imageId: 5, imageName: 'KB24-A300_field-sweep.tif', frameIndex: 0, reviewer: REVIEWER, approvedAt: '2026-11-20T09:30:00.000Z', current: true },
      { analysisId: 22, imageId: 5, imageName: 'KB24-A300_field-sweep.tif', frameIndex: 1, reviewer: REVIEWER, approvedAt: '2026-11-18T15:00:00.000Z', current: false },
    ],
    ...overrides,
  }
}

type Answer = (request: RecordedRequest) => Response | Promise<Response>

interface Membership {
  labId: number
  labName: string
  role: LabRole
}

/**
 * Open the report's address as a member with `role` in the Thin-Film Magnetism Group (or with the given memberships;
 * the route guard runs), then mount the view with the props the route gives.
 */
async function mountReport(
  answer: Answer,
  { role = 'reviewer' as LabRole, memberships = undefined as Membership[] | undefined, path = `/samples/${SAMPLE_ID}/report` } = {},
) {
  const requests = stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, {
        id: 4,
        email: 'priya.raman@kestrel-lab.example',
        name: 'Priya Raman',
        memberships: memberships ?? [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }],
        csrfToken: 't',
      }),
    [`GET /api/samples/${SAMPLE_ID}/report`]: answer,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(path)
  const wrapper = mount(SampleReportView, {
    props: { sampleId: SAMPLE_ID, includeDrafts: router.currentRoute.value.query.drafts === 'true' },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountReport>>['wrapper']

const reportRequests = (requests: RecordedRequest[]) => requests.filter((r) => r.url.includes('/report')).map((r) => r.url)

/** The "Sample and anneal conditions" list as label → value. */
function conditions(wrapper: Wrapper): Record<string, string> {
  return Object.fromEntries(wrapper.findAll('.sample-report__conditions > div').map((item) => [item.get('dt').text(), item.get('dd').text()]))
}

function downloads(wrapper: Wrapper): Record<string, string | undefined> {
  return Object.fromEntries(wrapper.findAll('a[download]').map((a) => [a.text().trim(), a.attributes('href')]))
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SampleReportView', () => {
  it('When the report loads, then it names the lab, project and sample, who made it, and lists the anneal conditions with their units', async () => {
    const { wrapper, requests } = await mountReport(() => jsonResponse(200, report()))

    expect(reportRequests(requests)).toEqual([`/api/samples/${SAMPLE_ID}/report?includeDrafts=false`])
    expect(wrapper.get('.sample-report__kicker').text()).toBe('Sample report · Thin-Film Magnetism Group · project KB-24 anneal series')
    expect(wrapper.get('h1').text()).toBe('KB24-A300')
    const made = wrapper.get('.sample-report__made').text()
    expect(made).toContain('by Priya Raman')
    expect(made).toContain('Remanence engine 1.2.0')
    expect(made).toContain('approved analyses only')
    expect(wrapper.text()).not.toContain('Drafts included — not reviewed')
    expect(conditions(wrapper)).toEqual({
      Material: 'Ta/CoFeB/MgO',
      Thickness: '1.1 nm',
      Substrate: 'Si / 100 nm SiO2',
      'Anneal temperature': '300 °C',
      'Anneal duration': '60 min',
      Atmosphere: 'vacuum',
      'Field during anneal': '600 mT',
    })
    expect(wrapper.get('.sample-report__notes').text()).toBe('Cleaved from the wafer centre.')
  })

  it('When conditions were not recorded, then the report says "not recorded" rather than leaving them blank or zero', async () => {
    const bare = { ...report().sample, material: '', thicknessNm: null, substrate: '', annealTemperatureC: null, annealDurationMin: null, annealAtmosphere: '', annealFieldMT: null, notes: '' }
    const { wrapper } = await mountReport(() => jsonResponse(200, report({ sample: bare })))
    expect(conditions(wrapper)).toEqual({
      Material: 'not recorded',
      Thickness: 'not recorded',
      Substrate: 'not recorded',
      'Anneal temperature': 'not annealed / not recorded',
      'Anneal duration': 'not recorded',
      Atmosphere: 'not recorded',
      'Field during anneal': 'not recorded',
    })
    expect(wrapper.find('.sample-report__notes').exists()).toBe(false)
  })

  it('When images have counted analyses, then each image links to its page with its measured frames, and the approvals say who approved and whether they still count', async () => {
    const { wrapper } = await mountReport(() => jsonResponse(200, report()))

    const image = wrapper.get('section[aria-label="Image KB24-A300_field-sweep.tif"]')
    expect(image.get('h3 a').attributes('href')).toBe('/images/5')
    expect(image.text()).toContain('Kerr, polar · 256 × 256 px · 2 frames · 80 nm per pixel')
    const measured = image.findAll('tbody tr').map((row) => row.findAll('td').map((cell) => cell.text().trim()))
    expect(measured).toHaveLength(1)
    expect(measured[0].slice(0, 2)).toEqual(['0', '12.5 mT'])
    expect(measured[0][7]).toBe('Nadia Kowalski · v2')
    expect(measured[0][8]).toContain('Tomás Lindqvist')
    expect(image.text()).toContain('1 of 2 frames have no counted analysis and are not listed.')

    const approvals = wrapper.get('section[aria-labelledby="sample-report-approvals"]')
    const rows = approvals.findAll('tbody tr').map((row) => row.findAll('td').map((cell) => cell.text().trim()))
    expect(rows.map((cells) => [cells[0], cells[1], cells[2], cells[4]])).toEqual([
      ['KB24-A300_field-sweep.tif', '0', 'Tomás Lindqvist', 'Yes'],
      ['KB24-A300_field-sweep.tif', '1', 'Tomás Lindqvist', 'No — the mask was edited after approval'],
    ])
  })

  it('When the sample has no images and nothing is approved, then both sections say so', async () => {
    const { wrapper } = await mountReport(() => jsonResponse(200, report({ images: [], approvals: [] })))
    expect(wrapper.get('section[aria-labelledby="sample-report-images"]').text()).toContain('No images of this sample yet.')
    const approvals = wrapper.get('section[aria-labelledby="sample-report-approvals"]')
    expect(approvals.text()).toContain('Nothing approved yet.')
    expect(approvals.find('table').exists()).toBe(false)
  })

  it('When the report is shown, then the toolbar leads back to the sample, downloads its approved measurements, and Print prints the page', async () => {
    const print = vi.fn()
    vi.stubGlobal('print', print)
    let answer!: (response: Response) => void
    const { wrapper } = await mountReport(() => new Promise<Response>((resolve) => (answer = resolve)))

    // Nothing to print while the report is still on its way.
    expect(getButton(wrapper, 'Print').element.disabled).toBe(true)
    answer(jsonResponse(200, report()))
    await flushPromises()

    const back = wrapper.get('.sample-report__back')
    expect([back.text(), back.attributes('href')]).toEqual(['Sample page', `/samples/${SAMPLE_ID}`])
    expect(downloads(wrapper)).toEqual({
      XLSX: `/api/exports/measurements.xlsx?sampleId=${SAMPLE_ID}&includeDrafts=false`,
      CSV: `/api/exports/measurements.csv?sampleId=${SAMPLE_ID}&includeDrafts=false`,
    })
    expect(getButton(wrapper, 'Print').element.disabled).toBe(false)
    await getButton(wrapper, 'Print').trigger('click')
    expect(print).toHaveBeenCalledTimes(1)
  })

  it('When "Include drafts" is switched on, then the address says so, the report is asked for with drafts and warns that it includes unreviewed values', async () => {
    const { wrapper, requests } = await mountReport((request) =>
      jsonResponse(200, request.url.endsWith('includeDrafts=true') ? report({ includeDrafts: true }) : report()),
    )
    const toggle = wrapper.get('[role="switch"][aria-label="Include drafts"]')
    expect(toggle.attributes('aria-checked')).toBe('false')

    await toggle.trigger('click')
    await flushPromises()
    expect(router.currentRoute.value.fullPath).toBe(`/samples/${SAMPLE_ID}/report?drafts=true`)

    // The route turns the address into the view's props.
    await wrapper.setProps({ includeDrafts: true })
    await flushPromises()
    expect(reportRequests(requests)).toEqual([
      `/api/samples/${SAMPLE_ID}/report?includeDrafts=false`,
      `/api/samples/${SAMPLE_ID}/report?includeDrafts=true`,
    ])
    expect(wrapper.get('[role="switch"]').attributes('aria-checked')).toBe('true')
    expect(alertTexts(wrapper).join(' ')).toContain('Drafts included — not reviewed')
    expect(wrapper.get('.sample-report__made').text()).toContain('drafts included')
    expect(downloads(wrapper)).toEqual({
      XLSX: `/api/exports/measurements.xlsx?sampleId=${SAMPLE_ID}&includeDrafts=true`,
      CSV: `/api/exports/measurements.csv?sampleId=${SAMPLE_ID}&includeDrafts=true`,
    })
  })

  it('When the address asks for drafts and they are switched off, then the address drops the query', async () => {
    const { wrapper, requests } = await mountReport(() => jsonResponse(200, report({ includeDrafts: true })), { path: `/samples/${SAMPLE_ID}/report?drafts=true` })
    expect(reportRequests(requests)).toEqual([`/api/samples/${SAMPLE_ID}/report?includeDrafts=true`])
    await wrapper.get('[role="switch"][aria-label="Include drafts"]').trigger('click')
    await flushPromises()
    expect(router.currentRoute.value.fullPath).toBe(`/samples/${SAMPLE_ID}/report`)
  })

  it('When drafts are switched on before the first report arrives, then the late approved-only report does not replace the drafts report', async () => {
    const pending: Array<{ url: string; resolve: (response: Response) => void }> = []
    const { wrapper } = await mountReport((request) => new Promise<Response>((resolve) => pending.push({ url: request.url, resolve })))
    await wrapper.setProps({ includeDrafts: true })
    await flushPromises()
    expect(pending.map((p) => p.url)).toEqual([
      `/api/samples/${SAMPLE_ID}/report?includeDrafts=false`,
      `/api/samples/${SAMPLE_ID}/report?includeDrafts=true`,
    ])

    pending[1].resolve(jsonResponse(200, report({ includeDrafts: true })))
    await flushPromises()
    pending[0].resolve(jsonResponse(200, report()))
    await flushPromises()
    expect(wrapper.get('.sample-report__made').text()).toContain('drafts included')
    expect(alertTexts(wrapper).join(' ')).toContain('Drafts included — not reviewed')
  })

  it('When drafts are switched on and the first, approved-only request then fails, then the drafts report stays on screen', async () => {
    const pending: Array<{ url: string; resolve: (response: Response) => void }> = []
    const { wrapper } = await mountReport((request) => new Promise<Response>((resolve) => pending.push({ url: request.url, resolve })))
    await wrapper.setProps({ includeDrafts: true })
    await flushPromises()
    pending[1].resolve(jsonResponse(200, report({ includeDrafts: true })))
    await flushPromises()
    pending[0].resolve(errorResponse(503, 'unavailable', 'The database is not answering.'))
    await flushPromises()
    expect(wrapper.get('.sample-report__made').text()).toContain('drafts included')
    expect(alertTexts(wrapper).join(' ')).not.toContain('The database is not answering.')
  })

  it('When the sample does not exist, then the page says so and leads to all samples, with nothing to print', async () => {
    const { wrapper } = await mountReport(() => errorResponse(404, 'sample-not-found', 'No such sample.'))
    expect(wrapper.text()).toContain('Sample not found')
    expect(wrapper.text()).toContain('There is no such sample in your labs.')
    expect(wrapper.find('article').exists()).toBe(false)
    expect(getButton(wrapper, 'Print').element.disabled).toBe(true)

    await getButton(wrapper, 'All samples').trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/samples'), { timeout: 10_000 })
  })

  it('When the report fails to load, then the page says so, and Retry asks again and shows it', async () => {
    let calls = 0
    const { wrapper, requests } = await mountReport(() =>
      ++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, report()),
    )
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the report')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(reportRequests(requests)).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
    expect(wrapper.get('h1').text()).toBe('KB24-A300')
  })

  it('When the sample is in a lab where the person may not export (403), then the server’s reason is shown without a Retry', async () => {
    // A reviewer in one lab passes the route guard; in the sample's lab they are an annotator.
    const memberships: Membership[] = [
      { labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' },
      { labId: 2, labName: 'Spin-Orbit Devices Lab', role: 'annotator' },
    ]
    const { wrapper } = await mountReport(() => errorResponse(403, 'forbidden', 'Your role in this lab does not allow this.'), { memberships })
    expect(router.currentRoute.value.name).toBe('sample-report')
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the report')
    expect(alertTexts(wrapper).join(' ')).toContain('Your role in this lab does not allow this.')
    expect(wrapper.findAll('button').some((b) => b.text().trim() === 'Retry')).toBe(false)
  })

  it.each(['annotator', 'microscopist'] as const)('When a person whose role is "%s" opens the report address, then they are sent to Not allowed', async (role) => {
    stubFetch({
      'GET /api/auth/me': () =>
        jsonResponse(200, { id: 4, email: 'priya.raman@kestrel-lab.example', name: 'Priya Raman', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    })
    router = createAppRouter(createMemoryHistory())
    await router.push(`/samples/${SAMPLE_ID}/report`)
    expect(router.currentRoute.value.name).toBe('forbidden')
    expect(router.currentRoute.value.query).toEqual({ action: 'export.tables', from: `/samples/${SAMPLE_ID}/report` })
  })

  it.each(['reviewer', 'pi', 'admin'] as const)('When a person whose role is "%s" opens the report address, then the report is shown', async (role) => {
    const { wrapper } = await mountReport(() => jsonResponse(200, report()), { role })
    expect(router.currentRoute.value.name).toBe('sample-report')
    expect(wrapper.get('h1').text()).toBe('KB24-A300')
  })
})
