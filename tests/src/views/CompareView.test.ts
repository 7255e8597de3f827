import { beforeEach, describe, expect, it, onTestFinished, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import { bootstrapMeanCI, hedgesG, mannWhitneyU, mean, quantile, rankBiserial, standardDeviation, welchTTest } from '@shared/analysis/statistics'
import {
  COMPARISON_GROUP_BY_LABELS,
  COMPARISON_MEASURE_INFO,
  type ComparisonGroupBy,
  type ComparisonGroupDto,
  type ComparisonMeasure,
  type ComparisonResultDto,
  type ComparisonValueDto,
  type PairwiseTestDto,
  type SavedComparisonDto,
} from '@shared/types/comparison'
import type { ProjectDto, SampleSummaryDto } from '@shared/types/lab'
import type { LabMembershipDto } from '@shared/types/user'
import { createAppRouter } from '@/router'
import CompareView from '@/views/CompareView.vue'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { alertTexts, chooseOption, chosenTexts, getButton, messageBox, openSelectOptions, pressInMessageBox, selectNamed } from '../domQueries'

let pinia: Pinia
let router: Router

const ELENA = { id: 3, name: 'Elena Varga' }
const MARA = { id: 6, name: 'Mara Lindqvist' }

const PROJECTS: ProjectDto[] = [
  { id: 4, labId: 1, name: 'KB-24 anneal series', description: '', createdAt: '2026-11-01T12:00:00.000Z', sampleCount: 4, imageCount: 14 },
  { id: 9, labId: 1, name: 'YIG garnet films', description: '', createdAt: '2026-12-03T12:00:00.000Z', sampleCount: 0, imageCount: 0 },
]

function sample(id: number, annealTemperatureC: number): SampleSummaryDto {
  return {
    id,
    projectId: 4,
    name: `KB24-A${annealTemperatureC}`,
    material: 'Ta/CoFeB/MgO (perpendicular)',
    thicknessNm: 1.1,
    substrate: 'Si / 100 nm SiO2',
    annealTemperatureC,
    annealDurationMin: 60,
    annealAtmosphere: 'vacuum',
    annealFieldMT: null,
    notes: '',
    imageCount: 3,
  }
}
const SAMPLES = [sample(20, 200), sample(21, 250), sample(22, 300), sample(23, 350)]

/** The bootstrap the server uses for the CIs (COMPARISON_BOOTSTRAP in server/services/comparisonService.ts). */
const BOOTSTRAP = { seed: 1, resamples: 2000, level: 0.95 }

/** One value per analysed frame of the sample's remanent image; `drafts` marks frames whose analysis is not approved. */
function values(s: SampleSummaryDto, xs: number[], drafts: number[] = []): ComparisonValueDto[] {
  return xs.map((value, i) => ({
    value,
    source: 'analysis',
    draft: drafts.includes(i),
    sample: { id: s.id, name: s.name },
    image: { id: 100 + s.id, name: `${s.name}_remanent.tif` },
    frameId: 1000 + s.id * 10 + i,
    frameIndex: i,
    analysisId: 2000 + s.id * 10 + i,
    stackRunId: null,
    creepFit: null,
  }))
}

/** A group summarised as the server does it, with the real statistics of shared/analysis/statistics.ts. */
function group(temperatureC: number, vs: ComparisonValueDto[]): ComparisonGroupDto {
  const xs = vs.map((v) => v.value)
  const ci = bootstrapMeanCI(xs, BOOTSTRAP)
  return {
    key: temperatureC,
    label: `${temperatureC} °C`,
    samples: [...new Map(vs.map((v) => [v.sample.id, v.sample])).values()],
    n: xs.length,
    mean: mean(xs),
    standardDeviation: standardDeviation(xs),
    ci: { lower: ci.lower, upper: ci.upper, level: ci.level, resamples: ci.resamples, seed: BOOTSTRAP.seed },
    fiveNumber: { min: quantile(xs, 0)!, q1: quantile(xs, 0.25)!, median: quantile(xs, 0.5)!, q3: quantile(xs, 0.75)!, max: quantile(xs, 1)! },
    hasDrafts: vs.some((v) => v.draft),
    values: vs,
  }
}

function pair(a: ComparisonGroupDto, b: ComparisonGroupDto): PairwiseTestDto {
  const xa = a.values.map((v) => v.value)
  const xb = b.values.map((v) => v.value)
  const mw = mannWhitneyU(xa, xb)
  return { groupA: a.key, groupB: b.key, labelA: a.label, labelB: b.label, welch: welchTTest(xa, xb), mannWhitney: { u: mw.u, z: mw.z, p: mw.p }, hedgesG: hedgesG(xa, xb), rankBiserial: rankBiserial(xa, xb) }
}

const NO_EXCLUSIONS: ComparisonResultDto['excluded'] = { uncalibrated: 0, noSample: 0, notAtRemanence: 0, missing: 0, noMotionSeries: 0, noCreepFit: 0 }

/** A result as the server computes it: groups in key order and every pair of groups tested. */
function result(groups: ComparisonGroupDto[], options: { measure?: ComparisonMeasure; groupBy?: ComparisonGroupBy; includeDrafts?: boolean; excluded?: Partial<ComparisonResultDto['excluded']>; notes?: string[] } = {}): ComparisonResultDto {
  const measure = options.measure ?? 'meanWidth'
  const groupBy = options.groupBy ?? 'annealTemperatureC'
  const pairs: PairwiseTestDto[] = []
  for (let i = 0; i < groups.length; i++) for (let j = i + 1; j < groups.length; j++) pairs.push(pair(groups[i], groups[j]))
  return {
    measure,
    label: COMPARISON_MEASURE_INFO[measure].label,
    unit: COMPARISON_MEASURE_INFO[measure].unit,
    groupBy,
    groupByLabel: COMPARISON_GROUP_BY_LABELS[groupBy],
    includeDrafts: options.includeDrafts ?? false,
    labId: 1,
    groups,
    pairs,
    excluded: { ...NO_EXCLUSIONS, ...options.excluded },
    notes: options.notes ?? [],
  }
}

// Mean domain widths (nm) of the remanent state, invented: wider domains after hotter anneals.
const WIDTHS = result(
  [
    group(250, values(SAMPLES[1], [612, 598, 640, 605, 621])),
    group(300, values(SAMPLES[2], [734, 760, 748, 771, 729])),
    group(350, values(SAMPLES[3], [880, 905, 861])),
  ],
  {
    excluded: { uncalibrated: 2 },
    notes: ['Only approved work counts: the newest approved analysis of each frame, and the newest stack run of each image that finished with status "done" (stack runs have no review step).'],
  },
)

const SAVED: SavedComparisonDto = {
  id: 12,
  labId: 1,
  name: 'KB-24 widths by anneal temperature',
  query: { projectId: 4, measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false },
  createdBy: ELENA,
  createdAt: '2026-11-20T09:00:00.000Z',
}

const inLab1 = (role: LabRole): LabMembershipDto[] => [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }]

