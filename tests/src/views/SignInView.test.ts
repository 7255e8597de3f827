import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { createAppRouter } from '@/router'
import SignInView from '@/views/SignInView.vue'
import { DEMO_ACCOUNTS } from '@/demoAccounts'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton, getByLabel } from '../domQueries'

let pinia: Pinia
let router: Router

async function mountSignIn(login: () => Response, path = '/sign-in') {
  const requests = stubFetch({
    'GET /api/auth/me': () => errorResponse(401, 'not-signed-in', 'Please sign in.'),
    'POST /api/auth/login': login,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(path)
  const wrapper = mount(SignInView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  return { wrapper, requests }
}

async function signIn(wrapper: Awaited<ReturnType<typeof mountSignIn>>['wrapper'], email: string, password: string) {
  await getByLabel(wrapper, 'E-mail').setValue(email)
  await getByLabel(wrapper, 'Password').setValue(password)
  await getButton(wrapper, 'Sign in').trigger('click')
  await flushPromises()
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SignInView', () => {
  it.each([
    { status: 401, code: 'bad-credentials', message: 'E-mail or password is wrong.', title: 'Wrong e-mail or password', detail: 'Check both and try again' },
    { status: 423, code: 'account-locked', message: 'This account is locked for 15 minutes.', title: 'Account locked', detail: 'locked for 15 minutes' },
    { status: 429, code: 'too-many-sign-in-attempts', message: 'Wait a few minutes and try again.', title: 'Too many sign-in attempts', detail: 'Wait a few minutes' },
  ])('When sign-in answers $status, then an alert says "$title" and what to do', async ({ status, code, message, title, detail }) => {
    const { wrapper, requests } = await mountSignIn(() => errorResponse(status, code, message))
    await signIn(wrapper, 'priya.raman@kestrel-lab.example', 'wrong-password')

    await vi.waitFor(() => expect(alertTexts(wrapper).join(' ')).toContain(title))
    expect(alertTexts(wrapper).join(' ')).toContain(detail)
    expect(requests.find((r) => r.method === 'POST')?.body).toEqual({
      email: 'priya.raman@kestrel-lab.example',
      password: 'wrong-password',
    })
    expect(router.currentRoute.value.name).toBe('sign-in')
  })

  it('When the e-mail is missing, then the form says so and nothing is sent', async () => {
    const { wrapper, requests } = await mountSignIn(() => jsonResponse(500))
    await signIn(wrapper, '', 'secret')
    await vi.waitFor(() => expect(wrapper.text()).toContain('Enter your e-mail address.'))
    expect(requests.some((r) => r.method === 'POST')).toBe(false)
  })

  it('When sign-in succeeds, then the person goes back to the page they asked for', async () => {
    const user = { id: 2, email: 'e@x.example', name: 'Elena Varga', memberships: [], csrfToken: 't' }
    const { wrapper } = await mountSignIn(() => jsonResponse(200, user), '/sign-in?redirect=/samples')
    await signIn(wrapper, 'e@x.example', 'remanence-demo-2026')
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('samples'))
  })

  it('When the page opens, then the demo accounts are listed', async () => {
    const { wrapper } = await mountSignIn(() => jsonResponse(500))
    for (const account of DEMO_ACCOUNTS) expect(wrapper.text()).toContain(account.email)
  })
})
