import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { InvitationPreviewDto } from '@shared/types/invitation'
import { createAppRouter } from '@/router'
import { useSessionStore } from '@/stores/session'
import AcceptInvitationView from '@/views/AcceptInvitationView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton, getByLabel } from '../domQueries'

const TOKEN = 'Xq3v8ZtP0aLk2mN4bR6cD8eF0gH2iJ4kL6mN8oP0qR2'
let pinia: Pinia
let router: Router

function preview(overrides: Partial<InvitationPreviewDto> = {}): InvitationPreviewDto {
  return { labName: 'Thin-Film Magnetism Group', role: 'reviewer', email: 'nadia.k@kestrel-lab.example', expired: false, used: false, revoked: false, accountExists: false, ...overrides }
}

async function mountAccept(shown: InvitationPreviewDto, accept: () => Response = () => jsonResponse(500)) {
  const requests = stubFetch({
    'GET /api/auth/me': () => errorResponse(401, 'not-signed-in', 'Please sign in.'),
    [`GET /api/invitations/${TOKEN}`]: () => jsonResponse(200, shown),
    [`POST /api/invitations/${TOKEN}/accept`]: accept,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(`/accept-invitation?token=${TOKEN}`)
  const wrapper = mount(AcceptInvitationView, { props: { token: TOKEN }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

async function fillNewAccount(wrapper: Awaited<ReturnType<typeof mountAccept>>['wrapper'], password: string) {
  await getByLabel(wrapper, 'Your name').setValue('Nadia Kowalski')
  await getByLabel(wrapper, 'Password').setValue(password)
  await getByLabel(wrapper, 'Password again').setValue(password)
  await getButton(wrapper, 'Join Thin-Film Magnetism Group').trigger('click')
  await flushPromises()
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('AcceptInvitationView', () => {
  it('When the link opens, then the lab, the role with its meaning and the e-mail are shown with the sign-up form', async () => {
    const { wrapper } = await mountAccept(preview())
    expect(wrapper.text()).toContain('Thin-Film Magnetism Group')
    expect(wrapper.text()).toContain('Reviewer')
    expect(wrapper.text()).toContain('Checks submitted analyses')
    expect(wrapper.text()).toContain('nadia.k@kestrel-lab.example')
    expect(getByLabel(wrapper, 'Your name').element.tagName).toBe('INPUT')
  })

  it('When accepting answers 410, then the server’s message says the invitation cannot be used and the form is gone', async () => {
    const message = 'This invitation was withdrawn. Ask the lab for a new one.'
    const { wrapper } = await mountAccept(preview(), () => errorResponse(410, 'invitation-revoked', message))
    await fillNewAccount(wrapper, 'four unrelated words here')

    await vi.waitFor(() => expect(alertTexts(wrapper).join(' ')).toContain(message))
    expect(alertTexts(wrapper).join(' ')).toContain('This invitation cannot be used')
    expect(wrapper.findAll('button').some((b) => b.text().startsWith('Join'))).toBe(false)
    expect(router.currentRoute.value.name).toBe('accept-invitation')
  })

  it.each([
    { state: { expired: true }, text: 'This invitation has expired.' },
    { state: { used: true }, text: 'This invitation was already used.' },
    { state: { revoked: true }, text: 'This invitation was withdrawn.' },
  ])('When the preview says $state, then the page says so and offers no form', async ({ state, text }) => {
    const { wrapper } = await mountAccept(preview(state))
    expect(alertTexts(wrapper).join(' ')).toContain(text)
    expect(wrapper.findAll('input').length).toBe(0)
  })

  it('When the password is shorter than 12 characters, then the form says so and nothing is sent', async () => {
    const { wrapper, requests } = await mountAccept(preview())
    await fillNewAccount(wrapper, 'short')
    await vi.waitFor(() => expect(wrapper.text()).toContain('Use at least 12 characters.'))
    expect(requests.some((r) => r.method === 'POST')).toBe(false)
  })

  it('When the server finds the password weak, then its message is shown at the password', async () => {
    const problem = 'This password is too common.'
    const { wrapper } = await mountAccept(preview(), () => errorResponse(400, 'weak-password', problem, { password: [problem] }))
    await fillNewAccount(wrapper, 'password1234')
    await vi.waitFor(() => expect(wrapper.text()).toContain(problem))
  })

  it('When accepting succeeds, then the person is signed in as the answer says and lands on the overview', async () => {
    const user = { id: 12, email: 'nadia.k@kestrel-lab.example', name: 'Nadia Kowalski', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' }], csrfToken: 'fresh' }
    const { wrapper, requests } = await mountAccept(preview(), () => jsonResponse(200, user))
    await fillNewAccount(wrapper, 'four unrelated words here')

    expect(requests.find((r) => r.method === 'POST')?.body).toEqual({ name: 'Nadia Kowalski', password: 'four unrelated words here' })
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('overview'))
    const session = useSessionStore()
    expect(session.user?.name).toBe('Nadia Kowalski')
    expect(session.can('analysis.review', 1)).toBe(true)
  })

  it('When the e-mail already has an account, then only its current password is asked for and sent', async () => {
    const user = { id: 12, email: 'nadia.k@kestrel-lab.example', name: 'Nadia K', memberships: [], csrfToken: 'fresh' }
    const { wrapper, requests } = await mountAccept(preview({ accountExists: true }), () => jsonResponse(200, user))
    expect(wrapper.findAll('label').some((l) => l.text() === 'Your name')).toBe(false)
    await getByLabel(wrapper, 'Current password').setValue('my existing password')
    await getButton(wrapper, 'Join Thin-Film Magnetism Group').trigger('click')
    await flushPromises()
    await vi.waitFor(() => expect(requests.find((r) => r.method === 'POST')?.body).toEqual({ password: 'my existing password' }))
  })
})