type Handler = (request: RecordedRequest) => Response | Promise<Response>

/** The API as the page uses it; `handlers` replace or add routes. */
function stubApi(memberships: LabMembershipDto[], handlers: Record<string, Handler> = {}, user = ELENA) {
  return stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: user.id, email: 'person@thin-film.example', name: user.name, memberships, csrfToken: 't' }),
    'GET /api/projects': () => jsonResponse(200, PROJECTS),
    'GET /api/projects/4/samples': () => jsonResponse(200, SAMPLES),
    'GET /api/projects/9/samples': () => jsonResponse(200, []),
    'GET /api/comparisons': () => jsonResponse(200, []),
    'POST /api/comparisons/compute': () => jsonResponse(200, WIDTHS),
    ...handlers,
  })
}

async function mountCompare(options: { memberships?: LabMembershipDto[]; handlers?: Record<string, Handler>; path?: string; user?: typeof ELENA } = {}) {
  const requests = stubApi(options.memberships ?? inLab1('pi'), options.handlers, options.user)
  router = createAppRouter(createMemoryHistory())
  await router.push(options.path ?? '/compare')
  const wrapper = mount(CompareView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountCompare>>['wrapper']

/** What a select shows as chosen. */
const chosen = (wrapper: Wrapper, name: string) => chosenTexts(wrapper, name)

/** The options a select offers. */
const optionsOf = async (wrapper: Wrapper, name: string) => (await openSelectOptions(wrapper, name)).map((item) => item.textContent!.trim())

const choose = chooseOption

const computeRequests = (requests: RecordedRequest[]) => requests.filter((r) => r.method === 'POST' && r.url === '/api/comparisons/compute')

/** The rows of a table (found by its accessible name), each as the texts of its cells. */
const rows = (wrapper: Wrapper, table: string) => wrapper.findAll(`[aria-label="${table}"] .el-table__body-wrapper tbody tr`).map((row) => row.findAll('td').map((cell) => cell.text().trim()))

const savedViews = (wrapper: Wrapper) => wrapper.get('section[aria-labelledby="compare-saved-title"]')

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
  // The page remembers the project compared last in this browser; every test starts without one.
  window.localStorage.clear()
})

