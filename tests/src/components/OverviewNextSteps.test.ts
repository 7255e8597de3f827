import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { QueueFrameDto } from '@shared/types/annotation'
import { createAppRouter } from '@/router'
import OverviewNextSteps from '@/components/OverviewNextSteps.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { queueFrame } from '../queueFrames'

let pinia: Pinia

async function mountSteps(role: LabRole, answers: { frames?: () => Response; waiting?: () => Response } = {}) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 4, email: 'someone@kestrel-lab.example', name: 'Some One', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    'GET /api/queue': answers.frames ?? (() => jsonResponse(200, [])),
    'GET /api/reviews/count': answers.waiting ?? (() => jsonResponse(200, { status: 'submitted', count: 0 })),
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

  it('When analyses wait for review, then the reviewer sees how many, counted by the server beyond the queue\u2019s limit', async () => {
    const waiting = (count: number) => () => jsonResponse(200, { status: 'submitted', count })
    const some = await mountSteps('reviewer', { waiting: waiting(2) })
    expect(card(some.wrapper, 'review').text()).toContain('2')
    expect(card(some.wrapper, 'review').text()).toContain('submitted analyses')
    expect(some.requests.some((r) => r.url.includes('/api/reviews/count?status=submitted'))).toBe(true)
    // The overview asks for the count only, never the queue's rows.
    expect(some.requests.some((r) => new URL(r.url, 'http://localhost').pathname === '/api/reviews')).toBe(false)
    document.body.innerHTML = ''
    setActivePinia((pinia = createPinia()))
    const many = await mountSteps('reviewer', { waiting: waiting(734) })
    expect(card(many.wrapper, 'review').text()).toContain('734')
  })

  it('When a count cannot be loaded, then its card says so and the other cards stay', async () => {
    const { wrapper } = await mountSteps('reviewer', { waiting: () => errorResponse(503, 'database-unavailable', 'The database is not answering.') })
    expect(card(wrapper, 'review').text()).toContain('Could not load the review queue')
    expect(card(wrapper, 'compare').exists()).toBe(true)
  })
})
