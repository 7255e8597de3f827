import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabMembershipDto } from '@shared/types/user'
import type { LabDto, ProjectDto } from '@shared/types/lab'
import { createAppRouter } from '@/router'
import OverviewView from '@/views/OverviewView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'

let pinia: Pinia

const LABS: LabDto[] = [
  { id: 1, name: 'Thin-Film Magnetism Group', institution: 'Northfield Institute of Materials' },
  { id: 2, name: 'Spin Dynamics Lab', institution: '' },
]

const TWO_MEMBERSHIPS: LabMembershipDto[] = [
  { labId: 1, labName: 'Thin-Film Magnetism Group', role: 'pi' },
  { labId: 2, labName: 'Spin Dynamics Lab', role: 'reviewer' },
]

function project(id: number, labId: number, name: string, sampleCount: number, imageCount: number): ProjectDto {
  return { id, labId, name, description: '', createdAt: '2026-11-01T12:00:00.000Z', sampleCount, imageCount }
}

const PROJECTS = [project(4, 1, 'KB-24 anneal series', 6, 1200), project(7, 2, 'Pt/Co/Ir skyrmion stacks', 3, 34), project(9, 1, 'YIG garnet films', 0, 0)]

interface Answers {
  memberships?: LabMembershipDto[]
  projects?: () => Response | Promise<Response>
  labs?: () => Response
}

