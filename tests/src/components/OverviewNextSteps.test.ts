import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { QueueFrameDto } from '@shared/types/annotation'
import { REVIEW_QUEUE_LIMIT } from '@shared/types/review'
import { createAppRouter } from '@/router'
import OverviewNextSteps from '@/components/OverviewNextSteps.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { queueFrame } from '../queueFrames'

let pinia: Pinia

async function mountSteps(role: LabRole, answers: { frames?: () => Response; waiting?: () => Response } = {}) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 4, email: 'someone@kestrel-lab.example', name: 'Some One', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    'GET /api/queue': answers.frames ?? (() => jsonResponse(200, [])),
    'GET /api/reviews': answers.waiting ?? (() => jsonResponse(200, [])),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/')
  const wrapper = mount(OverviewNextSteps, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, requests }
}

const card = (wrapper: Awaited<ReturnType<typeof mountSteps>>['wrapper'], id: string) => wrapper.find(`[data-testid="next-${id}"]`)
const cardIds = (wrapper: Awaited<ReturnType<typeof mountSteps>>['wrapper']) => wrapper.findAll('[data-testid^="next-"]').map((c) => c.attributes('data-testid'))

const frames = (statuses: string[]): QueueFrameDto[] => statuses.map((status, i) => queueFrame({ frameId: 40 + i, status }))

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})
afterEach(() => {
  vi.unstubAllGlobals()
  document.body.innerHTML = ''
})

describe('OverviewNextSteps', () => {
  it.each([
    { role: 'annotator', cards: ['next-frames'] },
    { role: 'reviewer', cards: ['next-review', 'next-compare'] },
    { role: 'microscopist', cards: ['next-upload'] },
    { role: 'pi', cards: ['next-review', 'next-upload', 'next-compare'] },
  ] as const)('When a $role opens the overview, then it shows the work of that role: $cards', async ({ role, cards }) => {
    const { wrapper } = await mountSteps(role)
    expect(cardIds(wrapper)).toEqual(cards)
  })

  it('When frames are assigned to an annotator, then the card counts the new and in-progress ones and links to the list', async () => {
    const { wrapper } = await mountSteps('annotator', { frames: () => jsonResponse(200, frames(['new', 'new', 'in-progress', 'submitted'])) })
    const text = card(wrapper, 'frames').text()
    expect(text).toContain('3')
    expect(text).toContain('to annotate: 2 new, 1 in progress · 1 submitted')
    expect(card(wrapper, 'frames').attributes('href')).toBe('/queue')
  })

  it('When a PI has frames assigned, then their frames show too', async () => {
    const { wrapper } = await mountSteps('pi', { frames: () => jsonResponse(200, frames(['new'])) })
    expect(cardIds(wrapper)[0]).toBe('next-frames')
  })

  it('When analyses wait for review, then the reviewer sees how many, and "at least" at the queue limit', async () => {
    const waiting = (n: number) => () => jsonResponse(200, Array.from({ length: n }, (_, i) => ({ analysisId: i + 1 })))
    const some = await mountSteps('reviewer', { waiting: waiting(2) })
    expect(card(some.wrapper, 'review').text()).toContain('2')
    expect(some.requests.some((r) => r.url.includes('/api/reviews?status=submitted'))).toBe(true)
    document.body.innerHTML = ''
    setActivePinia((pinia = createPinia()))
    const many = await mountSteps('reviewer', { waiting: waiting(REVIEW_QUEUE_LIMIT) })
    expect(card(many.wrapper, 'review').text()).toContain(`${REVIEW_QUEUE_LIMIT}+`)
  })

  it('When a count cannot be loaded, then its card says so and the other cards stay', async () => {
    const { wrapper } = await mountSteps('reviewer', { waiting: () => errorResponse(503, 'database-unavailable', 'The database is not answering.') })
    expect(card(wrapper, 'review').text()).toContain('Could not load the review queue')
    expect(card(wrapper, 'compare').exists()).toBe(true)
  })
})
