import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { CommentDto, ReviewedAnalysisDto } from '@shared/types/review'
import type { Point } from '@/composables/usePanZoom'
import ReviewComments from '@/components/ReviewComments.vue'
import { useReviewsStore } from '@/stores/reviews'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { getButton } from '../domQueries'
import { imageDetailDto } from '../labDtos'

let pinia: Pinia

const JONAS = { id: 7, name: 'Jonas Adeyemi' }
const PRIYA = { id: 4, name: 'Priya Raman' }

// Expected dates come from Intl with the options of src/formatDateTime.ts, in this test's locale.
const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' })

/** Analysis 5 of frame 0 of KB24-A300_remanent.tif (image 9, 512 × 512 px), waiting for review. */
const ANALYSIS: ReviewedAnalysisDto = {
  id: 5,
  frameId: 11,
  imageId: 9,
  labId: 1,
  annotationVersion: 2,
  status: 'submitted',
  statusLabel: 'Waiting for review',
  engineVersion: '1.2.0',
  recipe: {},
  measurements: null,
  author: PRIYA,
  submittedBy: PRIYA,
  approvedBy: null,
  approvedAt: null,
  superseded: false,
  createdAt: '2026-11-20T09:30:00.000Z',
  updatedAt: '2026-11-20T10:00:00.000Z',
}

function comment(id: number, author: { id: number; name: string } | null, body: string, at: { x: number; y: number } | null, overrides: Partial<CommentDto> = {}): CommentDto {
  return { id, analysisId: 5, author, body, x: at?.x ?? null, y: at?.y ?? null, resolved: false, resolvedAt: null, createdAt: '2026-11-20T11:00:00.000Z', ...overrides }
}

const WALL_GAP = comment(31, JONAS, 'The wall breaks here although the contrast continues.', { x: 140, y: 212 }, { createdAt: '2026-11-20T11:00:00.000Z' })
const THRESHOLD = comment(32, PRIYA, 'I used Otsu on the flattened frame; the dust at the edge is masked out.', null, { createdAt: '2026-11-20T11:20:00.000Z' })
const BUBBLE = comment(33, JONAS, 'This bubble domain is counted twice.', { x: 388.5, y: 61 }, { createdAt: '2026-11-20T11:45:00.000Z', resolved: true, resolvedAt: '2026-11-21T08:10:00.000Z' })

type Handler = (request: RecordedRequest) => Response | Promise<Response>

