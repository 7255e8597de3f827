import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { InvitationDto } from '@shared/types/invitation'
import type { LabMemberDto } from '@shared/types/user'
import { createAppRouter } from '@/router'
import LabAdminInviteDialog from '@/components/LabAdminInviteDialog.vue'
import { useLabAdminStore } from '@/stores/labAdmin'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { alertTexts, getButton, getByLabel } from '../domQueries'

let pinia: Pinia

const LAB_ID = 1
const LAB_NAME = 'Thin-Film Magnetism Group'
const MEMBERS: LabMemberDto[] = [
  { userId: 7, name: 'Elena Varga', email: 'elena.varga@thin-film.example', role: 'pi', active: true },
  { userId: 4, name: 'Tobias Lindgren', email: 'tobias.lindgren@thin-film.example', role: 'microscopist', active: true },
]

/** The invitation as POST /api/labs/:labId/invitations answers it (201): open for 72 hours from now. */
function sent(email: string, role: LabRole): InvitationDto {
  const now = Date.now()
  return { id: 31, labId: LAB_ID, email, role, invitedBy: { id: 7, name: 'Elena Varga' }, expiresAt: new Date(now + 72 * 3_600_000).toISOString(), usedAt: null, revokedAt: null, createdAt: new Date(now).toISOString() }
}

type Handler = (request: RecordedRequest) => Response | Promise<Response>

/** The dialog as the lab admin page holds it: the lab loaded, the dialog closed, then opened by "Invite someone". */
async function openDialog(invite: Handler) {
  const requests = stubFetch({
    [`GET /api/labs/${LAB_ID}/members`]: () => jsonResponse(200, MEMBERS),
    [`GET /api/labs/${LAB_ID}/invitations`]: () => jsonResponse(200, []),
    [`POST /api/labs/${LAB_ID}/invitations`]: invite,
  })
  await useLabAdminStore().load(LAB_ID)
  const router = createAppRouter(createMemoryHistory())
  const wrapper = mount(LabAdminInviteDialog, {
    props: { labName: LAB_NAME, modelValue: false, 'onUpdate:modelValue': (open: boolean) => wrapper.setProps({ modelValue: open }) },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await wrapper.setProps({ modelValue: true })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof openDialog>>['wrapper']

const invitations = (requests: RecordedRequest[]) => requests.filter((r) => r.method === 'POST')
const isOpen = (wrapper: Wrapper) => wrapper.props('modelValue')
/** The messages shown under the form's fields. */
const fieldErrors = (wrapper: Wrapper) =>
  wrapper
    .findAll('.el-form-item__error')
    .map((e) => e.text())
    .filter((text) => text !== '')
/** Toasts (ElMessage) are added at the end of the body. */
const toasts = () => [...document.body.querySelectorAll('.el-message')].map((m) => m.textContent?.trim())

/** Choose a role by its name, as printed on its radio. */
async function chooseRole(wrapper: Wrapper, name: string): Promise<void> {
  const radio = wrapper.findAll('.el-radio').find((r) => r.find('strong').exists() && r.get('strong').text() === name)
  if (!radio) throw new Error(`No role "${name}"`)
  await radio.get('input').setValue(true)
}

const chosenRole = (wrapper: Wrapper) => wrapper.get('.el-radio.is-checked strong').text()

async function send(wrapper: Wrapper): Promise<void> {
  await getButton(wrapper, 'Send invitation').trigger('click')
  await flushPromises()
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('LabAdminInviteDialog, checking the form', () => {
  it('When no e-mail address is given, then the form asks for one and nothing is sent', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, sent('x@y.example', 'annotator')))
    expect(wrapper.text()).toContain(`Invite someone to ${LAB_NAME}`)
    await send(wrapper)
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['Enter the e-mail address to invite.']))
    expect(invitations(requests)).toEqual([])
    expect(isOpen(wrapper)).toBe(true)
  })

  it('When the e-mail address is malformed, then the form says so and nothing is sent', async () => {
    const { wrapper, requests } = await openDialog(() => jsonResponse(201, sent('x@y.example', 'annotator')))
    await getByLabel(wrapper, 'E-mail').setValue('priya.raman at thin-film.example')
    await send(wrapper)
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['This does not look like an e-mail address.']))
    expect(invitations(requests)).toEqual([])
    expect(isOpen(wrapper)).toBe(true)
  })
})