async function mountOverview(answers: Answers = {}) {
  const requests = stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, { id: 5, email: 'priya@thin-film.example', name: 'Priya Raman', memberships: answers.memberships ?? TWO_MEMBERSHIPS, csrfToken: 't' }),
    'GET /api/labs': answers.labs ?? (() => jsonResponse(200, LABS)),
    'GET /api/projects': answers.projects ?? (() => jsonResponse(200, PROJECTS)),
    'GET /api/queue': () => jsonResponse(200, []),
    'GET /api/reviews/count': () => jsonResponse(200, { status: 'submitted', count: 0 }),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/')
  const wrapper = mount(OverviewView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, router, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountOverview>>['wrapper']

const labsSection = (wrapper: Wrapper) => wrapper.get('section[aria-labelledby="overview-labs"]')
const countsSection = (wrapper: Wrapper) => wrapper.get('section[aria-labelledby="overview-counts"]')
/** Each lab as [name, institution, role], as its line shows them. */
const labLines = (wrapper: Wrapper) =>
  labsSection(wrapper)
    .findAll('li')
    .map((li) => [li.get('strong').text(), li.find('.rm-muted').exists() ? li.get('.rm-muted').text().replace(/^·\s*/, '') : null, li.get('.el-tag').text()])
/** Each count card as [title, value, link]. */
const counts = (wrapper: Wrapper) =>
  countsSection(wrapper)
    .findAll('a')
    .map((a) => [a.find('.el-statistic__head').text().trim(), a.find('.el-statistic__content').text().trim(), a.attributes('href')])

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('OverviewView, who and where', () => {
  it('When the overview opens, then it greets the person by first name', async () => {
    const { wrapper } = await mountOverview()
    expect(wrapper.get('h1').text()).toBe('Welcome, Priya')
  })

  it('When the person is in two labs, then each lab is listed with its institution (where known) and the role held there', async () => {
    const { wrapper, requests } = await mountOverview()
    expect(requests.some((r) => r.url === '/api/labs')).toBe(true)
    expect(labLines(wrapper)).toEqual([
      ['Thin-Film Magnetism Group', 'Northfield Institute of Materials', 'Principal investigator'],
      ['Spin Dynamics Lab', null, 'Reviewer'],
    ])
    // Read as one line, the role is set off from the institution (the tag's gap is only visual).
    expect(labsSection(wrapper).findAll('li').map((li) => li.text().replace(/\s+/g, ' '))).toEqual([
      'Thin-Film Magnetism Group · Northfield Institute of Materials, as Principal investigator',
      'Spin Dynamics Lab, as Reviewer',
    ])
  })

  it('When the lab details fail to load, then the labs are still listed with their roles, without institutions', async () => {
    const { wrapper } = await mountOverview({ labs: () => errorResponse(503, 'unavailable', 'The database is not answering.') })
    expect(labLines(wrapper)).toEqual([
      ['Thin-Film Magnetism Group', null, 'Principal investigator'],
      ['Spin Dynamics Lab', null, 'Reviewer'],
    ])
    expect(alertTexts(wrapper)).toEqual([])
  })

  it('When the person is in no lab, then the overview says who can add them and shows zero counts', async () => {
    const { wrapper } = await mountOverview({ memberships: [], labs: () => jsonResponse(200, []), projects: () => jsonResponse(200, []) })
    expect(labsSection(wrapper).findAll('li')).toHaveLength(0)
    expect(labsSection(wrapper).text()).toContain('You are not a member of any lab yet. A lab administrator or PI can add you.')
    expect(counts(wrapper).map(([title, value]) => [title, value])).toEqual([
      ['Projects', '0'],
      ['Samples', '0'],
      ['Images', '0'],
    ])
    // Nothing to do yet: no "Up next" cards.
    expect(wrapper.find('section[aria-labelledby="overview-next"]').exists()).toBe(false)
  })
})

describe('OverviewView, what is in the labs', () => {
  it('When the projects load, then the projects, samples and images of all labs are counted, each linking to its list', async () => {
    const { wrapper } = await mountOverview()
    expect(counts(wrapper)).toEqual([
      ['Projects', '3', '/projects'],
      ['Samples', '9', '/samples'],
      ['Images', '1,234', '/images'],
    ])
  })

  it('When the Images count is followed, then the image list opens', async () => {
    const { wrapper, router } = await mountOverview()
    const images = countsSection(wrapper).findAll('a').find((a) => a.text().includes('Images'))!
    await images.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('images'), { timeout: 10_000 })
  })

  it('While the projects are loading, then no counts are shown yet', async () => {
    let answer!: (response: Response) => void
    const { wrapper } = await mountOverview({ projects: () => new Promise<Response>((resolve) => (answer = resolve)) })
    expect(countsSection(wrapper).find('.el-skeleton').exists()).toBe(true)
    expect(countsSection(wrapper).findAll('a')).toHaveLength(0)

    answer(jsonResponse(200, PROJECTS))
    await flushPromises()
    expect(countsSection(wrapper).find('.el-skeleton').exists()).toBe(false)
    expect(counts(wrapper).map(([title, value]) => [title, value])[0]).toEqual(['Projects', '3'])
  })

  it('When the counts fail to load, then the section says so, the rest of the page stays, and Retry asks again', async () => {
    let calls = 0
    const { wrapper, requests } = await mountOverview({
      projects: () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, PROJECTS)),
    })
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the project counts')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect(countsSection(wrapper).findAll('a')).toHaveLength(0)
    expect(labLines(wrapper)).toHaveLength(2)
    expect(wrapper.text()).toContain('Lab safety')

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(requests.filter((r) => r.url === '/api/projects')).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
    expect(counts(wrapper).map(([title]) => title)).toEqual(['Projects', 'Samples', 'Images'])
  })
})

describe('OverviewView, by role', () => {
  it('When an annotator opens the overview, then "Up next" offers their frames, not uploading or comparing', async () => {
    const { wrapper } = await mountOverview({ memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'annotator' }] })
    const next = wrapper.get('section[aria-labelledby="overview-next"]')
    const links = next.findAll('a').map((a) => a.attributes('href'))
    expect(links).toEqual(['/queue'])
    expect(labLines(wrapper)).toEqual([['Thin-Film Magnetism Group', 'Northfield Institute of Materials', 'Annotator']])
  })

  it('When a microscopist opens the overview, then "Up next" offers uploading and no review or comparison', async () => {
    const { wrapper, requests } = await mountOverview({ memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'microscopist' }] })
    const next = wrapper.get('section[aria-labelledby="overview-next"]')
    expect(next.findAll('a').map((a) => a.attributes('href'))).toEqual(['/images/upload'])
    // Neither a frame queue nor a review count is asked for a role that has neither.
    expect(requests.some((r) => r.url.startsWith('/api/queue') || r.url.startsWith('/api/reviews'))).toBe(false)
  })
})
