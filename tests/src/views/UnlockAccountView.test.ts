import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { createAppRouter } from '@/router'
import UnlockAccountView from '@/views/UnlockAccountView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'

const TOKEN = 'Hq4wN8sT2vLm6pZx0bK3_rJ7cF1dG5yA9-eU'
let pinia: Pinia
let router: Router

type Handler = Parameters<typeof stubFetch>[0][string]

/** Open /unlock-account (with `?token=` when given) signed out, and mount the view with the token the route takes from the address. */
async function mountUnlock(path: string, unlock: Handler = () => jsonResponse(204)) {
  const requests = stubFetch({
    'GET /api/auth/me': () => errorResponse(401, 'not-signed-in', 'Please sign in.'),
    [`POST /api/auth/unlock/${TOKEN}`]: unlock,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(path)
  const fromAddress = router.currentRoute.value.query.token
  const wrapper = mount(UnlockAccountView, {
    props: { token: typeof fromAddress === 'string' ? fromAddress : '' },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

const posts = (requests: Awaited<ReturnType<typeof mountUnlock>>['requests']) => requests.filter((r) => r.method === 'POST')

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('UnlockAccountView', () => {
  it('When the link from the e-mail opens, then the page explains the lock and waits for a click: nothing is sent on its own', async () => {
    const { wrapper, requests } = await mountUnlock(`/unlock-account?token=${TOKEN}`)
    expect(wrapper.get('h1').text()).toBe('Unlock your account')
    expect(wrapper.text()).toContain('Your account was locked after several failed sign-ins.')
    expect(wrapper.text()).toContain('the lock also ends by itself after 15 minutes')
    expect(getButton(wrapper, 'Unlock my account').exists()).toBe(true)
    expect(posts(requests)).toEqual([])
    expect(alertTexts(wrapper)).toEqual([])
  })

  it('When "Unlock my account" is clicked, then the token from the address is sent, and the page says the account is unlocked and leads to sign-in', async () => {
    const { wrapper, requests } = await mountUnlock(`/unlock-account?token=${TOKEN}`)
    await getButton(wrapper, 'Unlock my account').trigger('click')
    await flushPromises()

    expect(posts(requests).map((r) => [r.url, r.body])).toEqual([[`/api/auth/unlock/${TOKEN}`, undefined]])
    expect(wrapper.text()).toContain('Account unlocked')
    expect(wrapper.text()).toContain('You can sign in again. If you did not try to sign in yourself, change your password now.')
    expect(wrapper.findAll('button').some((b) => b.text() === 'Unlock my account')).toBe(false)

    await getButton(wrapper, 'Go to sign-in').trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/sign-in'), { timeout: 10_000 })
  })

  it('While the unlock is on its way, then the button is busy and a second click sends nothing more', async () => {
    let answer!: (response: Response) => void
    const { wrapper, requests } = await mountUnlock(`/unlock-account?token=${TOKEN}`, () => new Promise<Response>((resolve) => (answer = resolve)))
    await getButton(wrapper, 'Unlock my account').trigger('click')
    await flushPromises()
    const button = getButton(wrapper, 'Unlock my account')
    expect(button.element.disabled).toBe(true)
    expect(button.classes()).toContain('is-loading')
    await button.trigger('click')
    await flushPromises()
    expect(posts(requests)).toHaveLength(1)

    answer(jsonResponse(204))
    await flushPromises()
    expect(wrapper.text()).toContain('Account unlocked')
  })

  it('When the address has no token, then the page says the link is incomplete and offers nothing to send', async () => {
    const { wrapper, requests } = await mountUnlock('/unlock-account')
    expect(wrapper.text()).toContain('This link is incomplete')
    expect(wrapper.text()).toContain('Open the link from the e-mail as it is.')
    expect(wrapper.findAll('button').some((b) => b.text() === 'Unlock my account')).toBe(false)
    expect(posts(requests)).toEqual([])
  })

  it('When the server does not know the link (404), then the page says so and to check that the whole link was copied', async () => {
    const { wrapper } = await mountUnlock(`/unlock-account?token=${TOKEN}`, () => errorResponse(404, 'unlock-link-not-found', 'No such unlock link.'))
    await getButton(wrapper, 'Unlock my account').trigger('click')
    await flushPromises()
    const alert = alertTexts(wrapper).join(' ')
    expect(alert).toContain('This unlock link is not known')
    expect(alert).toContain('Check that the whole link was copied.')
    expect(wrapper.text()).not.toContain('Account unlocked')
  })

  it.each([
    ['link-used', 'This link was already used. Ask for a new one.'],
    ['link-expired', 'This link has expired. Ask for a new one.'],
  ])('When the link can no longer be used (410 %s), then the page says so with the server’s reason and offers a new password instead', async (code, message) => {
    const { wrapper } = await mountUnlock(`/unlock-account?token=${TOKEN}`, () => errorResponse(410, code, message))
    await getButton(wrapper, 'Unlock my account').trigger('click')
    await flushPromises()
    const alert = alertTexts(wrapper).join(' ')
    expect(alert).toContain('This unlock link cannot be used any more')
    expect(alert).toContain(message)
    expect(wrapper.text()).not.toContain('Account unlocked')
    const reset = wrapper.findAll('a').find((a) => a.text() === 'Choose a new password')!
    expect(reset.attributes('href')).toBe('/reset-password')
  })

  it('When unlocking fails otherwise, then the page says it could not unlock, with the server’s message, and a second try can succeed', async () => {
    let calls = 0
    const { wrapper, requests } = await mountUnlock(`/unlock-account?token=${TOKEN}`, () =>
      ++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(204),
    )
    await getButton(wrapper, 'Unlock my account').trigger('click')
    await flushPromises()
    expect(alertTexts(wrapper).join(' ')).toContain('Could not unlock the account')
    expect(alertTexts(wrapper).join(' ')).toContain('The database is not answering.')

    await getButton(wrapper, 'Unlock my account').trigger('click')
    await flushPromises()
    expect(posts(requests)).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
    expect(wrapper.text()).toContain('Account unlocked')
  })

  it('When the person did not cause the lock, then the page offers to choose a new password, which also unlocks', async () => {
    const { wrapper } = await mountUnlock(`/unlock-account?token=${TOKEN}`)
    expect(wrapper.text()).toContain('Not you? Choose a new password instead: it unlocks the account too.')
    await wrapper.findAll('a').find((a) => a.text() === 'Choose a new password')!.trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/reset-password'), { timeout: 10_000 })
  })
})
