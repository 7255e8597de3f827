import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabMembershipDto } from '@shared/types/user'
import type { ProjectDto, SampleSummaryDto } from '@shared/types/lab'
import type { DeletionReceiptDto } from '@shared/types/deletion'
import { createAppRouter } from '@/router'
import ProjectDetailView from '@/views/ProjectDetailView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton, pressInMessageBox } from '../domQueries'

let pinia: Pinia

const PROJECT: ProjectDto = {
  id: 4,
  labId: 1,
  name: 'KB-24 anneal series',
  description: 'Ta/CoFeB/MgO films annealed from 250 to 400 °C under an in-plane field.',
  createdAt: '2026-11-01T12:00:00.000Z',
  sampleCount: 2,
  imageCount: 5,
}

function sample(id: number, name: string, annealTemperatureC: number | null, imageCount: number): SampleSummaryDto {
  return {
    id,
    projectId: PROJECT.id,
    name,
    material: 'Ta/CoFeB/MgO (perpendicular)',
    thicknessNm: 1.1,
    substrate: 'Si / 100 nm SiO2',
    annealTemperatureC,
    annealDurationMin: annealTemperatureC === null ? null : 60,
    annealAtmosphere: annealTemperatureC === null ? '' : 'vacuum',
    annealFieldMT: annealTemperatureC === null ? null : 600,
    notes: '',
    imageCount,
  }
}

const SAMPLES = [sample(11, 'KB24-A300', 300, 5), sample(12, 'KB24-AD', null, 0)]

const inLab1 = (role: LabMembershipDto['role']): LabMembershipDto[] => [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }]

interface Answers {
  memberships?: LabMembershipDto[]
  projects?: () => Response
  samples?: () => Response
  extra?: Record<string, () => Response>
}

async function mountProject(answers: Answers = {}, projectId = PROJECT.id) {
  const requests = stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, { id: 5, email: 'priya@thin-film.example', name: 'Priya Raman', memberships: answers.memberships ?? inLab1('pi'), csrfToken: 't' }),
    'GET /api/projects': answers.projects ?? (() => jsonResponse(200, [PROJECT])),
    [`GET /api/projects/${PROJECT.id}/samples`]: answers.samples ?? (() => jsonResponse(200, SAMPLES)),
    ...answers.extra,
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push(`/projects/${projectId}`)
  const wrapper = mount(ProjectDetailView, { props: { projectId }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, router, requests }
}

const buttonTexts = (wrapper: Awaited<ReturnType<typeof mountProject>>['wrapper']) => wrapper.findAll('button').map((b) => b.text().trim())

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ProjectDetailView, the loaded project', () => {
  it('When the project opens, then its name, description and samples are shown, and the sample links lead to each sample and its images', async () => {
    const { wrapper, requests } = await mountProject()
    expect(requests.some((r) => r.method === 'GET' && r.url === `/api/projects/${PROJECT.id}/samples`)).toBe(true)
    expect(wrapper.get('h1').text()).toBe('KB-24 anneal series')
    expect(wrapper.text()).toContain('Ta/CoFeB/MgO films annealed from 250 to 400 °C under an in-plane field.')

    const names = wrapper.findAll('a').filter((a) => a.attributes('href')?.startsWith('/samples/'))
    expect(names.map((a) => [a.text(), a.attributes('href')])).toEqual([
      ['KB24-A300', '/samples/11'],
      ['KB24-AD', '/samples/12'],
    ])
    const imagesOfSample = wrapper.get('a[aria-label="5 images of KB24-A300"]')
    expect(imagesOfSample.text()).toBe('5')
    expect(imagesOfSample.attributes('href')).toBe('/images?projectId=4&sampleId=11')
    // A sample without images offers no link to an empty list.
    expect(wrapper.find('a[aria-label$="of KB24-AD"]').exists()).toBe(false)
  })

  it('When "Images" is pressed, then the image list of this project opens', async () => {
    const { wrapper, router } = await mountProject({ memberships: inLab1('annotator') })
    await getButton(wrapper, 'Images').trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('images'), { timeout: 10_000 })
    expect(router.currentRoute.value.query).toEqual({ projectId: '4' })
  })

  it('When "All projects" is followed, then the project list opens', async () => {
    const { wrapper, router } = await mountProject()
    const back = wrapper.findAll('a').find((a) => a.text().trim() === 'All projects')!
    expect(back.attributes('href')).toBe('/projects')
    await back.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/projects'), { timeout: 10_000 })
  })

  it('When the project has no description, then the page says so', async () => {
    const { wrapper } = await mountProject({ projects: () => jsonResponse(200, [{ ...PROJECT, description: '' }]) })
    expect(wrapper.get('.rm-page-lead').text()).toBe('No description.')
  })
})

