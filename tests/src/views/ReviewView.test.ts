import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { REVIEW_QUEUE_LIMIT, type ReviewQueueItemDto } from '@shared/types/review'
import { createAppRouter } from '@/router'
import ReviewView from '@/views/ReviewView.vue'
import { jsonResponse, stubFetch } from '../fakeApi'

let pinia: Pinia

function queueItem(analysisId: number): ReviewQueueItemDto {
  return {
    analysisId,
    status: 'submitted',
    statusLabel: 'Waiting for review',
    labId: 1,
    project: { id: 2, name: 'CoFeB anneal series' },
    image: { id: 100 + analysisId, name: `film-${analysisId}.tif`, frameCount: 1 },
    frame: { id: 200 + analysisId, index: 0, field: null, fieldUnit: null, temperatureK: null },
    sample: null,
    author: { id: 4, name: 'Priya Raman' },
    submittedBy: { id: 4, name: 'Priya Raman' },
    submittedAt: '2026-11-30T09:00:00.000Z',
    submitNote: '',
    annotationVersion: 1,
    openComments: 0,
    superseded: false,
    updatedAt: '2026-11-30T09:00:00.000Z',
  }
}

/** The review page over a queue of `listed` rows, of `total` analyses in all. */
async function mountReview(listed: number, total: number) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 7, email: 'jonas.adeyemi@kestrel-lab.example', name: 'Jonas Adeyemi', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' }], csrfToken: 't' }),
    'GET /api/projects': () => jsonResponse(200, []),
    'GET /api/reviews': () => jsonResponse(200, Array.from({ length: listed }, (_, i) => queueItem(i + 1))),
    'GET /api/reviews/count': () => jsonResponse(200, { status: 'submitted', count: total }),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/review')
  const wrapper = mount(ReviewView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

const countAsked = (requests: { url: string }[]) => requests.some((r) => r.url.includes('/api/reviews/count'))

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ReviewView', () => {
  it('When the queue is shorter than its limit, then it is shown whole, with no note and no extra count request', async () => {
    const { wrapper, requests } = await mountReview(3, 3)
    expect(wrapper.findAll('tbody tr')).toHaveLength(3)
    expect(wrapper.find('[data-testid="queue-partial"]').exists()).toBe(false)
    expect(countAsked(requests)).toBe(false)
  })

  it('When the queue reaches its limit, then the page says it shows the oldest part and how many there are in all', async () => {
    const { wrapper, requests } = await mountReview(REVIEW_QUEUE_LIMIT, 734)
    expect(countAsked(requests)).toBe(true)
    expect(wrapper.find('[data-testid="queue-partial"]').text()).toContain(`Showing the oldest ${REVIEW_QUEUE_LIMIT} of 734`)
  })

  it('When the queue holds exactly the limit, then no note claims there are more', async () => {
    const { wrapper } = await mountReview(REVIEW_QUEUE_LIMIT, REVIEW_QUEUE_LIMIT)
    expect(wrapper.find('[data-testid="queue-partial"]').exists()).toBe(false)
  })
})