describe('CompareView, the empty start', () => {
  it('When nothing has been compared yet, then the page says what to choose, Compare waits for a project and no comparison is asked for', async () => {
    const { wrapper, requests } = await mountCompare()
    expect(wrapper.get('h1').text()).toBe('Compare')
    expect(wrapper.text()).toContain('Choose a project (and, if you like, some of its samples), a measure and a condition to group by, then press Compare.')
    expect(chosen(wrapper, 'Project')).toEqual([])
    expect(chosen(wrapper, 'Measure')).toEqual(['Mean domain width (nm)'])
    expect(chosen(wrapper, 'Group by')).toEqual(['Anneal temperature (°C)'])
    expect(getButton(wrapper, 'Compare').attributes('disabled')).toBeDefined()
    expect(computeRequests(requests)).toEqual([])
    expect(savedViews(wrapper).text()).toContain('None yet. “Save as view” keeps a comparison for the lab')
  })
})

describe('CompareView, choosing what to compare', () => {
  it('When a project, a measure and a grouping are chosen and Compare is pressed, then the whole project is asked for with those choices', async () => {
    const { wrapper, requests } = await mountCompare()
    expect(await optionsOf(wrapper, 'Project')).toEqual(['KB-24 anneal series', 'YIG garnet films'])
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    await choose(wrapper, 'Measure', 'Domain period (nm)')
    await choose(wrapper, 'Group by', 'Anneal atmosphere')
    expect(chosen(wrapper, 'Project')).toEqual(['KB-24 anneal series'])
    // The project's samples are fetched for the Samples picker.
    expect(requests.some((r) => r.url === '/api/projects/4/samples')).toBe(true)

    await getButton(wrapper, 'Compare').trigger('click')
    await flushPromises()
    expect(computeRequests(requests).map((r) => r.body)).toEqual([{ projectId: 4, measure: 'period', groupBy: 'annealAtmosphere', includeDrafts: false }])
  })

  it('When some samples are picked, then only those are asked for, in ascending order and without the project', async () => {
    const { wrapper, requests } = await mountCompare()
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    expect(await optionsOf(wrapper, 'Samples')).toEqual(['KB24-A200', 'KB24-A250', 'KB24-A300', 'KB24-A350'])
    await choose(wrapper, 'Samples', 'KB24-A350')
    await choose(wrapper, 'Samples', 'KB24-A250')
    await getButton(wrapper, 'Compare').trigger('click')
    await flushPromises()
    expect(computeRequests(requests).map((r) => r.body)).toEqual([{ sampleIds: [21, 23], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false }])
  })

  it('When the person sees a single project where they may compare, then it is chosen already', async () => {
    const { wrapper, requests } = await mountCompare({ handlers: { 'GET /api/projects': () => jsonResponse(200, [PROJECTS[0]]) } })
    expect(chosen(wrapper, 'Project')).toEqual(['KB-24 anneal series'])
    await getButton(wrapper, 'Compare').trigger('click')
    await flushPromises()
    expect(computeRequests(requests).map((r) => r.body)).toEqual([{ projectId: 4, measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false }])
  })
})

/** Mount, choose the KB-24 project and press Compare. */
async function compareKb24(options: Parameters<typeof mountCompare>[0] = {}) {
  const mounted = await mountCompare(options)
  await choose(mounted.wrapper, 'Project', 'KB-24 anneal series')
  await getButton(mounted.wrapper, 'Compare').trigger('click')
  await flushPromises()
  return mounted
}

