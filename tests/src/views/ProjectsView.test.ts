import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabMembershipDto } from '@shared/types/user'
import type { ProjectDto } from '@shared/types/lab'
import { createAppRouter } from '@/router'
import ProjectsView from '@/views/ProjectsView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'

let pinia: Pinia

const PROJECTS: ProjectDto[] = [
  {
    id: 4,
    labId: 1,
    name: 'KB-24 anneal series',
    description: 'Ta/CoFeB/MgO films annealed from 250 to 400 °C under an in-plane field.',
    createdAt: '2026-11-01T12:00:00.000Z',
    sampleCount: 6,
    imageCount: 17,
  },
  { id: 7, labId: 2, name: 'Pt/Co/Ir skyrmion stacks', description: '', createdAt: '2026-09-15T12:00:00.000Z', sampleCount: 1, imageCount: 1 },
  { id: 9, labId: 1, name: 'YIG garnet films', description: 'Waiting for the first films.', createdAt: '2026-12-03T12:00:00.000Z', sampleCount: 0, imageCount: 0 },
]

const inLab1 = (role: LabMembershipDto['role']): LabMembershipDto[] => [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }]
const TWO_LABS: LabMembershipDto[] = [
  { labId: 1, labName: 'Thin-Film Magnetism Group', role: 'microscopist' },
  { labId: 2, labName: 'Spin Dynamics Lab', role: 'annotator' },
]

async function mountProjects(memberships: LabMembershipDto[], projects: () => Response | Promise<Response>) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 5, email: 'priya@thin-film.example', name: 'Priya Raman', memberships, csrfToken: 't' }),
    'GET /api/projects': projects,
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/projects')
  const wrapper = mount(ProjectsView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, router, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountProjects>>['wrapper']

const headers = (wrapper: Wrapper) => wrapper.findAll('th').map((th) => th.text().trim())
/** The rows of the table, each as the texts of its cells. */
const rows = (wrapper: Wrapper) => wrapper.findAll('tbody tr').map((row) => row.findAll('td').map((cell) => cell.text().trim()))
const buttonTexts = (wrapper: Wrapper) => wrapper.findAll('button').map((b) => b.text().trim())

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ProjectsView, the list', () => {
  it('When the projects load, then each is listed with its description, sample count, image count and creation date', async () => {
    const { wrapper, requests } = await mountProjects(inLab1('pi'), () => jsonResponse(200, [PROJECTS[0], PROJECTS[2]]))
    expect(requests.filter((r) => r.url === '/api/projects')).toHaveLength(1)
    expect(wrapper.get('h1').text()).toBe('Projects')
    expect(headers(wrapper)).toEqual(['Project', 'Samples', 'Images', 'Created'])

    const [kb24, yig] = rows(wrapper)
    expect(kb24[0]).toContain('KB-24 anneal series')
    expect(kb24[0]).toContain('Ta/CoFeB/MgO films annealed from 250 to 400 °C under an in-plane field.')
    expect(kb24.slice(1, 3)).toEqual(['6', '17'])
    // The date of creation, written in the reader's locale (e.g. "Nov 1, 2026").
    expect(kb24[3]).toBe(new Date(PROJECTS[0].createdAt).toLocaleDateString(undefined, { year: 'numeric', month: 'short', day: 'numeric' }))
    expect(yig[0]).toContain('YIG garnet films')
    expect(yig.slice(1, 3)).toEqual(['0', '0'])
  })

  it('When a project name is followed, then its project page opens', async () => {
    const { wrapper, router } = await mountProjects(inLab1('annotator'), () => jsonResponse(200, [PROJECTS[0]]))
    const link = wrapper.findAll('a').find((a) => a.text() === 'KB-24 anneal series')!
    expect(link.attributes('href')).toBe('/projects/4')
    await link.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/projects/4'), { timeout: 10_000 })
  })

  it('When a project has images, then its image count links to the image list of that project, named for a screen reader', async () => {
    const { wrapper, router } = await mountProjects(TWO_LABS, () => jsonResponse(200, PROJECTS))
    const many = wrapper.get('a[aria-label="17 images of KB-24 anneal series"]')
    expect([many.text(), many.attributes('href')]).toEqual(['17', '/images?projectId=4'])
    const one = wrapper.get('a[aria-label="1 image of Pt/Co/Ir skyrmion stacks"]')
    expect([one.text(), one.attributes('href')]).toEqual(['1', '/images?projectId=7'])
    // No link to an empty list.
    expect(wrapper.find('a[aria-label$="of YIG garnet films"]').exists()).toBe(false)

    await many.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('images'), { timeout: 10_000 })
    expect(router.currentRoute.value.query).toEqual({ projectId: '4' })
  })

  it('When the person is in one lab only, then no Lab column is shown', async () => {
    const { wrapper } = await mountProjects(inLab1('pi'), () => jsonResponse(200, [PROJECTS[0]]))
    expect(headers(wrapper)).not.toContain('Lab')
  })

  it('When the person is in two labs, then each project names its lab', async () => {
    const { wrapper } = await mountProjects(TWO_LABS, () => jsonResponse(200, PROJECTS))
    expect(headers(wrapper)).toEqual(['Project', 'Lab', 'Samples', 'Images', 'Created'])
    const listed = rows(wrapper)
    expect(listed.map((cells) => cells[1])).toEqual(['Thin-Film Magnetism Group', 'Spin Dynamics Lab', 'Thin-Film Magnetism Group'])
    expect(listed.map((cells) => cells[0])).toEqual([
      expect.stringContaining('KB-24 anneal series'),
      expect.stringContaining('Pt/Co/Ir skyrmion stacks'),
      expect.stringContaining('YIG garnet films'),
    ])
  })
})

