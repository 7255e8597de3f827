import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { DeletedItemDto } from '@shared/types/deletion'
import { createAppRouter } from '@/router'
import DeletedItemsView from '@/views/DeletedItemsView.vue'
import { jsonResponse, stubFetch } from '../fakeApi'

let pinia: Pinia
const DAY_MS = 86_400_000

function item(overrides: Partial<DeletedItemDto>): DeletedItemDto {
  return {
    kind: 'image',
    id: 5,
    name: 'film.tif',
    deletedAt: new Date(Date.now() - DAY_MS).toISOString(),
    // 29 days and an hour from now: 30 whole days are not left, 29 are (rounded up).
    purgeAfter: new Date(Date.now() + 28 * DAY_MS + 3_600_000).toISOString(),
    imageCount: 1,
    project: { id: 2, name: 'Garnet film' },
    deletedBy: { id: 8, name: 'Tobias Lindgren' },
    approvedAnalyses: 0,
    ...overrides,
  }
}

const ITEMS = [
  item({}),
  item({ kind: 'project', id: 3, name: 'Anneal series', imageCount: 2, project: { id: 3, name: 'Anneal series' }, approvedAnalyses: 4, purgeAfter: new Date(Date.now() + 2 * DAY_MS - 60_000).toISOString() }),
]

async function mountView() {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 7, email: 'elena@x.example', name: 'Elena Varga', memberships: [{ labId: 1, labName: 'Kestrel Lab', role: 'pi' }], csrfToken: 't' }),
    'GET /api/labs/1/deleted-items': () => jsonResponse(200, { retentionDays: 30, items: ITEMS }),
    'POST /api/deleted-items/images/5/restore': () => jsonResponse(200, { kind: 'image', id: 5 }),
    'DELETE /api/deleted-items/projects/3': () => jsonResponse(200, { kind: 'project', id: 3, imageCount: 2, objectsRemoved: 14 }),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/deleted-items')
  const wrapper = mount(DeletedItemsView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('DeletedItemsView', () => {
  it('When the page opens, then each deleted item shows who deleted it and the whole days left to restore it', async () => {
    const { wrapper } = await mountView()
    const text = wrapper.text()
    expect(text).toContain('deleted in the last 30 days')
    expect(text).toContain('film.tif')
    expect(text).toContain('in Garnet film')
    expect(text).toContain('by Tobias Lindgren')
    expect(text).toContain('29 days left')
    expect(text).toContain('with 2 images')
    expect(text).toContain('2 days left')
  })

  it('When Restore is pressed, then the restore is sent and the item leaves the list', async () => {
    const { wrapper, requests } = await mountView()
    await wrapper.get('button[aria-label="Restore film.tif"]').trigger('click')
    await flushPromises()
    expect(requests.some((r) => r.method === 'POST' && r.url === '/api/deleted-items/images/5/restore')).toBe(true)
    expect(wrapper.find('button[aria-label="Restore film.tif"]').exists()).toBe(false)
  })

  it('When "Remove for good" is confirmed, then the warning names the approved analyses and the purge is sent', async () => {
    const { wrapper, requests } = await mountView()
    await wrapper.get('button[aria-label="Remove Anneal series for good"]').trigger('click')
    await vi.waitFor(() => expect(document.querySelector('.el-message-box')?.textContent).toContain('including 4 approved analyses'))
    ;[...document.querySelectorAll<HTMLButtonElement>('.el-message-box button')].find((b) => b.textContent?.trim() === 'Remove for good')!.click()
    await flushPromises()
    await vi.waitFor(() => expect(requests.some((r) => r.method === 'DELETE' && r.url === '/api/deleted-items/projects/3')).toBe(true))
    await vi.waitFor(() => expect(wrapper.find('button[aria-label="Remove Anneal series for good"]').exists()).toBe(false))
  })
})
