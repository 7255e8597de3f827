import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { ProjectDto } from '@shared/types/lab'
import type { LabMembershipDto } from '@shared/types/user'
import { createAppRouter } from '@/router'
import ProjectCreateDialog from '@/components/ProjectCreateDialog.vue'
import { useProjectsStore } from '@/stores/projects'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { getButton, getByLabel } from '../domQueries'

let pinia: Pinia
let router: Router

const YIG: ProjectDto = { id: 9, labId: 1, name: 'YIG garnet films', description: '', createdAt: '2026-12-03T12:00:00.000Z', sampleCount: 0, imageCount: 0 }
const DESCRIPTION = 'Ta/CoFeB/MgO films annealed from 200 to 350 °C under an in-plane field.'

const ONE_LAB: LabMembershipDto[] = [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'pi' }]
const THREE_LABS: LabMembershipDto[] = [
  { labId: 1, labName: 'Thin-Film Magnetism Group', role: 'pi' },
  { labId: 2, labName: 'Spin Dynamics Lab', role: 'microscopist' },
  { labId: 3, labName: 'Magnetic Imaging Facility', role: 'admin' },
]

type Handler = (request: RecordedRequest) => Response | Promise<Response>

/** The dialog as the projects page holds it: closed first, then opened by "New project". */
async function openDialog(create: Handler, memberships: LabMembershipDto[] = ONE_LAB) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 3, email: 'elena.varga@thin-film.example', name: 'Elena Varga', memberships, csrfToken: 't' }),
    'GET /api/projects': () => jsonResponse(200, [YIG]),
    'POST /api/projects': create,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push('/projects')
  await useProjectsStore().ensureProjects()
  const wrapper = mount(ProjectCreateDialog, {
    props: { modelValue: false, 'onUpdate:modelValue': (open: boolean) => wrapper.setProps({ modelValue: open }) },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await wrapper.setProps({ modelValue: true })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof openDialog>>['wrapper']

const posts = (requests: RecordedRequest[]) => requests.filter((r) => r.method === 'POST' && r.url === '/api/projects')
const isOpen = (wrapper: Wrapper) => wrapper.props('modelValue')
/** The messages shown under the form's fields. */
const fieldErrors = (wrapper: Wrapper) =>
  wrapper
    .findAll('.el-form-item__error')
    .map((e) => e.text())
    .filter((text) => text !== '')
/** Toasts (ElMessage) are added at the end of the body. */
const toasts = () => [...document.body.querySelectorAll('.el-message')].map((m) => m.textContent?.trim())

async function create(wrapper: Wrapper): Promise<void> {
  await getButton(wrapper, 'Create project').trigger('click')
  await flushPromises()
}

const created = (id: number, name: string, description = ''): ProjectDto => ({ id, labId: 1, name, description, createdAt: '2026-12-10T09:30:00.000Z', sampleCount: 0, imageCount: 0 })

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ProjectCreateDialog, checking the form', () => {
  it('When the name is left empty, then the form asks for one and nothing is sent', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, created(4, 'x')))
    await create(wrapper)
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['Give the project a name.']))
    expect(posts(requests)).toEqual([])
    expect(isOpen(wrapper)).toBe(true)
  })

  it('When the name is only spaces, then it counts as empty and nothing is sent', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, created(4, 'x')))
    await getByLabel(wrapper, 'Name').setValue('   ')
    await create(wrapper)
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['Give the project a name.']))
    expect(posts(requests)).toEqual([])
  })

  it('When the person may create projects in one lab only, then no lab is asked for and the project goes to that lab', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, created(4, 'KB-24 anneal series')))
    expect(wrapper.findAll('label').map((l) => l.text().trim())).toEqual(['Name', 'Description'])
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await create(wrapper)
    expect(posts(requests).map((r) => r.body)).toEqual([{ labId: 1, name: 'KB-24 anneal series', description: '' }])
  })

  it('When the person may create projects in several labs, then only those labs are offered and one must be chosen first', async () => {
    const { wrapper, requests } = await openDialog((r) => jsonResponse(201, { ...created(4, 'KB-24 anneal series'), labId: (r.body as { labId: number }).labId }), THREE_LABS)
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await create(wrapper)
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['Choose the lab this project belongs to.']))
    expect(posts(requests)).toEqual([])

    await wrapper.get('.el-select__wrapper').trigger('click')
    await flushPromises()
    const options = [...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')]
    // A microscopist in the Spin Dynamics Lab may not create projects there.
    expect(options.map((o) => o.textContent?.trim())).toEqual(['Thin-Film Magnetism Group', 'Magnetic Imaging Facility'])
    options[1].click()
    await flushPromises()
    expect(wrapper.findAll('.el-select__placeholder:not(.is-transparent)').map((p) => p.text())).toEqual(['Magnetic Imaging Facility'])

    await create(wrapper)
    expect(posts(requests).map((r) => r.body)).toEqual([{ labId: 3, name: 'KB-24 anneal series', description: '' }])
  })
})

