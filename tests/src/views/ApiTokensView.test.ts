import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { ApiTokenDto } from '@shared/types/apiToken'
import { createAppRouter } from '@/router'
import ApiTokensView from '@/views/ApiTokensView.vue'
import { jsonResponse, stubFetch } from '../fakeApi'
import { getButton, getByLabel } from '../domQueries'

const SECRET = 'rmn_Ab3dEf5gHi7jKl9mNo1pQr3sTu5vWx7yZa9bCd1eF'
let pinia: Pinia

function listed(overrides: Partial<ApiTokenDto> = {}): ApiTokenDto {
  return { id: 1, name: 'old script', displayPrefix: 'rmn_Zz9y', scope: 'read', expiresAt: null, lastUsedAt: null, revokedAt: null, createdAt: '2026-02-01T10:00:00Z', ...overrides }
}

async function mountTokens() {
  let tokens: ApiTokenDto[] = [listed()]
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 7, email: 'e@x.example', name: 'Elena', memberships: [{ labId: 1, labName: 'Lab', role: 'pi' }], csrfToken: 't' }),
    'GET /api/auth/tokens': () => jsonResponse(200, tokens),
    'POST /api/auth/tokens': (r) => {
      const body = r.body as { name: string; expiresInDays?: number }
      const created = listed({ id: 2, name: body.name, displayPrefix: SECRET.slice(0, 8), expiresAt: '2026-05-01T10:00:00Z', createdAt: '2026-02-01T10:00:00Z' })
      tokens = [created, ...tokens]
      return jsonResponse(201, { ...created, token: SECRET })
    },
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/settings/tokens')
  const wrapper = mount(ApiTokensView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ApiTokensView', () => {
  it('When a token is created, then its secret is shown once with a warning, and never again after it is hidden', async () => {
    const { wrapper, requests } = await mountTokens()
    expect(wrapper.text()).not.toContain(SECRET)

    await getByLabel(wrapper, 'Token name').setValue('analysis notebook')
    await getButton(wrapper, 'Create token').trigger('click')
    await flushPromises()

    expect(requests.find((r) => r.method === 'POST')?.body).toEqual({ name: 'analysis notebook', expiresInDays: 90 })
    const secretField = wrapper.get<HTMLInputElement>('input[aria-label="New API token"]')
    expect(secretField.element.value).toBe(SECRET)
    expect(wrapper.text()).toContain('Copy it now: it is shown only this once')
    // The list names the new token by its prefix only.
    const rows = wrapper.findAll('tbody tr').map((r) => r.text())
    expect(rows[0]).toContain('analysis notebook')
    expect(rows.join(' ')).not.toContain(SECRET)

    await getButton(wrapper, 'I have stored it — hide the token').trigger('click')
    await flushPromises()
    expect(wrapper.find('input[aria-label="New API token"]').exists()).toBe(false)
    expect(wrapper.html()).not.toContain(SECRET)
  })

  it('When the page is opened again, then the list comes back without any secret', async () => {
    const { wrapper } = await mountTokens()
    expect(wrapper.findAll('tbody tr').map((r) => r.text()).join(' ')).toContain('old script')
    expect(wrapper.find('input[aria-label="New API token"]').exists()).toBe(false)
    expect(wrapper.text()).toContain('Authorization: Bearer rmn_')
  })
})
