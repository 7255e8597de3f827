import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { createAppRouter } from '@/router'
import ResetPasswordView from '@/views/ResetPasswordView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton, getByLabel } from '../domQueries'

const TOKEN = 'Rk7pX2mQ9vLw4tZs8bN1_cH5jD3fG6yE0-aU'
const EMAIL = 'priya.raman@kestrel-lab.example'
let pinia: Pinia
let router: Router

type Handler = Parameters<typeof stubFetch>[0][string]

/** Open /reset-password (with `?token=` when given) signed out, and mount the view with the token the route takes from the address. */
async function mountReset({ token, check, complete, send }: { token?: string; check?: Handler; complete?: Handler; send?: Handler } = {}) {
  const requests = stubFetch({
    'GET /api/auth/me': () => errorResponse(401, 'not-signed-in', 'Please sign in.'),
    'POST /api/auth/password-reset': send ?? (() => jsonResponse(202)),
    [`GET /api/auth/password-reset/${TOKEN}`]: check ?? (() => jsonResponse(200, { expired: false, used: false })),
    [`POST /api/auth/password-reset/${TOKEN}`]: complete ?? (() => jsonResponse(204)),
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(token === undefined ? '/reset-password' : `/reset-password?token=${token}`)
  const fromAddress = router.currentRoute.value.query.token
  const wrapper = mount(ResetPasswordView, {
    props: { token: typeof fromAddress === 'string' ? fromAddress : '' },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountReset>>['wrapper']

async function choosePassword(wrapper: Wrapper, password: string, repeat = password) {
  await getByLabel(wrapper, 'New password').setValue(password)
  await getByLabel(wrapper, 'New password again').setValue(repeat)
  await getButton(wrapper, 'Set new password').trigger('click')
  await flushPromises()
}

async function askForLink(wrapper: Wrapper, email: string) {
  await getByLabel(wrapper, 'E-mail').setValue(email)
  await getButton(wrapper, 'Send reset link').trigger('click')
  await flushPromises()
}

const posts = (requests: Awaited<ReturnType<typeof mountReset>>['requests']) => requests.filter((r) => r.method === 'POST')

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ResetPasswordView, asking for a link', () => {
  it('When the page opens without a link, then it asks for the e-mail address, checks no link, and leads back to sign-in', async () => {
    const { wrapper, requests } = await mountReset()
    expect(wrapper.get('h1').text()).toBe('Reset your password')
    expect(wrapper.text()).toContain('Enter the e-mail address of your account; we send you a link to choose a new password.')
    expect(getByLabel(wrapper, 'E-mail').attributes('type')).toBe('email')
    expect(requests.some((r) => r.url.startsWith('/api/auth/password-reset'))).toBe(false)
    const back = wrapper.findAll('a').find((a) => a.text() === 'Back to sign-in')!
    expect(back.attributes('href')).toBe('/sign-in')
  })

  it('When an address is sent, then the request carries it and the page says a link is on its way without telling whether the account exists', async () => {
    const { wrapper, requests } = await mountReset()
    await askForLink(wrapper, EMAIL)

    expect(posts(requests).map((r) => [r.url, r.body])).toEqual([['/api/auth/password-reset', { email: EMAIL }]])
    expect(wrapper.text()).toContain('Check your inbox')
    expect(wrapper.text()).toContain(`If ${EMAIL} has an account, a link to choose a new password is on its way. It works once, within one hour.`)
    expect(wrapper.findAll('button').some((b) => b.text() === 'Send reset link')).toBe(false)
  })

  it('When the e-mail is left empty, then the form asks for it and nothing is sent', async () => {
    const { wrapper, requests } = await mountReset()
    await askForLink(wrapper, '')
    await vi.waitFor(() => expect(wrapper.text()).toContain('Enter the e-mail address of your account.'))
    expect(posts(requests)).toEqual([])
  })

  it('When the e-mail is not an address, then leaving the field says so and Send reset link sends nothing', async () => {
    const { wrapper, requests } = await mountReset()
    const email = getByLabel(wrapper, 'E-mail')
    await email.setValue('priya.raman')
    await email.trigger('blur')
    await vi.waitFor(() => expect(wrapper.text()).toContain('This does not look like an e-mail address.'))
    await getButton(wrapper, 'Send reset link').trigger('click')
    await flushPromises()
    expect(posts(requests)).toEqual([])
    expect(wrapper.text()).not.toContain('Check your inbox')
  })

  it('When asking is rate limited, then the server’s message is shown and the form stays to try again later', async () => {
    const message = 'Too many requests from this address. Wait a few minutes and try again.'
    const { wrapper } = await mountReset({ send: () => errorResponse(429, 'too-many-requests', message) })
    await askForLink(wrapper, EMAIL)
    expect(alertTexts(wrapper).join(' ')).toContain('Could not send the link')
    expect(alertTexts(wrapper).join(' ')).toContain(message)
    expect(wrapper.text()).not.toContain('Check your inbox')
    expect(getButton(wrapper, 'Send reset link').exists()).toBe(true)
  })
})

describe('ResetPasswordView, with the link from the e-mail', () => {
  it('While the link from the address is being checked, then no form is offered yet; once usable, the new password is asked for', async () => {
    let answer!: (response: Response) => void
    const { wrapper, requests } = await mountReset({ token: TOKEN, check: () => new Promise<Response>((resolve) => (answer = resolve)) })
    expect(requests.filter((r) => r.url.startsWith('/api/auth/password-reset')).map((r) => `${r.method} ${r.url}`)).toEqual([`GET /api/auth/password-reset/${TOKEN}`])
    expect(wrapper.find('.el-skeleton').exists()).toBe(true)
    expect(wrapper.findAll('input')).toHaveLength(0)

    answer(jsonResponse(200, { expired: false, used: false }))
    await flushPromises()
    expect(wrapper.get('h1').text()).toBe('Choose a new password')
    expect(getByLabel(wrapper, 'New password').attributes('type')).toBe('password')
    expect(getByLabel(wrapper, 'New password again').attributes('type')).toBe('password')
    expect(wrapper.text()).toContain('At least 12 characters.')
  })

  it('When a new password is set, then it is sent with the link’s token, and the page says the other sessions were signed out and leads to sign-in', async () => {
    const { wrapper, requests } = await mountReset({ token: TOKEN })
    await choosePassword(wrapper, 'four unrelated words here')

    expect(posts(requests).map((r) => [r.url, r.body])).toEqual([[`/api/auth/password-reset/${TOKEN}`, { password: 'four unrelated words here' }]])
    expect(wrapper.text()).toContain('Password changed')
    expect(wrapper.text()).toContain('Every other session of your account was signed out. Sign in with the new password.')
    expect(wrapper.findAll('input')).toHaveLength(0)

    await getButton(wrapper, 'Go to sign-in').trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/sign-in'), { timeout: 10_000 })
  })

  it.each([
    ['too short', 'short-pw', 'short-pw', 'Use at least 12 characters.'],
    ['empty', '', '', 'Choose a new password.'],
    ['typed differently the second time', 'four unrelated words here', 'four unrelated words her', 'The two passwords differ.'],
  ])('When the new password is %s, then the form says so and nothing is sent', async (_case, password, repeat, problem) => {
    const { wrapper, requests } = await mountReset({ token: TOKEN })
    await choosePassword(wrapper, password, repeat)
    await vi.waitFor(() => expect(wrapper.text()).toContain(problem))
    expect(posts(requests)).toEqual([])
    expect(wrapper.text()).not.toContain('Password changed')
  })

  it.each([
    ['expired', { expired: true, used: false }, 'This link has expired (links work for one hour). Ask for a new one below.'],
    ['already used', { expired: false, used: true }, 'This link was already used. Ask for a new one below.'],
  ] as const)('When the link check says the link is %s, then the page says the link cannot be used and offers to ask for a new one', async (_case, state, text) => {
    const { wrapper } = await mountReset({ token: TOKEN, check: () => jsonResponse(200, state) })
    expect(alertTexts(wrapper).join(' ')).toContain('This reset link cannot be used')
    expect(alertTexts(wrapper).join(' ')).toContain(text)
    expect(wrapper.get('h1').text()).toBe('Reset your password')
    expect(wrapper.findAll('label').map((l) => l.text())).toEqual(['E-mail'])
    expect(getButton(wrapper, 'Send reset link').exists()).toBe(true)
  })

  it('When the server does not know the link (404), then the page says to check the whole link was copied', async () => {
    const { wrapper } = await mountReset({ token: TOKEN, check: () => errorResponse(404, 'password-reset-not-found', 'No such password reset.') })
    expect(alertTexts(wrapper).join(' ')).toContain('This link is not known. Check that the whole link was copied, or ask for a new one below.')
    expect(wrapper.findAll('label').map((l) => l.text())).toEqual(['E-mail'])
  })

  it('When the link cannot be checked (server failure), then the server’s message is shown', async () => {
    const { wrapper } = await mountReset({ token: TOKEN, check: () => errorResponse(500, 'internal', 'Something went wrong on our side.') })
    expect(alertTexts(wrapper).join(' ')).toContain('This reset link cannot be used')
    expect(alertTexts(wrapper).join(' ')).toContain('Something went wrong on our side.')
  })

  it.each([
    ['link-expired', 'This link has expired (links work for one hour). Ask for a new one below.'],
    ['link-used', 'This link was already used. Ask for a new one below.'],
  ])('When setting the password answers 410 %s, then the form gives way to the explanation and the request for a new link', async (code, text) => {
    const { wrapper, requests } = await mountReset({ token: TOKEN, complete: () => errorResponse(410, code, 'This link cannot be used. Ask for a new one.') })
    await choosePassword(wrapper, 'four unrelated words here')

    expect(posts(requests)).toHaveLength(1)
    expect(alertTexts(wrapper).join(' ')).toContain('This reset link cannot be used')
    expect(alertTexts(wrapper).join(' ')).toContain(text)
    expect(wrapper.text()).not.toContain('Password changed')
    expect(wrapper.findAll('label').map((l) => l.text())).toEqual(['E-mail'])
  })

  it('When the account was deactivated since the link was sent, then the server’s reason is shown instead of advice to ask for a new link', async () => {
    // Message as server/services/passwordResetService.ts sends it.
    const reason = 'This account was deactivated and can no longer be reset. Ask a lab administrator.'
    const { wrapper, requests } = await mountReset({ token: TOKEN, complete: () => errorResponse(410, 'account-inactive', reason) })
    await choosePassword(wrapper, 'four unrelated words here')

    expect(posts(requests)).toHaveLength(1)
    expect(alertTexts(wrapper).join(' ')).toContain(reason)
    expect(alertTexts(wrapper).join(' ')).not.toContain('has expired')
    expect(wrapper.text()).not.toContain('Password changed')
  })

  it('When the server finds the new password weak, then its reason is shown at the password and the form stays', async () => {
    const problem = 'This password is too common; choose another.'
    const { wrapper } = await mountReset({ token: TOKEN, complete: () => errorResponse(400, 'weak-password', problem, { password: [problem] }) })
    await choosePassword(wrapper, 'password1234')

    const item = wrapper.findAll('.el-form-item').find((i) => i.find('label').text() === 'New password')!
    await vi.waitFor(() => expect(item.get('.el-form-item__error').text()).toBe(problem))
    expect(alertTexts(wrapper).join(' ')).not.toContain('Could not change the password')
    expect(wrapper.text()).not.toContain('Password changed')
    expect(getButton(wrapper, 'Set new password').exists()).toBe(true)
  })

  it('When setting the password fails otherwise, then an alert says it could not be changed, with the server’s message', async () => {
    const { wrapper } = await mountReset({ token: TOKEN, complete: () => errorResponse(503, 'unavailable', 'The database is not answering.') })
    await choosePassword(wrapper, 'four unrelated words here')
    expect(alertTexts(wrapper).join(' ')).toContain('Could not change the password')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')
    expect(getButton(wrapper, 'Set new password').exists()).toBe(true)
  })
})