describe('ProjectCreateDialog, creating', () => {
  it('When a name and description are given, then the trimmed name is sent, the dialog closes, the project joins the list and its page opens', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, created(4, 'KB-24 anneal series', DESCRIPTION)))
    await getByLabel(wrapper, 'Name').setValue('  KB-24 anneal series ')
    await getByLabel(wrapper, 'Description').setValue(DESCRIPTION)
    await create(wrapper)

    expect(posts(requests).map((r) => r.body)).toEqual([{ labId: 1, name: 'KB-24 anneal series', description: DESCRIPTION }])
    expect(isOpen(wrapper)).toBe(false)
    // The projects list (shared with the projects page) has it, in name order.
    expect(useProjectsStore().projects.map((p) => p.name)).toEqual(['KB-24 anneal series', 'YIG garnet films'])
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/projects/4'), { timeout: 10_000 })
  })

  it('When Cancel is pressed, then the dialog closes without sending anything, and opening it again starts from an empty form', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, created(4, 'x')))
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await getButton(wrapper, 'Cancel').trigger('click')
    await flushPromises()
    expect(isOpen(wrapper)).toBe(false)
    expect(posts(requests)).toEqual([])

    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect(getByLabel(wrapper, 'Name').element.value).toBe('')
    expect(router.currentRoute.value.fullPath).toBe('/projects')
  })
})

describe('ProjectCreateDialog, refused by the server', () => {
  it('When the server rejects a field, then its message appears at that field, the dialog stays open and nothing typed is lost', async () => {
    const { wrapper, requests } = await openDialog(() =>
      errorResponse(400, 'invalid-input', 'Invalid body — description: String must contain at most 10000 character(s)', {
        description: ['The description is too long for the record.'],
      }),
    )
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await getByLabel(wrapper, 'Description').setValue(DESCRIPTION)
    await create(wrapper)

    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['The description is too long for the record.']))
    expect(posts(requests)).toHaveLength(1)
    expect(isOpen(wrapper)).toBe(true)
    // Shown at the field, so no toast repeats it.
    expect(toasts()).toEqual([])
    expect(getByLabel(wrapper, 'Name').element.value).toBe('KB-24 anneal series')
    expect(wrapper.get('textarea').element.value).toBe(DESCRIPTION)
    expect(router.currentRoute.value.fullPath).toBe('/projects')

    // Closed and opened again, the form starts afresh, without the old message.
    await getButton(wrapper, 'Cancel').trigger('click')
    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect(fieldErrors(wrapper)).toEqual([])
    expect(wrapper.get('textarea').element.value).toBe('')
  })

  it('When a rejected field is corrected and sent again, then its message goes away and the project is created', async () => {
    let calls = 0
    const { wrapper, requests } = await openDialog(() =>
      ++calls === 1 ? errorResponse(400, 'invalid-input', 'Invalid body — name: Too long', { name: ['The name is too long.'] }) : jsonResponse(201, created(4, 'KB-24 anneal series')),
    )
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series, all films')
    await create(wrapper)
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['The name is too long.']))

    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await create(wrapper)
    expect(posts(requests).map((r) => (r.body as { name: string }).name)).toEqual(['KB-24 anneal series, all films', 'KB-24 anneal series'])
    expect(fieldErrors(wrapper)).toEqual([])
    expect(isOpen(wrapper)).toBe(false)
  })

  it('When the server names a field the form does not show (the lab, for a person in one lab), then its message is toasted rather than lost', async () => {
    const { wrapper } = await openDialog(() => errorResponse(400, 'invalid-input', 'Invalid body — labId: not a lab of yours', { labId: ['Choose one of your labs.'] }))
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await create(wrapper)

    await vi.waitFor(() => expect(toasts()).toEqual(['Invalid body — labId: not a lab of yours']))
    expect(isOpen(wrapper)).toBe(true)
    expect(getByLabel(wrapper, 'Name').element.value).toBe('KB-24 anneal series')
  })

  it('When the server refuses without naming a field, then its message is shown, the dialog stays open and nothing typed is lost', async () => {
    const { wrapper } = await openDialog(() => errorResponse(403, 'forbidden', 'Your role (microscopist) in this lab does not allow this.'))
    await getByLabel(wrapper, 'Name').setValue('KB-24 anneal series')
    await getByLabel(wrapper, 'Description').setValue(DESCRIPTION)
    await create(wrapper)

    await vi.waitFor(() => expect(toasts()).toEqual(['Your role (microscopist) in this lab does not allow this.']))
    expect(document.querySelector('.el-message')?.getAttribute('role')).toBe('alert')
    expect(isOpen(wrapper)).toBe(true)
    expect(fieldErrors(wrapper)).toEqual([])
    expect(getByLabel(wrapper, 'Name').element.value).toBe('KB-24 anneal series')
    expect(wrapper.get('textarea').element.value).toBe(DESCRIPTION)
    expect(useProjectsStore().projects.map((p) => p.name)).toEqual(['YIG garnet films'])
  })
})