describe('CompareView, the result', () => {
  it('When the comparison arrives, then each group shows its samples, n, mean, SD, 95 % CI and median as the server computed them', async () => {
    const { wrapper } = await compareKb24()
    expect(wrapper.get('h2').text()).toBe('Mean domain width (nm) by anneal temperature')
    expect(wrapper.text()).not.toContain('Choose a project (and, if you like')
    const headers = wrapper.findAll('[aria-label="Groups"] th').map((th) => th.text().trim())
    expect(headers).toEqual(['Anneal temperature', 'Samples', 'n', 'Mean (nm)', 'SD', '95 % CI of the mean', 'Median'])
    // Means, SDs, bootstrap CIs (seed 1, 2000 resamples) and medians of the invented widths, to 4 significant digits.
    expect(rows(wrapper, 'Groups')).toEqual([
      ['250 °C', 'KB24-A250', '5', '615.2', '16.27', '603.6 – 628.8', '612'],
      ['300 °C', 'KB24-A300', '5', '748.4', '17.53', '734.8 – 762', '748'],
      ['350 °C', 'KB24-A350', '3', '882', '22.07', '861 – 905', '880'],
    ])
    // The chart is described for a screen reader by its groups.
    expect(wrapper.get('[role="img"].compare-chart').attributes('aria-label')).toBe(
      'Box plot of Mean domain width by anneal temperature. 250 °C: n = 5, mean 615.2 nm; 300 °C: n = 5, mean 748.4 nm; 350 °C: n = 3, mean 882 nm',
    )
  })

  it('When there are three groups, then every pair is tested with Welch, Mann–Whitney and effect sizes, p-values printed as journals do', async () => {
    const { wrapper } = await compareKb24()
    expect(rows(wrapper, 'Pairwise tests')).toEqual([
      // Groups, mean A − B (nm), t, df, Welch p, U, Mann–Whitney p, Hedges g, rank-biserial r.
      ['250 °C vs 300 °C', '−133.2', '−12.5', '7.96', '< 0.001', '0', '0.01', '−7.11', '−1'],
      ['250 °C vs 350 °C', '−266.8', '−18.2', '3.34', '< 0.001', '0', '0.04', '−12.6', '−1'],
      ['300 °C vs 350 °C', '−133.6', '−8.93', '3.55', '0.001', '0', '0.04', '−6.06', '−1'],
    ])
  })

  it('When values were left out, then the page says how many and why, with the notes of the server', async () => {
    const { wrapper } = await compareKb24()
    const section = wrapper.get('section[aria-label="How values were chosen"]')
    const items = section.findAll('li').map((li) => li.text())
    expect(items).toEqual([
      'Left out: 2 frames of images without a pixel size (calibrate them to count in nm).',
      'Only approved work counts: the newest approved analysis of each frame, and the newest stack run of each image that finished with status "done" (stack runs have no review step).',
    ])
    expect(section.text()).toContain('The CSV and XLSX exports cover every sample of the project, approved analyses only.')
  })

  it('When nothing was measured and approved in the choice, then the page says so instead of empty tables', async () => {
    const { wrapper } = await compareKb24({ handlers: { 'POST /api/comparisons/compute': () => jsonResponse(200, result([])) } })
    expect(wrapper.text()).toContain('No values to compare: nothing measured and approved in this choice yet.')
    expect(wrapper.find('[aria-label="Groups"]').exists()).toBe(false)
    expect(wrapper.find('[aria-label="Pairwise tests"]').exists()).toBe(false)
  })

  it('When only one group has values, then the pairwise table says tests need two groups', async () => {
    const { wrapper } = await compareKb24({ handlers: { 'POST /api/comparisons/compute': () => jsonResponse(200, result([group(300, values(SAMPLES[2], [734, 760]))])) } })
    expect(rows(wrapper, 'Groups').map((cells) => cells.slice(0, 3))).toEqual([['300 °C', 'KB24-A300', '2']])
    expect(wrapper.get('[aria-label="Pairwise tests"]').text()).toContain('Pairwise tests need at least two groups.')
  })

  it('When a choice changes after the result, then the page says to press Compare again and keeps the result until then', async () => {
    const { wrapper } = await compareKb24()
    expect(wrapper.text()).not.toContain('The choices above changed')
    await choose(wrapper, 'Measure', 'Wall density (µm⁻¹)')
    expect(wrapper.text()).toContain('The choices above changed: press Compare to update the result.')
    expect(rows(wrapper, 'Groups')).toHaveLength(3)
  })

  it('When a reviewer sees a result, then CSV and XLSX of the project are offered with the drafts choice in the address', async () => {
    const { wrapper } = await compareKb24({ memberships: inLab1('reviewer') })
    const links = wrapper.findAll('a[download]').map((a) => [a.text(), a.attributes('href')])
    expect(links).toEqual([
      ['CSV', '/api/exports/measurements.csv?projectId=4&includeDrafts=false'],
      ['XLSX', '/api/exports/measurements.xlsx?projectId=4&includeDrafts=false'],
    ])
  })
})

