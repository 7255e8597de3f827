import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { ProjectDto, SampleSummaryDto } from '@shared/types/lab'
import { createAppRouter } from '@/router'
import SamplesView from '@/views/SamplesView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { sampleSummaryDto } from '../labDtos'
import { alertTexts, getButton } from '../domQueries'

let pinia: Pinia
let router: Router

function project(id: number, name: string, sampleCount: number): ProjectDto {
  return { id, labId: 1, name, description: '', createdAt: '2026-09-01T08:00:00.000Z', sampleCount, imageCount: 0 }
}

function sample(id: number, projectId: number, name: string, overrides: Partial<SampleSummaryDto> = {}): SampleSummaryDto {
  return sampleSummaryDto({ id, projectId, name, ...overrides })
}

const ANNEAL = project(1, 'KB-24 anneal series', 2)
const WEDGE = project(2, 'Pt/Co wedge study', 1)
const ANNEAL_SAMPLES = [sample(3, 1, 'KB24-A300', { imageCount: 2, notes: 'Cleaved from the wafer centre.' }), sample(4, 1, 'KB24-A350', { annealTemperatureC: 350 })]
const WEDGE_SAMPLES = [sample(7, 2, 'PW-07', { material: 'Pt/Co/Pt', annealTemperatureC: null, annealDurationMin: null, annealAtmosphere: '', annealFieldMT: null })]

type Handlers = Parameters<typeof stubFetch>[0]