describe('ProjectDetailView, empty and missing', () => {
  it('When a microscopist opens a project without samples, then the empty table tells them to use "Add sample"', async () => {
    const { wrapper } = await mountProject({ memberships: inLab1('microscopist'), samples: () => jsonResponse(200, []) })
    expect(wrapper.text()).toContain('No samples yet. Use “Add sample” to record a film and its anneal conditions.')
    expect(buttonTexts(wrapper)).toContain('Add sample')
  })

  it('When a reviewer opens a project without samples, then the empty table says who adds them', async () => {
    const { wrapper } = await mountProject({ memberships: inLab1('reviewer'), samples: () => jsonResponse(200, []) })
    expect(wrapper.text()).toContain('No samples yet. A microscopist, PI or lab administrator adds them.')
    expect(wrapper.text()).not.toContain('Use “Add sample”')
  })

  it('When the project is not among the labs\' projects, then "Project not found" is shown with a way back to all projects', async () => {
    const { wrapper, router } = await mountProject({ extra: { 'GET /api/projects/99/samples': () => errorResponse(404, 'not-found', 'No such project.') } }, 99)
    expect(wrapper.text()).toContain('Project not found')
    expect(wrapper.find('h1').exists()).toBe(false)
    expect(buttonTexts(wrapper)).not.toContain('Images')
    await getButton(wrapper, 'All projects').trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('projects'), { timeout: 10_000 })
  })
})

describe('ProjectDetailView, failed loads', () => {
  it('When the projects fail to load, then the page says the project could not be loaded and Retry asks again', async () => {
    let calls = 0
    const { wrapper } = await mountProject({
      projects: () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, [PROJECT])),
    })
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the project')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect(wrapper.find('h1').exists()).toBe(false)

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(calls).toBe(2)
    expect(alertTexts(wrapper)).toEqual([])
    expect(wrapper.get('h1').text()).toBe('KB-24 anneal series')
  })

  it('When the samples fail to load, then the project stays shown, the samples section says so and Retry asks for the samples again', async () => {
    let calls = 0
    const { wrapper, requests } = await mountProject({
      samples: () => (++calls === 1 ? errorResponse(502, 'bad-gateway', 'The gateway gave up.') : jsonResponse(200, SAMPLES)),
    })
    expect(wrapper.get('h1').text()).toBe('KB-24 anneal series')
    expect(alertTexts(wrapper).join(' ')).toContain('Could not load the samples')
    expect(alertTexts(wrapper).join(' ')).toContain('The gateway gave up.')

    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(requests.filter((r) => r.url === `/api/projects/${PROJECT.id}/samples`)).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
    expect(wrapper.text()).toContain('KB24-A300')
  })

  it('When the samples are refused for good (403), then no Retry is offered', async () => {
    const { wrapper } = await mountProject({ samples: () => errorResponse(403, 'forbidden', 'You may not see this project.') })
    expect(alertTexts(wrapper).join(' ')).toContain('You may not see this project.')
    expect(buttonTexts(wrapper)).not.toContain('Retry')
  })
})