describe('LabAdminInviteDialog, sending', () => {
  it('When an address is given and no role chosen, then an annotator invitation is sent, the dialog closes and the invitation is listed', async () => {
    const { wrapper, requests } = await openDialog((request) => jsonResponse(201, sent('priya.raman@thin-film.example', (request.body as { role: LabRole }).role)))
    expect(chosenRole(wrapper)).toBe('Annotator')
    await getByLabel(wrapper, 'E-mail').setValue('priya.raman@thin-film.example')
    await send(wrapper)

    expect(invitations(requests).map((r) => [r.url, r.body])).toEqual([[`/api/labs/${LAB_ID}/invitations`, { email: 'priya.raman@thin-film.example', role: 'annotator' }]])
    await vi.waitFor(() => expect(toasts()).toContain('Invitation sent to priya.raman@thin-film.example.'))
    expect(isOpen(wrapper)).toBe(false)
    // The lab admin page lists the store's open invitations.
    expect(useLabAdminStore().openInvitations.map((i) => [i.email, i.role])).toEqual([['priya.raman@thin-film.example', 'annotator']])
  })

  it('When the reviewer role is chosen, then the invitation is sent for that role', async () => {
    const { wrapper, requests } = await openDialog((request) => jsonResponse(201, sent('tobias.lindgren@thin-film.example', (request.body as { role: LabRole }).role)))
    await getByLabel(wrapper, 'E-mail').setValue('tobias.lindgren@thin-film.example')
    await chooseRole(wrapper, 'Reviewer')
    await send(wrapper)
    expect(invitations(requests).map((r) => r.body)).toEqual([{ email: 'tobias.lindgren@thin-film.example', role: 'reviewer' }])
    await vi.waitFor(() => expect(toasts()).toContain('Invitation sent to tobias.lindgren@thin-film.example.'))
  })

  it('When the person is already a member (409), then the dialog stays open with the reason, the address and the role', async () => {
    const reason = 'tobias.lindgren@thin-film.example is already an active member of this lab; change their role in the member list instead.'
    const { wrapper, requests } = await openDialog(() => errorResponse(409, 'already-member', reason))
    await getByLabel(wrapper, 'E-mail').setValue('tobias.lindgren@thin-film.example')
    await chooseRole(wrapper, 'Principal investigator')
    await send(wrapper)

    expect(invitations(requests)).toHaveLength(1)
    const alert = alertTexts(wrapper).join(' ')
    expect(alert).toContain('The invitation was not sent')
    expect(alert).toContain(reason)
    expect(isOpen(wrapper)).toBe(true)
    expect(getByLabel(wrapper, 'E-mail').element.value).toBe('tobias.lindgren@thin-film.example')
    expect(chosenRole(wrapper)).toBe('Principal investigator')
    expect(useLabAdminStore().invitations).toEqual([])
  })

  it('When the server rejects the address (400 with a field message), then the message shows at the e-mail field, not as an alert', async () => {
    // The form lets a domain with non-ASCII letters pass; the server's e-mail check (zod) does not.
    const { wrapper, requests } = await openDialog(() => errorResponse(400, 'invalid-input', 'Invalid body — email: Invalid email address', { email: ['Invalid email address'] }))
    await getByLabel(wrapper, 'E-mail').setValue('priya.raman@physik-universität.example')
    await send(wrapper)

    expect(invitations(requests).map((r) => r.body)).toEqual([{ email: 'priya.raman@physik-universität.example', role: 'annotator' }])
    await vi.waitFor(() => expect(fieldErrors(wrapper)).toEqual(['Invalid email address']))
    expect(alertTexts(wrapper).join(' ')).not.toContain('The invitation was not sent')
    expect(isOpen(wrapper)).toBe(true)
  })

  it('When the dialog is opened again after a refusal, then the form starts empty with the annotator role and no alert', async () => {
    const { wrapper } = await openDialog(() => errorResponse(503, 'mail-unavailable', 'The invitation e-mail could not be sent (connection refused); nothing was saved. Try again in a moment.'))
    await getByLabel(wrapper, 'E-mail').setValue('priya.raman@thin-film.example')
    await chooseRole(wrapper, 'Microscopist')
    await send(wrapper)
    expect(alertTexts(wrapper).join(' ')).toContain('The invitation e-mail could not be sent (connection refused); nothing was saved.')

    await getButton(wrapper, 'Cancel').trigger('click')
    await flushPromises()
    expect(isOpen(wrapper)).toBe(false)
    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect(getByLabel(wrapper, 'E-mail').element.value).toBe('')
    expect(chosenRole(wrapper)).toBe('Annotator')
    expect(alertTexts(wrapper).join(' ')).not.toContain('The invitation was not sent')
  })
})
