import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabMemberDto } from '@shared/types/user'
import ImageAssignDialog from '@/components/ImageAssignDialog.vue'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'

let pinia: Pinia

const LAB_ID = 1
const PRIYA = 8
/** The lab's people: two active annotators, one deactivated, and members of other roles. */
const MEMBERS: LabMemberDto[] = [
  { userId: 7, name: 'Elena Varga', email: 'elena.varga@thin-film.example', role: 'pi', active: true },
  { userId: PRIYA, name: 'Priya Raman', email: 'priya.raman@thin-film.example', role: 'annotator', active: true },
  { userId: 4, name: 'Tobias Lindgren', email: 'tobias.lindgren@thin-film.example', role: 'microscopist', active: true },
  { userId: 9, name: 'Noor Haddad', email: 'noor.haddad@thin-film.example', role: 'annotator', active: false },
  { userId: 11, name: 'Nadia Kowalski', email: 'nadia.kowalski@thin-film.example', role: 'annotator', active: true },
]

type Handler = (request: RecordedRequest) => Response | Promise<Response>

/** The dialog as the image list holds it: closed first, then opened for the selected images. */
async function openDialog(assign: Handler, options: { imageIds?: number[]; members?: Handler } = {}) {
  const requests = stubFetch({
    [`GET /api/labs/${LAB_ID}/members`]: options.members ?? (() => jsonResponse(200, MEMBERS)),
    'POST /api/images/assign': assign,
    // After assigning, the image list is loaded again.
    'GET /api/images': () => jsonResponse(200, { items: [], total: 0, page: 1, pageSize: 25 }),
  })
  const wrapper = mount(ImageAssignDialog, {
    props: { imageIds: options.imageIds ?? [5, 6], labId: LAB_ID, modelValue: false, 'onUpdate:modelValue': (open: boolean) => wrapper.setProps({ modelValue: open }) },
    global: { plugins: [pinia, ElementPlus] },
    attachTo: document.body,
  })
  await wrapper.setProps({ modelValue: true })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof openDialog>>['wrapper']

const assignments = (requests: RecordedRequest[]) => requests.filter((r) => r.method === 'POST' && r.url === '/api/images/assign')
const isOpen = (wrapper: Wrapper) => wrapper.props('modelValue')
/** Toasts (ElMessage) are added at the end of the body. */
const toasts = () => [...document.body.querySelectorAll('.el-message')].map((m) => m.textContent?.trim())

/** Open the annotator select; its options are teleported to the end of the body. */
async function openOptions(wrapper: Wrapper): Promise<HTMLElement[]> {
  await wrapper.get('.el-select__wrapper').trigger('click')
  await flushPromises()
  return [...document.body.querySelectorAll<HTMLElement>('.el-select-dropdown__item')]
}

async function chooseAnnotator(wrapper: Wrapper, name: string): Promise<void> {
  const option = (await openOptions(wrapper)).find((item) => item.querySelector('span')?.textContent?.trim() === name)
  if (!option) throw new Error(`No annotator "${name}"`)
  option.click()
  await flushPromises()
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ImageAssignDialog', () => {
  it('When the dialog opens, then only the active annotators of the lab are offered, with their e-mail, and Assign waits for a choice', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(200, { updatedImages: 2 }))
    expect(requests.map((r) => r.url)).toEqual([`/api/labs/${LAB_ID}/members`])
    expect(wrapper.text()).toContain('Every frame of the 2 selected images goes to one annotator to segment.')
    expect(getButton(wrapper, 'Assign').attributes('disabled')).toBeDefined()

    const options = await openOptions(wrapper)
    expect(options.map((o) => [...o.querySelectorAll('span')].map((s) => s.textContent?.trim()))).toEqual([
      ['Priya Raman', 'priya.raman@thin-film.example'],
      ['Nadia Kowalski', 'nadia.kowalski@thin-film.example'],
    ])
  })

  it('When an annotator is chosen and assigned, then the images and the person are sent, the dialog closes and says who has them', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(200, { updatedImages: 2 }))
    await chooseAnnotator(wrapper, 'Priya Raman')
    expect(wrapper.findAll('.el-select__placeholder:not(.is-transparent)').map((p) => p.text())).toEqual(['Priya Raman'])

    await getButton(wrapper, 'Assign').trigger('click')
    await flushPromises()

    expect(assignments(requests).map((r) => r.body)).toEqual([{ imageIds: [5, 6], assigneeId: PRIYA }])
    await vi.waitFor(() => expect(toasts()).toContain('Assigned every frame of 2 images to Priya Raman.'))
    expect(isOpen(wrapper)).toBe(false)
    expect(wrapper.emitted('assigned')).toHaveLength(1)
  })

  it('When one image is unassigned, then null is sent as the assignee and the dialog says the frames are unassigned', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(200, { updatedImages: 1 }), { imageIds: [5] })
    expect(wrapper.text()).toContain('Every frame of the selected image goes to one annotator to segment.')
    await getButton(wrapper, 'Unassign').trigger('click')
    await flushPromises()

    expect(assignments(requests).map((r) => r.body)).toEqual([{ imageIds: [5], assigneeId: null }])
    await vi.waitFor(() => expect(toasts()).toContain('Unassigned the frames of 1 image.'))
    expect(isOpen(wrapper)).toBe(false)
    expect(wrapper.emitted('assigned')).toHaveLength(1)
  })

  it('When the server refuses the assignment, then its reason is shown and the dialog stays open with the choice', async () => {
    const { wrapper, requests } = await openDialog(() => errorResponse(400, 'assignee-not-in-lab', 'The assignee must be an active member of the images’ lab.'))
    await chooseAnnotator(wrapper, 'Nadia Kowalski')
    await getButton(wrapper, 'Assign').trigger('click')
    await flushPromises()

    expect(assignments(requests).map((r) => r.body)).toEqual([{ imageIds: [5, 6], assigneeId: 11 }])
    await vi.waitFor(() => expect(toasts()).toContain('The assignee must be an active member of the images’ lab.'))
    expect(isOpen(wrapper)).toBe(true)
    expect(wrapper.emitted('assigned')).toBeUndefined()
    expect(wrapper.findAll('.el-select__placeholder:not(.is-transparent)').map((p) => p.text())).toEqual(['Nadia Kowalski'])
    expect(getButton(wrapper, 'Assign').attributes('disabled')).toBeUndefined()
  })

  it('When the lab has no active annotator, then the list says so', async () => {
    const { wrapper } = await openDialog(() => jsonResponse(200, { updatedImages: 0 }), { members: () => jsonResponse(200, MEMBERS.filter((m) => m.role !== 'annotator' || !m.active)) })
    expect(await openOptions(wrapper)).toEqual([])
    expect(document.body.querySelector('.el-select-dropdown__empty')?.textContent?.trim()).toBe('This lab has no active annotators.')
  })

  it('When the members cannot be loaded, then the dialog says why and nobody is offered', async () => {
    const { wrapper } = await openDialog(() => jsonResponse(200, { updatedImages: 0 }), { members: () => errorResponse(503, 'unavailable', 'The server is restarting.') })
    expect(alertTexts(wrapper)).toContain('The server is restarting.')
    expect(await openOptions(wrapper)).toEqual([])
  })

  it('When the dialog is opened again, then the earlier choice is cleared and the members are asked for again', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(200, { updatedImages: 2 }))
    await chooseAnnotator(wrapper, 'Priya Raman')
    await getButton(wrapper, 'Cancel').trigger('click')
    await flushPromises()
    expect(isOpen(wrapper)).toBe(false)

    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect(wrapper.findAll('.el-select__placeholder:not(.is-transparent)')).toHaveLength(0)
    expect(requests.filter((r) => r.url === `/api/labs/${LAB_ID}/members`)).toHaveLength(2)
    expect(assignments(requests)).toEqual([])
  })
})