async function mountSamples(handlers: Handlers, role: LabRole = 'microscopist') {
  const requests = stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, { id: 4, email: 'priya.raman@kestrel-lab.example', name: 'Priya Raman', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    ...handlers,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push('/samples')
  const wrapper = mount(SamplesView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

const bothProjects: Handlers = {
  'GET /api/projects': () => jsonResponse(200, [ANNEAL, WEDGE]),
  'GET /api/projects/1/samples': () => jsonResponse(200, ANNEAL_SAMPLES),
  'GET /api/projects/2/samples': () => jsonResponse(200, WEDGE_SAMPLES),
}

type Wrapper = Awaited<ReturnType<typeof mountSamples>>['wrapper']

/** The table's rows as the cells' texts. */
function rows(wrapper: Wrapper): string[][] {
  return wrapper.findAll('.el-table__body-wrapper tbody tr').map((row) => row.findAll('td').map((cell) => cell.text().trim()))
}

/** The names in the Sample column (fixed, so shown first), in the order shown. */
function sampleNames(wrapper: Wrapper): string[] {
  return wrapper.findAll('.el-table__body-wrapper tbody tr').map((row) => row.get('td a').text().trim())
}

/** Choose an entry of the Project select as a person would: open it and click the option. */
async function chooseProject(wrapper: Wrapper, name: string) {
  await wrapper.get('.samples__filter .el-select__wrapper').trigger('click')
  await flushPromises()
  const option = [...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')].find((item) => item.textContent?.trim() === name)
  if (!option) throw new Error(`No option "${name}"`)
  option.click()
  await flushPromises()
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SamplesView', () => {
  it('When the labs have projects with samples, then every sample is listed with its project and anneal conditions, and asks for each project once', async () => {
    const { wrapper, requests } = await mountSamples(bothProjects)

    expect(requests.filter((r) => r.url !== '/api/auth/me').map((r) => `${r.method} ${r.url}`).sort()).toEqual([
      'GET /api/projects',
      'GET /api/projects/1/samples',
      'GET /api/projects/2/samples',
    ])
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350', 'PW-07'])
    const [first, , unannealed] = rows(wrapper)
    expect(first[0]).toBe('KB24-A300Cleaved from the wafer centre.')
    expect(first.slice(1, 10)).toEqual(['KB-24 anneal series', 'Ta/CoFeB/MgO', '1.1', 'Si / 100 nm SiO2', '300', '60', 'vacuum', '600', '2'])
    // Not annealed is shown as a dash, not as zero.
    expect(unannealed).toEqual(['PW-07', 'Pt/Co wedge study', 'Pt/Co/Pt', '1.1', 'Si / 100 nm SiO2', '—', '—', '—', '—', '0'])
    expect(alertTexts(wrapper)).toEqual([])
  })

  it('When a sample is listed, then its name opens the sample, its project opens the project, and its image count opens its images', async () => {
    const { wrapper } = await mountSamples(bothProjects)
    const links = wrapper.findAll('.el-table__body-wrapper a')
    const href = (text: string) => links.find((a) => a.text().trim() === text)?.attributes('href')
    expect(href('KB24-A300')).toBe('/samples/3')
    expect(href('PW-07')).toBe('/samples/7')
    expect(href('Pt/Co wedge study')).toBe('/projects/2')
    const images = wrapper.get('a[aria-label="2 images of KB24-A300"]')
    expect(images.attributes('href')).toBe('/images?projectId=1&sampleId=3')
    // A sample without images offers no link to an empty list.
    expect(wrapper.find('a[aria-label$="of KB24-A350"]').exists()).toBe(false)

    await links.find((a) => a.text().trim() === 'KB24-A350')!.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/samples/4'), { timeout: 10_000 })
  })

  it('When a project is chosen in the filter, then only its samples are listed, and clearing it lists all again without asking again', async () => {
    const { wrapper, requests } = await mountSamples(bothProjects)
    const asked = requests.length

    await chooseProject(wrapper, 'Pt/Co wedge study')
    expect(wrapper.get('.samples__filter .el-select__placeholder:not(.is-transparent)').text()).toBe('Pt/Co wedge study')
    expect(sampleNames(wrapper)).toEqual(['PW-07'])

    await chooseProject(wrapper, 'KB-24 anneal series')
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350'])

    await wrapper.get('.samples__filter .el-select__wrapper').trigger('mouseenter')
    await wrapper.get('.samples__filter .el-select__clear').trigger('click')
    await flushPromises()
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350', 'PW-07'])
    expect(requests.length).toBe(asked)
  })

  it('When the chosen project has no samples, then the table says so and points to the project page', async () => {
    const { wrapper } = await mountSamples({ ...bothProjects, 'GET /api/projects/2/samples': () => jsonResponse(200, []) })
    await chooseProject(wrapper, 'Pt/Co wedge study')
    expect(rows(wrapper)).toEqual([])
    expect(wrapper.text()).toContain('No samples in this selection yet. Open a project to add one.')
  })

  it('When the labs have no projects yet, then the page says samples are recorded inside a project and asks for no samples', async () => {
    const { wrapper, requests } = await mountSamples({ 'GET /api/projects': () => jsonResponse(200, []) })
    expect(rows(wrapper)).toEqual([])
    expect(wrapper.text()).toContain('No projects yet, so no samples. Samples are recorded inside a project.')
    expect(requests.some((r) => /\/samples$/.test(r.url))).toBe(false)
  })

  it.each(['pi', 'annotator'] as const)('When a person with the role "%s" looks at the list, then it is the same read-only list: samples are edited on their project page', async (role) => {
    const { wrapper } = await mountSamples(bothProjects, role)
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350', 'PW-07'])
    expect(wrapper.findAll('th').map((th) => th.text())).not.toContain('Actions')
    expect(wrapper.findAll('button').some((b) => b.text().trim() === 'Edit')).toBe(false)
    expect(wrapper.text()).toContain('Samples are added and edited on their project\'s page.')
  })

  it('When the projects fail to load, then the page says so, and Retry asks again and lists the samples', async () => {
    let calls = 0
    const { wrapper, requests } = await mountSamples({
      ...bothProjects,
      'GET /api/projects': () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, [ANNEAL, WEDGE])),
    })
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the projects')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect(wrapper.find('.el-table').exists()).toBe(false)

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(calls).toBe(2)
    expect(requests.filter((r) => /\/samples$/.test(r.url)).map((r) => r.url).sort()).toEqual(['/api/projects/1/samples', '/api/projects/2/samples'])
    expect(alertTexts(wrapper)).toEqual([])
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350', 'PW-07'])
  })

  it('When one project’s samples fail to load, then the others are still listed, and Retry asks again for that project only', async () => {
    let calls = 0
    const { wrapper, requests } = await mountSamples({
      ...bothProjects,
      'GET /api/projects/2/samples': () => (++calls === 1 ? errorResponse(502, 'bad-gateway', 'The server did not answer in time.') : jsonResponse(200, WEDGE_SAMPLES)),
    })
    expect(alertTexts(wrapper)).toHaveLength(1)
    expect(alertTexts(wrapper)[0]).toContain('Could not load the samples of Pt/Co wedge study')
    expect(alertTexts(wrapper)[0]).toContain('The server did not answer in time.')
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350'])

    const before = requests.length
    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(requests.slice(before).map((r) => `${r.method} ${r.url}`)).toEqual(['GET /api/projects/2/samples'])
    expect(alertTexts(wrapper)).toEqual([])
    expect(sampleNames(wrapper)).toEqual(['KB24-A300', 'KB24-A350', 'PW-07'])
  })
})