describe('CompareView, drafts', () => {
  it('When "Include drafts" is switched on, then drafts are asked for and the result warns that unreviewed values count and marks the groups that have them', async () => {
    const withDrafts = result([group(250, values(SAMPLES[1], [612, 598, 640], [2])), group(300, values(SAMPLES[2], [734, 760, 748]))], { includeDrafts: true })
    const { wrapper, requests } = await mountCompare({ handlers: { 'POST /api/comparisons/compute': () => jsonResponse(200, withDrafts) } })
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    const toggle = wrapper.get('[role="switch"][aria-label="Include drafts"]')
    expect(toggle.attributes('aria-checked')).toBe('false')
    await toggle.trigger('click')
    expect(toggle.attributes('aria-checked')).toBe('true')
    await getButton(wrapper, 'Compare').trigger('click')
    await flushPromises()

    expect(computeRequests(requests).map((r) => r.body)).toEqual([{ projectId: 4, measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: true }])
    expect(wrapper.text()).toContain('Drafts included — not reviewed')
    expect(wrapper.text()).toContain('Values from analyses nobody has approved yet are counted')
    expect(rows(wrapper, 'Groups').map((cells) => cells[0])).toEqual(['250 °C has drafts', '300 °C'])
  })

  it('When drafts are off, then the result carries no drafts warning', async () => {
    const { wrapper } = await compareKb24()
    expect(wrapper.text()).not.toContain('Drafts included')
    expect(wrapper.text()).not.toContain('has drafts')
  })
})

describe('CompareView, a failed comparison', () => {
  it('When the server refuses the comparison, then its reason is shown without a Retry that would get the same answer', async () => {
    const { wrapper } = await compareKb24({ handlers: { 'POST /api/comparisons/compute': () => errorResponse(400, 'samples-in-different-labs', 'Choose samples of one lab.') } })
    const alerts = alertTexts(wrapper).join(' ')
    expect(alerts).toContain('Could not load the comparison')
    expect(alerts).toContain('Choose samples of one lab.')
    expect(wrapper.findAll('button').map((b) => b.text().trim())).not.toContain('Retry')
    expect(wrapper.find('[aria-label="Groups"]').exists()).toBe(false)
  })

  it('When the server is unavailable, then the failure is shown and Retry asks again with the same choice and shows the result', async () => {
    let calls = 0
    const { wrapper, requests } = await compareKb24({
      handlers: { 'POST /api/comparisons/compute': () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, WIDTHS)) },
    })
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    const asked = computeRequests(requests).map((r) => r.body)
    expect(asked).toHaveLength(2)
    expect(asked[1]).toEqual(asked[0])
    expect(alertTexts(wrapper)).toEqual([])
    expect(rows(wrapper, 'Groups')).toHaveLength(3)
  })
})



const savedNames = (wrapper: Wrapper) => savedViews(wrapper).findAll('li a').map((a) => a.text())