describe('ProjectsView, empty and failed', () => {
  it('When a PI has no projects yet, then the empty list points to "New project"', async () => {
    const { wrapper } = await mountProjects(inLab1('pi'), () => jsonResponse(200, []))
    expect(wrapper.text()).toContain('No projects yet. Start one with “New project” to record samples and their anneal conditions.')
  })

  it('While the projects are loading, then the table does not claim there are none yet', async () => {
    let answer: (response: Response) => void = () => {}
    const { wrapper } = await mountProjects(inLab1('pi'), () => new Promise<Response>((resolve) => (answer = resolve)))
    expect(wrapper.text()).not.toContain('No projects yet')
    answer(jsonResponse(200, []))
    await flushPromises()
    expect(wrapper.text()).toContain('No projects yet')
  })

  it('When a microscopist has no projects yet, then the empty list says who creates them', async () => {
    const { wrapper } = await mountProjects(inLab1('microscopist'), () => jsonResponse(200, []))
    expect(wrapper.text()).toContain('No projects yet. A PI or lab administrator creates projects; they will appear here.')
    expect(wrapper.text()).not.toContain('Start one with')
  })

  it('When the projects fail to load, then the page says so and Retry asks again and shows the list', async () => {
    let calls = 0
    const { wrapper, requests } = await mountProjects(inLab1('pi'), () =>
      ++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, [PROJECTS[0]]),
    )
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the projects')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect(wrapper.find('table').exists()).toBe(false)

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(requests.filter((r) => r.url === '/api/projects')).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
    expect(rows(wrapper)[0][0]).toContain('KB-24 anneal series')
  })
})

describe('ProjectsView, who may create projects', () => {
  it('When a PI opens the list, then "New project" is offered and opens the new-project form', async () => {
    const { wrapper } = await mountProjects(inLab1('pi'), () => jsonResponse(200, [PROJECTS[0]]))
    await getButton(wrapper, 'New project').trigger('click')
    await flushPromises()
    const dialog = document.querySelector<HTMLElement>('.el-dialog')
    expect(dialog?.textContent).toContain('New project')
  })

  it('When a lab administrator opens the list, then "New project" is offered', async () => {
    const { wrapper } = await mountProjects(inLab1('admin'), () => jsonResponse(200, [PROJECTS[0]]))
    expect(buttonTexts(wrapper)).toContain('New project')
  })

  it.each([
    ['a microscopist', 'microscopist'],
    ['an annotator', 'annotator'],
    ['a reviewer', 'reviewer'],
  ] as const)('When %s opens the list, then "New project" is not offered', async (_who, role) => {
    const { wrapper } = await mountProjects(inLab1(role), () => jsonResponse(200, [PROJECTS[0]]))
    expect(wrapper.text()).toContain('KB-24 anneal series')
    expect(buttonTexts(wrapper)).not.toContain('New project')
  })
})
