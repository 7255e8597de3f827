import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { InvitationDto } from '@shared/types/invitation'
import type { LabMemberDto } from '@shared/types/user'
import { createAppRouter } from '@/router'
import LabAdminView from '@/views/LabAdminView.vue'
import LabAdminMembersTable from '@/components/LabAdminMembersTable.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, pressInMessageBox } from '../domQueries'

let pinia: Pinia

/** The signed-in person is Noor (9), the lab's administrator. */
const ME = 9
const MEMBERS: LabMemberDto[] = [
  { userId: 7, name: 'Elena Varga', email: 'elena@x.example', role: 'pi', active: true },
  { userId: 8, name: 'Priya Raman', email: 'priya@x.example', role: 'annotator', active: true },
  { userId: ME, name: 'Noor Haddad', email: 'noor@x.example', role: 'admin', active: true },
]

function invitation(overrides: Partial<InvitationDto>): InvitationDto {
  return { id: 1, labId: 1, email: 'new@x.example', role: 'reviewer', invitedBy: { id: 7, name: 'Elena Varga' }, expiresAt: '2999-01-01T00:00:00Z', usedAt: null, revokedAt: null, createdAt: '2026-03-01T10:00:00Z', ...overrides }
}

/** `patch` answers changes to Elena (7), `patchMe` changes to the signed-in person, whose role `/auth/me` then reports. */
async function mountAdmin(patch: () => Response, patchMe?: (role: string) => Response) {
  let myRole = 'admin'
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: ME, email: 'noor@x.example', name: 'Noor Haddad', memberships: [{ labId: 1, labName: 'Kestrel Lab', role: myRole }], csrfToken: 't' }),
    'GET /api/health': () => jsonResponse(200, { db: 'up', storage: 'up', mail: 'up' }),
    'GET /api/labs/1/members': () => jsonResponse(200, MEMBERS),
    'GET /api/labs/1/invitations': () => jsonResponse(200, [invitation({ id: 1 }), invitation({ id: 2, email: 'gone@x.example', usedAt: '2026-03-02T10:00:00Z' })]),
    'PATCH /api/labs/1/members/7': patch,
    [`PATCH /api/labs/1/members/${ME}`]: (request) => {
      const role = (request.body as { role: string }).role
      const answer = patchMe ? patchMe(role) : jsonResponse(500)
      if (answer.ok) myRole = role
      return answer
    },
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/lab-admin')
  const wrapper = mount(LabAdminView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests, router }
}


beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('LabAdminView', () => {
  it('When the page opens, then members and only the open invitations are listed, the used one folded away', async () => {
    const { wrapper } = await mountAdmin(() => jsonResponse(500))
    const text = wrapper.text()
    expect(text).toContain('Priya Raman')
    expect(text).toContain('new@x.example')
    expect(text).not.toContain('gone@x.example')
    expect(text).toContain('Show earlier invitations (1)')
  })

  it('When deactivating the last PI is refused with 409 last-manager, then the server’s message stays on the page', async () => {
    const message = 'This is the last active administrator or principal investigator of the lab: make someone else one first.'
    const { wrapper, requests } = await mountAdmin(() => errorResponse(409, 'last-manager', message))
    await wrapper.get('button[aria-label="Deactivate Elena Varga"]').trigger('click')
    await pressInMessageBox('Deactivate')

    await vi.waitFor(() => expect(alertTexts(wrapper).join(' ')).toContain(message))
    expect(alertTexts(wrapper).join(' ')).toContain('Elena Varga was not deactivated')
    expect(requests.find((r) => r.method === 'PATCH')?.body).toEqual({ active: false })
    // Still listed as active.
    expect(wrapper.find('button[aria-label="Deactivate Elena Varga"]').exists()).toBe(true)
  })

  it('When a deactivation is confirmed and allowed, then the member shows as deactivated with Reactivate', async () => {
    const { wrapper } = await mountAdmin(() => jsonResponse(200, { ...MEMBERS[0], active: false }))
    await wrapper.get('button[aria-label="Deactivate Elena Varga"]').trigger('click')
    await pressInMessageBox('Deactivate')
    await vi.waitFor(() => expect(wrapper.find('button[aria-label="Reactivate Elena Varga"]').exists()).toBe(true))
  })

  it('When the list shows the signed-in person, then their row offers no Deactivate (another manager can)', async () => {
    const { wrapper } = await mountAdmin(() => jsonResponse(500))
    expect(wrapper.find('button[aria-label="Deactivate Noor Haddad"]').exists()).toBe(false)
    expect(wrapper.find('button[aria-label="Deactivate Priya Raman"]').exists()).toBe(true)
    const ownRow = wrapper.findAll('tbody tr').find((row) => row.text().includes('Noor Haddad'))!
    expect(ownRow.find('[title^="Another administrator"]').exists()).toBe(true)
  })

  it('When a manager makes themselves an annotator, then they confirm first, and afterwards the session follows and the page closes', async () => {
    const { wrapper, requests, router } = await mountAdmin(() => jsonResponse(500), (role) => jsonResponse(200, { ...MEMBERS[2], role }))
    // The members table asks for the change as its role select does.
    wrapper.findComponent(LabAdminMembersTable).vm.$emit('changeRole', MEMBERS[2], 'annotator')
    await flushPromises()
    expect(document.querySelector('.el-message-box')?.textContent).toContain('Make yourself Annotator?')
    await pressInMessageBox('Become Annotator')
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('overview'))
    expect(requests.find((r) => r.method === 'PATCH')?.body).toEqual({ role: 'annotator' })
    expect(requests.filter((r) => r.url.endsWith('/api/auth/me')).length).toBeGreaterThanOrEqual(2)
  })

  it('When a manager cancels making themselves an annotator, then nothing is sent', async () => {
    const { wrapper, requests } = await mountAdmin(() => jsonResponse(500), (role) => jsonResponse(200, { ...MEMBERS[2], role }))
    wrapper.findComponent(LabAdminMembersTable).vm.$emit('changeRole', MEMBERS[2], 'annotator')
    await flushPromises()
    await pressInMessageBox('Cancel')
    expect(requests.some((r) => r.method === 'PATCH')).toBe(false)
  })

  it('When the invite dialog opens, then every role is offered with what it may do', async () => {
    const { wrapper } = await mountAdmin(() => jsonResponse(500))
    await wrapper.findAll('button').find((b) => b.text() === 'Invite someone')!.trigger('click')
    await flushPromises()
    const dialog = document.querySelector('.el-dialog')!
    expect(dialog.textContent).toContain('Principal investigator')
    expect(dialog.textContent).toContain('Segments the frames assigned to them')
    expect(dialog.querySelectorAll('input[type="radio"]').length).toBe(5)
  })
})