describe('CompareView, saved views', () => {
  it('When a result is saved as a view, then the name suggested from the result is sent with its query, and the view is listed, named on the page and put in the address', async () => {
    const created: SavedComparisonDto = { ...SAVED, id: 31, name: 'Mean domain width by anneal temperature' }
    const { wrapper, requests } = await compareKb24({ handlers: { 'POST /api/comparisons': () => jsonResponse(201, created) } })
    await getButton(wrapper, 'Save as view').trigger('click')
    const box = await messageBox()
    expect(box.textContent).toContain('Save as view')
    expect(box.querySelector('input')?.value).toBe('Mean domain width by anneal temperature')
    await pressInMessageBox('Save')
    await vi.waitFor(() => expect(router.currentRoute.value.query).toEqual({ view: '31' }))
    await flushPromises()

    expect(requests.filter((r) => r.method === 'POST' && r.url === '/api/comparisons').map((r) => r.body)).toEqual([
      { name: 'Mean domain width by anneal temperature', query: { projectId: 4, measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false } },
    ])
    expect(savedNames(wrapper)).toEqual(['Mean domain width by anneal temperature'])
    expect(wrapper.text()).toContain('Saved view “Mean domain width by anneal temperature”')
    expect(document.body.textContent).toContain('Saved “Mean domain width by anneal temperature”.')
    // The view on screen is not fetched again because the address now names it.
    expect(requests.some((r) => r.url === '/api/comparisons/31')).toBe(false)
    expect(getButton(wrapper, 'Copy link').exists()).toBe(true)
  })

  it('When the name of a new view is emptied, then the box asks for a name and nothing is saved', async () => {
    const { wrapper, requests } = await compareKb24()
    await getButton(wrapper, 'Save as view').trigger('click')
    const box = await messageBox()
    const input = box.querySelector('input')!
    input.value = '   '
    input.dispatchEvent(new Event('input'))
    await flushPromises()
    await pressInMessageBox('Save')
    await vi.waitFor(() => expect(box.textContent).toContain('Give the view a name (at most 200 characters).'))
    expect(requests.some((r) => r.method === 'POST' && r.url === '/api/comparisons')).toBe(false)
  })

  it('When a link to a saved view is opened, then its choices fill the form and its re-computed result is shown without pressing Compare', async () => {
    const { wrapper, requests } = await mountCompare({
      path: '/compare?view=12',
      handlers: {
        'GET /api/comparisons': () => jsonResponse(200, [SAVED]),
        'GET /api/comparisons/12': () => jsonResponse(200, { comparison: SAVED, result: WIDTHS }),
      },
    })
    expect(requests.filter((r) => r.url === '/api/comparisons/12')).toHaveLength(1)
    expect(computeRequests(requests)).toEqual([])
    expect(chosen(wrapper, 'Project')).toEqual(['KB-24 anneal series'])
    expect(chosen(wrapper, 'Measure')).toEqual(['Mean domain width (nm)'])
    expect(chosen(wrapper, 'Group by')).toEqual(['Anneal temperature (°C)'])
    expect(wrapper.text()).toContain('Saved view “KB-24 widths by anneal temperature”')
    expect(rows(wrapper, 'Groups').map((cells) => cells[0])).toEqual(['250 °C', '300 °C', '350 °C'])
    expect(wrapper.text()).not.toContain('The choices above changed')
    expect(savedViews(wrapper).get('li.compare-saved-views__item--current').text()).toContain('KB-24 widths by anneal temperature')

    // Comparing again makes a fresh result: the address no longer names the view.
    await getButton(wrapper, 'Compare').trigger('click')
    await flushPromises()
    expect(computeRequests(requests)).toHaveLength(1)
    expect(router.currentRoute.value.query).toEqual({})
    expect(wrapper.text()).not.toContain('Saved view “')
  })

  it('When a saved view chose samples only, then opening it also shows their project and the samples in the pickers', async () => {
    const bySamples: SavedComparisonDto = { ...SAVED, id: 14, name: 'A250 against A350', query: { sampleIds: [21, 23], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false } }
    const answer = result([group(250, values(SAMPLES[1], [612, 598, 640])), group(350, values(SAMPLES[3], [880, 905, 861]))])
    const { wrapper, requests } = await mountCompare({ path: '/compare?view=14', handlers: { 'GET /api/comparisons/14': () => jsonResponse(200, { comparison: bySamples, result: answer }) } })
    await vi.waitFor(() => expect(chosen(wrapper, 'Project')).toEqual(['KB-24 anneal series']))
    // Two samples: the first as a tag, the other collapsed into "+ 1".
    expect(selectNamed(wrapper, 'Samples').findAll('.el-select__tags-text').map((tag) => tag.text().trim())).toEqual(['KB24-A250', '+ 1'])
    expect(rows(wrapper, 'Groups').map((cells) => cells.slice(0, 2))).toEqual([
      ['250 °C', 'KB24-A250'],
      ['350 °C', 'KB24-A350'],
    ])
    expect(wrapper.text()).not.toContain('The choices above changed')

    // Comparing again asks for the same two samples.
    await getButton(wrapper, 'Compare').trigger('click')
    await flushPromises()
    expect(computeRequests(requests).map((r) => r.body)).toEqual([{ sampleIds: [21, 23], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false }])
  })

  it('When a link names a view that is gone, then the page says it could not be loaded', async () => {
    const { wrapper } = await mountCompare({ path: '/compare?view=99', handlers: { 'GET /api/comparisons/99': () => errorResponse(404, 'comparison-not-found', 'No such comparison.') } })
    const alerts = alertTexts(wrapper).join(' ')
    expect(alerts).toContain('Could not load the comparison')
    expect(alerts).toContain('No such comparison.')
  })

  it('When the lab has saved views, then each is listed with what it compares and who saved it, and its name opens it', async () => {
    const drafts: SavedComparisonDto = { ...SAVED, id: 15, name: 'Remanence with drafts', query: { projectId: 4, measure: 'remanence', groupBy: 'annealAtmosphere', includeDrafts: true }, createdBy: null }
    const { wrapper, requests } = await mountCompare({
      handlers: {
        'GET /api/comparisons': () => jsonResponse(200, [drafts, SAVED]),
        'GET /api/comparisons/12': () => jsonResponse(200, { comparison: SAVED, result: WIDTHS }),
      },
    })
    const items = savedViews(wrapper).findAll('li').map((li) => [li.get('a').text(), li.get('.compare-saved-views__what').text()])
    const date = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium' }).format(new Date(SAVED.createdAt))
    expect(items).toEqual([
      // A view whose author's account is gone names "someone".
      ['Remanence with drafts', `Remanence M/Ms by anneal atmosphere, drafts included · someone, ${date}`],
      ['KB-24 widths by anneal temperature', `Mean domain width (nm) by anneal temperature · Elena Varga, ${date}`],
    ])
    const link = savedViews(wrapper).findAll('a').find((a) => a.text() === 'KB-24 widths by anneal temperature')!
    expect(link.attributes('href')).toBe('/compare?view=12')
    await link.trigger('click')
    await vi.waitFor(() => expect(wrapper.text()).toContain('Saved view “KB-24 widths by anneal temperature”'))
    expect(requests.filter((r) => r.url === '/api/comparisons/12')).toHaveLength(1)
    expect(rows(wrapper, 'Groups')).toHaveLength(3)
  })

  it('When a reviewer looks at the saved views, then only the one they saved offers Delete', async () => {
    const marasView: SavedComparisonDto = { ...SAVED, id: 16, name: 'Mara’s period check', createdBy: MARA }
    const { wrapper } = await mountCompare({ memberships: inLab1('reviewer'), user: MARA, handlers: { 'GET /api/comparisons': () => jsonResponse(200, [marasView, SAVED]) } })
    expect(savedNames(wrapper)).toEqual(['Mara’s period check', 'KB-24 widths by anneal temperature'])
    const deletable = savedViews(wrapper).findAll('button[aria-label^="Delete "]').map((b) => b.attributes('aria-label'))
    expect(deletable).toEqual(['Delete Mara’s period check'])
  })

  it('When a PI deletes a colleague’s view and confirms, then it is deleted on the server and leaves the list', async () => {
    const marasView: SavedComparisonDto = { ...SAVED, id: 16, name: 'Mara’s period check', createdBy: MARA }
    const { wrapper, requests } = await mountCompare({
      handlers: { 'GET /api/comparisons': () => jsonResponse(200, [marasView, SAVED]), 'DELETE /api/comparisons/16': () => jsonResponse(204) },
    })
    await savedViews(wrapper).get('button[aria-label="Delete Mara’s period check"]').trigger('click')
    const box = await messageBox()
    expect(box.textContent).toContain('“Mara’s period check” disappears for everyone in the lab.')
    await pressInMessageBox('Delete')
    await vi.waitFor(() => expect(savedNames(wrapper)).toEqual(['KB-24 widths by anneal temperature']))
    expect(requests.filter((r) => r.method === 'DELETE').map((r) => r.url)).toEqual(['/api/comparisons/16'])
  })

  it('When the view on screen is deleted, then the address no longer names it, so reloading does not say "no such comparison"', async () => {
    const { wrapper } = await mountCompare({
      path: '/compare?view=12',
      handlers: {
        'GET /api/comparisons': () => jsonResponse(200, [SAVED]),
        'GET /api/comparisons/12': () => jsonResponse(200, { comparison: SAVED, result: WIDTHS }),
        'DELETE /api/comparisons/12': () => jsonResponse(204),
      },
    })
    expect(router.currentRoute.value.query).toEqual({ view: '12' })
    await savedViews(wrapper).get('button[aria-label="Delete KB-24 widths by anneal temperature"]').trigger('click')
    await pressInMessageBox('Delete')
    await vi.waitFor(() => expect(savedNames(wrapper)).toEqual([]))
    await vi.waitFor(() => expect(router.currentRoute.value.query).toEqual({}))
  })

  it('When deleting is not confirmed, then the view stays and nothing is sent', async () => {
    const { wrapper, requests } = await mountCompare({ handlers: { 'GET /api/comparisons': () => jsonResponse(200, [SAVED]) } })
    await savedViews(wrapper).get('button[aria-label="Delete KB-24 widths by anneal temperature"]').trigger('click')
    await pressInMessageBox('Keep it')
    await flushPromises()
    expect(savedNames(wrapper)).toEqual(['KB-24 widths by anneal temperature'])
    expect(requests.some((r) => r.method === 'DELETE')).toBe(false)
  })

  it('When the link of a saved view is copied, then the address that opens it goes to the clipboard', async () => {
    const writeText = vi.spyOn(navigator.clipboard, 'writeText').mockResolvedValue(undefined)
    onTestFinished(() => writeText.mockRestore())
    const { wrapper } = await mountCompare({ handlers: { 'GET /api/comparisons': () => jsonResponse(200, [SAVED]) } })
    await savedViews(wrapper).get('button[aria-label="Copy the link to KB-24 widths by anneal temperature"]').trigger('click')
    await flushPromises()
    expect(writeText).toHaveBeenCalledWith(new URL('/compare?view=12', window.location.origin).toString())
  })

  it('When the saved views cannot be loaded, then the side panel says why', async () => {
    const { wrapper } = await mountCompare({ handlers: { 'GET /api/comparisons': () => errorResponse(503, 'unavailable', 'The database is not answering.') } })
    expect(savedViews(wrapper).text()).toContain('Could not load the saved views: The database is not answering.')
  })
})