/** The comments panel of the review page, over analysis 5 opened in the reviews store with `comments`. */
async function mountComments(comments: CommentDto[], options: { canComment?: boolean; draftPin?: Point | null; handlers?: Record<string, Handler> } = {}) {
  const requests = stubFetch({
    'GET /api/analyses/5': () => jsonResponse(200, ANALYSIS),
    'GET /api/images/9': () => jsonResponse(200, imageDetailDto({ id: 9, name: 'KB24-A300_remanent.tif', frameCount: 1 })),
    'GET /api/analyses/5/comments': () => jsonResponse(200, comments),
    'GET /api/analyses/5/history': () => jsonResponse(200, { analysisId: 5, reviews: [], audit: [] }),
    'GET /api/frames/11/analysis': () => jsonResponse(200, null),
    ...options.handlers,
  })
  await useReviewsStore().open(5)
  const wrapper = mount(ReviewComments, {
    props: {
      selectedCommentId: null,
      canComment: options.canComment ?? true,
      draftPin: options.draftPin ?? null,
      'onUpdate:draftPin': (point: Point | null) => wrapper.setProps({ draftPin: point }),
    },
    global: { plugins: [pinia, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountComments>>['wrapper']

/** Each listed comment as a person reads it: its marker (pin number or general), author, body. */
const listed = (wrapper: Wrapper) =>
  wrapper.findAll('.review-comments__item').map((item) => ({
    marker: item.get('.review-comments__pin').attributes('aria-label')!.replace(': show it on the image', ''),
    author: item.get('strong').text(),
    body: item.get('.review-comments__body').text(),
  }))
const heading = (wrapper: Wrapper) => wrapper.get('#review-comments-title').text()
const textarea = (wrapper: Wrapper) => wrapper.get<HTMLTextAreaElement>('textarea[aria-label="New comment"]')
const posts = (requests: RecordedRequest[]) => requests.filter((r) => r.method === 'POST')
const patches = (requests: RecordedRequest[]) => requests.filter((r) => r.method === 'PATCH')
/** Toasts (ElMessage) are added at the end of the body. */
const toasts = () => [...document.body.querySelectorAll('.el-message')].map((m) => m.textContent?.trim())

async function send(wrapper: Wrapper): Promise<void> {
  await wrapper.get('form').trigger('submit')
  await flushPromises()
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ReviewComments, the list', () => {
  it('When an analysis has pinned and general comments, then pinned ones are numbered in the order they were made, general ones say so, and the heading counts the open ones', async () => {
    const { wrapper } = await mountComments([WALL_GAP, THRESHOLD, BUBBLE])

    expect(listed(wrapper)).toEqual([
      { marker: 'Pin 1', author: 'Jonas Adeyemi', body: WALL_GAP.body },
      { marker: 'General comment', author: 'Priya Raman', body: THRESHOLD.body },
      { marker: 'Pin 2', author: 'Jonas Adeyemi', body: BUBBLE.body },
    ])
    // Two of the three are open (the bubble one is resolved).
    expect(heading(wrapper)).toBe('Comments (2 open of 3)')
    const items = wrapper.findAll('.review-comments__item')
    expect(items.map((item) => item.find('.el-tag').exists() ? item.get('.el-tag').text() : null)).toEqual([null, null, 'Resolved'])
    expect(items[1].get('.review-comments__meta').text()).toContain(dateTime.format(new Date('2026-11-20T11:20:00.000Z')))
  })

  it('When a comment’s author no longer has an account, then it reads as from someone', async () => {
    const { wrapper } = await mountComments([comment(34, null, 'Check the scale bar calibration.', null)])
    expect(listed(wrapper)).toEqual([{ marker: 'General comment', author: 'Someone', body: 'Check the scale bar calibration.' }])
  })

  it('When there are no comments, then the list says so and counts none open', async () => {
    const { wrapper } = await mountComments([])
    expect(wrapper.get('.review-comments__list').text()).toBe('No comments yet.')
    expect(heading(wrapper)).toBe('Comments (0 open of 0)')
  })

  it('When a pinned comment is clicked, then it is selected; clicking a general comment selects nothing', async () => {
    const { wrapper } = await mountComments([WALL_GAP, THRESHOLD, BUBBLE])
    const items = wrapper.findAll('.review-comments__item')
    await items[2].trigger('click')
    await items[1].trigger('click')
    expect(wrapper.emitted('select')).toEqual([[BUBBLE.id]])
  })

  it('When a keyboard user reaches a pin, then it is a button that shows the comment on the image and says whether it is shown', async () => {
    const { wrapper } = await mountComments([WALL_GAP, THRESHOLD, BUBBLE])
    const pins = wrapper.findAll('button.review-comments__pin')
    expect(pins.map((pin) => pin.attributes('aria-label'))).toEqual(['Pin 1: show it on the image', 'Pin 2: show it on the image'])
    expect(pins.map((pin) => pin.attributes('aria-pressed'))).toEqual(['false', 'false'])
    await pins[1].trigger('click')
    expect(wrapper.emitted('select')).toEqual([[BUBBLE.id]])
    await wrapper.setProps({ selectedCommentId: BUBBLE.id })
    expect(wrapper.findAll('button.review-comments__pin').map((pin) => pin.attributes('aria-pressed'))).toEqual(['false', 'true'])
  })
})

describe('ReviewComments, adding one', () => {
  it('When a point is pinned and a comment added, then the trimmed text and the point in image pixels are sent, the comment becomes the next pin and is selected, and the form is cleared', async () => {
    const point = { x: 212.4, y: 87.5 }
    const text = 'The mask misses the thin wall between the two bubbles.'
    const { wrapper, requests } = await mountComments([WALL_GAP, THRESHOLD], {
      draftPin: point,
      handlers: { 'POST /api/analyses/5/comments': () => jsonResponse(201, comment(40, JONAS, text, point, { createdAt: '2026-11-21T09:00:00.000Z' })) },
    })
    expect(wrapper.get('.review-comments__where').text()).toContain('Pinned at x 212.4, y 87.5 px')

    await textarea(wrapper).setValue(`  ${text}\n`)
    await send(wrapper)

    expect(posts(requests).map((r) => ({ url: r.url, body: r.body }))).toEqual([{ url: '/api/analyses/5/comments', body: { body: text, x: 212.4, y: 87.5 } }])
    expect(listed(wrapper).at(-1)).toEqual({ marker: 'Pin 2', author: 'Jonas Adeyemi', body: text })
    expect(heading(wrapper)).toBe('Comments (3 open of 3)')
    expect(wrapper.emitted('select')).toEqual([[40]])
    expect(wrapper.props('draftPin')).toBeNull()
    expect(textarea(wrapper).element.value).toBe('')
    expect(wrapper.get('.review-comments__where').text()).toContain('General comment')
    // The server records the comment in the analysis' history, which the page then shows without a reload.
    expect(requests.filter((r) => r.url === '/api/analyses/5/history')).toHaveLength(2)
  })

  it('When the pin is removed before sending, then the comment goes out as a general one, without a point', async () => {
    const text = 'Please add the field value to the frame notes.'
    const { wrapper, requests } = await mountComments([], {
      draftPin: { x: 20, y: 30 },
      handlers: { 'POST /api/analyses/5/comments': () => jsonResponse(201, comment(41, JONAS, text, null)) },
    })
    await getButton(wrapper, 'Remove pin').trigger('click')
    await flushPromises()
    expect(wrapper.props('draftPin')).toBeNull()
    expect(posts(requests)).toEqual([])

    await textarea(wrapper).setValue(text)
    await send(wrapper)
    expect(posts(requests).map((r) => r.body)).toEqual([{ body: text }])
    expect(listed(wrapper)).toEqual([{ marker: 'General comment', author: 'Jonas Adeyemi', body: text }])
  })

  it('When the text is empty or only spaces, then Add comment is disabled and submitting the form sends nothing', async () => {
    const { wrapper, requests } = await mountComments([], { draftPin: { x: 20, y: 30 } })
    expect(getButton(wrapper, 'Add comment').element.disabled).toBe(true)
    await send(wrapper)

    await textarea(wrapper).setValue('   \n  ')
    expect(getButton(wrapper, 'Add comment').element.disabled).toBe(true)
    await send(wrapper)

    expect(posts(requests)).toEqual([])
    // Nothing was taken away: the pin is still there for a real comment.
    expect(wrapper.props('draftPin')).toEqual({ x: 20, y: 30 })
    expect(wrapper.emitted('select')).toBeUndefined()
  })

  it('When the server refuses the comment, then its message is shown and the typed text and the pin stay, with nothing added', async () => {
    const text = 'Is this a domain or a scratch on the film?'
    const message = 'The point (600, 87.5) is outside the 512 × 512 image.'
    const { wrapper, requests } = await mountComments([WALL_GAP], {
      draftPin: { x: 600, y: 87.5 },
      handlers: { 'POST /api/analyses/5/comments': () => errorResponse(400, 'point-outside-image', message) },
    })
    await textarea(wrapper).setValue(text)
    await send(wrapper)

    await vi.waitFor(() => expect(toasts()).toEqual([message]))
    expect(posts(requests)).toHaveLength(1)
    expect(textarea(wrapper).element.value).toBe(text)
    expect(wrapper.props('draftPin')).toEqual({ x: 600, y: 87.5 })
    expect(listed(wrapper).map((c) => c.body)).toEqual([WALL_GAP.body])
    expect(wrapper.emitted('select')).toBeUndefined()
    // The button is usable again for a second try.
    expect(getButton(wrapper, 'Add comment').element.disabled).toBe(false)
  })
})

describe('ReviewComments, resolving', () => {
  it('When an open comment is marked resolved, then the server is told, it shows Resolved and the open count falls', async () => {
    const { wrapper, requests } = await mountComments([WALL_GAP, THRESHOLD], {
      handlers: { 'PATCH /api/analyses/5/comments/31': () => jsonResponse(200, { ...WALL_GAP, resolved: true, resolvedAt: '2026-11-21T09:00:00.000Z' }) },
    })
    const first = () => wrapper.findAll('.review-comments__item')[0]
    await first().get('button.el-button').trigger('click')
    await flushPromises()

    expect(patches(requests).map((r) => ({ url: r.url, body: r.body }))).toEqual([{ url: '/api/analyses/5/comments/31', body: { resolved: true } }])
    expect(first().get('.el-tag').text()).toBe('Resolved')
    expect(first().get('button.el-button').text()).toBe('Reopen')
    expect(heading(wrapper)).toBe('Comments (1 open of 2)')
    // Resolving is not selecting, even on a pinned comment.
    expect(wrapper.emitted('select')).toBeUndefined()
    // The history is asked for again, now with the resolution in it.
    expect(requests.filter((r) => r.url === '/api/analyses/5/history')).toHaveLength(2)
  })

  it('When the history cannot be reloaded after resolving, then the comment is still resolved and no error is shown', async () => {
    let historyCalls = 0
    const { wrapper } = await mountComments([WALL_GAP], {
      handlers: {
        'PATCH /api/analyses/5/comments/31': () => jsonResponse(200, { ...WALL_GAP, resolved: true, resolvedAt: '2026-11-21T09:00:00.000Z' }),
        'GET /api/analyses/5/history': () => (++historyCalls === 1 ? jsonResponse(200, { analysisId: 5, reviews: [], audit: [] }) : errorResponse(503, 'unavailable', 'The database is not answering.')),
      },
    })
    await wrapper.findAll('.review-comments__item')[0].get('button.el-button').trigger('click')
    await flushPromises()
    expect(historyCalls).toBe(2)
    expect(wrapper.findAll('.review-comments__item')[0].get('.el-tag').text()).toBe('Resolved')
    expect(toasts()).toEqual([])
    expect(useReviewsStore().history).toEqual({ analysisId: 5, reviews: [], audit: [] })
  })

  it('When a resolved comment is reopened, then the server is told and it counts as open again', async () => {
    const { wrapper, requests } = await mountComments([BUBBLE], {
      handlers: { 'PATCH /api/analyses/5/comments/33': () => jsonResponse(200, { ...BUBBLE, resolved: false, resolvedAt: null }) },
    })
    expect(heading(wrapper)).toBe('Comments (0 open of 1)')
    await getButton(wrapper, 'Reopen').trigger('click')
    await flushPromises()

    expect(patches(requests).map((r) => r.body)).toEqual([{ resolved: false }])
    expect(wrapper.find('.el-tag').exists()).toBe(false)
    expect(getButton(wrapper, 'Mark resolved').exists()).toBe(true)
    expect(heading(wrapper)).toBe('Comments (1 open of 1)')
  })

  it('When resolving is refused, then the message is shown and the comment stays open', async () => {
    const message = 'No comment 31 on this analysis.'
    const { wrapper } = await mountComments([WALL_GAP], {
      handlers: { 'PATCH /api/analyses/5/comments/31': () => errorResponse(404, 'not-found', message) },
    })
    await getButton(wrapper, 'Mark resolved').trigger('click')
    await flushPromises()

    await vi.waitFor(() => expect(toasts()).toEqual([message]))
    expect(wrapper.find('.el-tag').exists()).toBe(false)
    expect(heading(wrapper)).toBe('Comments (1 open of 1)')
  })
})

describe('ReviewComments, who may do what', () => {
  // The server (server/services/reviewService.ts) lets anyone with comment.write resolve or reopen any comment on the
  // analysis, whoever wrote it; the page passes canComment from that same permission.
  it('When the person may comment, then every comment offers resolving or reopening, their own and other people’s alike', async () => {
    const { wrapper } = await mountComments([WALL_GAP, THRESHOLD, BUBBLE])
    expect(wrapper.findAll('.review-comments__item').map((item) => item.findAll('button.el-button').map((b) => b.text()))).toEqual([['Mark resolved'], ['Mark resolved'], ['Reopen']])
    expect(wrapper.find('textarea[aria-label="New comment"]').exists()).toBe(true)
  })

  it('When the person may not comment, then the comments are still listed but there is no form and nothing to resolve or reopen', async () => {
    const { wrapper } = await mountComments([WALL_GAP, THRESHOLD, BUBBLE], { canComment: false, draftPin: { x: 20, y: 30 } })
    expect(listed(wrapper).map((c) => c.marker)).toEqual(['Pin 1', 'General comment', 'Pin 2'])
    // Only the pins, which show a comment on the image, are buttons; nothing to resolve or reopen.
    expect(wrapper.findAll('button').map((b) => b.attributes('class'))).toEqual(wrapper.findAll('button').map(() => 'review-comments__pin'))
    expect(wrapper.findAll('button.el-button')).toEqual([])
    expect(wrapper.find('form').exists()).toBe(false)
    expect(wrapper.find('textarea').exists()).toBe(false)
    expect(wrapper.text()).not.toContain('Pinned at')
  })
})