describe('ProjectDetailView, what each role may do', () => {
  it('When a PI opens the project, then Images, Annotation progress, Add sample and Delete project are offered, and each sample can be edited', async () => {
    const { wrapper } = await mountProject({ memberships: inLab1('pi') })
    const buttons = buttonTexts(wrapper)
    expect(buttons).toEqual(expect.arrayContaining(['Images', 'Annotation progress', 'Add sample', 'Delete project']))
    expect(buttons.filter((b) => b === 'Edit')).toHaveLength(2)
  })

  it('When a microscopist opens the project, then they may add and edit samples and see progress, but not delete the project', async () => {
    const { wrapper } = await mountProject({ memberships: inLab1('microscopist') })
    const buttons = buttonTexts(wrapper)
    expect(buttons).toEqual(expect.arrayContaining(['Images', 'Annotation progress', 'Add sample']))
    expect(buttons).not.toContain('Delete project')
    expect(buttons.filter((b) => b === 'Edit')).toHaveLength(2)
  })

  it('When an annotator opens the project, then only Images is offered and samples cannot be edited', async () => {
    const { wrapper } = await mountProject({ memberships: inLab1('annotator') })
    const buttons = buttonTexts(wrapper)
    expect(buttons).toContain('Images')
    expect(buttons).not.toContain('Annotation progress')
    expect(buttons).not.toContain('Add sample')
    expect(buttons).not.toContain('Delete project')
    expect(buttons).not.toContain('Edit')
    expect(wrapper.findAll('th').map((th) => th.text())).not.toContain('Actions')
  })

  it("When a person is a PI in another lab but a reviewer in the project's lab, then the project's role decides: only Images", async () => {
    const { wrapper } = await mountProject({
      memberships: [
        { labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' },
        { labId: 2, labName: 'Spin Dynamics Lab', role: 'pi' },
      ],
    })
    const buttons = buttonTexts(wrapper)
    expect(buttons).toContain('Images')
    expect(buttons).not.toContain('Annotation progress')
    expect(buttons).not.toContain('Add sample')
    expect(buttons).not.toContain('Delete project')
  })

  it('When a PI presses "Add sample", then the sample form opens', async () => {
    const { wrapper } = await mountProject({ memberships: inLab1('pi'), extra: { 'GET /api/labs/1/materials': () => jsonResponse(200, []) } })
    await getButton(wrapper, 'Add sample').trigger('click')
    await flushPromises()
    const dialog = document.querySelector<HTMLElement>('.el-dialog')
    expect(dialog).not.toBeNull()
    expect(dialog!.textContent).toContain('Add sample')
  })
})

describe('ProjectDetailView, deleting the project', () => {
  const receipt: DeletionReceiptDto = {
    kind: 'project',
    id: PROJECT.id,
    name: PROJECT.name,
    deletedAt: '2026-11-20T09:00:00.000Z',
    purgeAfter: '2026-12-20T09:00:00.000Z',
    imageCount: 5,
  }

  it('When a PI confirms "Delete project", then the delete is sent and the project list opens', async () => {
    const { wrapper, router, requests } = await mountProject({
      memberships: inLab1('pi'),
      extra: {
        'GET /api/deletion-policy': () => jsonResponse(200, { retentionDays: 30 }),
        [`DELETE /api/projects/${PROJECT.id}`]: () => jsonResponse(200, receipt),
      },
    })
    await getButton(wrapper, 'Delete project').trigger('click')
    await vi.waitFor(() => expect(document.querySelector('.el-message-box')?.textContent).toContain('Project “KB-24 anneal series” with all its images moves to Deleted items'))
    expect(document.querySelector('.el-message-box')?.textContent).toContain('30 days')
    await pressInMessageBox('Delete')

    expect(requests.filter((r) => r.method === 'DELETE').map((r) => r.url)).toEqual([`/api/projects/${PROJECT.id}`])
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('projects'), { timeout: 10_000 })
  })

  it('When the PI cancels the confirmation, then nothing is deleted and the project stays open', async () => {
    const { wrapper, router, requests } = await mountProject({
      memberships: inLab1('pi'),
      extra: { 'GET /api/deletion-policy': () => jsonResponse(200, { retentionDays: 30 }) },
    })
    await getButton(wrapper, 'Delete project').trigger('click')
    await pressInMessageBox('Cancel')
    expect(requests.some((r) => r.method === 'DELETE')).toBe(false)
    expect(router.currentRoute.value.fullPath).toBe(`/projects/${PROJECT.id}`)
  })
})