describe('CompareView, who may compare', () => {
  it.each([
    ['a microscopist', 'microscopist'],
    ['an annotator', 'annotator'],
  ] as const)('When %s opens Compare, then the page is not allowed', async (_who, role) => {
    stubApi(inLab1(role))
    router = createAppRouter(createMemoryHistory())
    await router.push('/compare')
    expect(router.currentRoute.value.name).toBe('forbidden')
    expect(router.currentRoute.value.query).toEqual({ action: 'comparison.use', from: '/compare' })
  })

  it.each([
    ['a PI', 'pi'],
    ['a lab administrator', 'admin'],
    ['a reviewer', 'reviewer'],
  ] as const)('When %s opens Compare, then the page opens', async (_who, role) => {
    stubApi(inLab1(role))
    router = createAppRouter(createMemoryHistory())
    await router.push('/compare')
    expect(router.currentRoute.value.name).toBe('compare')
  })

  it('When a person reviews in one lab and is a microscopist in another, then only the first lab’s projects can be compared', async () => {
    const memberships: LabMembershipDto[] = [
      { labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' },
      { labId: 2, labName: 'Spin Dynamics Lab', role: 'microscopist' },
    ]
    const otherLab: ProjectDto = { id: 7, labId: 2, name: 'Spin-orbit torque wedges', description: '', createdAt: '2026-09-15T12:00:00.000Z', sampleCount: 1, imageCount: 1 }
    const { wrapper } = await mountCompare({ memberships, handlers: { 'GET /api/projects': () => jsonResponse(200, [PROJECTS[0], otherLab, PROJECTS[1]]) } })
    expect(await optionsOf(wrapper, 'Project')).toEqual(['KB-24 anneal series', 'YIG garnet films'])
  })
})
