import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { ReviewQueueItemDto } from '@shared/types/review'
import { createAppRouter } from '@/router'
import ReviewQueueTable from '@/components/ReviewQueueTable.vue'
import { jsonResponse, stubFetch } from '../fakeApi'

let pinia: Pinia
let router: Router

const JONAS = { id: 7, name: 'Jonas Adeyemi' }
const PRIYA = { id: 4, name: 'Priya Raman' }

// Expected dates come from Intl with the options of src/formatDateTime.ts, in this test's locale.
const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' })

const EMPTY_TEXT = 'Nothing is waiting for review.'
const NOTE = 'Threshold lowered to 0.42 so the thin walls near the film edge stay connected; the dust particle is masked out on purpose.'

function queueItem(overrides: Partial<ReviewQueueItemDto> = {}): ReviewQueueItemDto {
  return {
    analysisId: 5,
    status: 'submitted',
    statusLabel: 'Waiting for review',
    labId: 1,
    project: { id: 1, name: 'KB-24 anneal series' },
    image: { id: 9, name: 'KB24-A300_remanent.tif', frameCount: 1 },
    frame: { id: 11, index: 0, field: null, fieldUnit: null, temperatureK: null },
    sample: { id: 3, name: 'KB24-A300' },
    author: PRIYA,
    submittedBy: PRIYA,
    submittedAt: '2026-11-20T10:00:00.000Z',
    submitNote: '',
    annotationVersion: 2,
    openComments: 0,
    superseded: false,
    updatedAt: '2026-11-20T10:00:00.000Z',
    ...overrides,
  }
}

/** A single-frame image submitted by its annotator with a note. */
const REMANENT = queueItem({ submitNote: NOTE })
/** Frame 12 of a 41-frame field sweep, on the automatic mask, submitted by the reviewer for the annotator, sent back once. */
const SWEEP = queueItem({
  analysisId: 6,
  project: { id: 1, name: 'KB-24 anneal series' },
  image: { id: 12, name: 'KB24-A300_field-sweep.tif', frameCount: 41 },
  frame: { id: 52, index: 12, field: 12.5, fieldUnit: 'mT', temperatureK: 300 },
  sample: null,
  submittedBy: JONAS,
  submittedAt: '2026-11-21T08:40:00.000Z',
  annotationVersion: null,
  openComments: 1,
  superseded: true,
})
/** An analysis whose author's account is gone, never submitted, with several open comments. */
const ORPHAN = queueItem({ analysisId: 7, author: null, submittedBy: null, submittedAt: null, openComments: 3, annotationVersion: 4 })

async function mountTable(props: { items: ReviewQueueItemDto[]; loading?: boolean; emptyText?: string }) {
  // Only the router asks the network: who is signed in, before each navigation.
  const requests = stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, { id: 7, email: 'jonas.adeyemi@thin-film.example', name: 'Jonas Adeyemi', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' }], csrfToken: 't' }),
  })
  router = createAppRouter(createMemoryHistory())
  await router.push('/review')
  const wrapper = mount(ReviewQueueTable, {
    props: { items: props.items, loading: props.loading ?? false, emptyText: props.emptyText ?? EMPTY_TEXT },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountTable>>['wrapper']

const headers = (wrapper: Wrapper) => wrapper.findAll('thead th').map((th) => th.text())
const rows = (wrapper: Wrapper) => wrapper.findAll('tbody tr').map((row) => row.findAll('td').map((cell) => cell.text()))
const column = (wrapper: Wrapper, label: string) => {
  const index = headers(wrapper).indexOf(label)
  if (index < 0) throw new Error(`No column "${label}"`)
  return rows(wrapper).map((cells) => cells[index])
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ReviewQueueTable', () => {
  it('When analyses are listed, then each row shows the image with its project and sample, frame, condition, annotator, submission, mask and notes', async () => {
    const { wrapper, requests } = await mountTable({ items: [REMANENT, SWEEP, ORPHAN] })

    // The table shows what it is given: nothing asked of the server beyond the router's sign-in check.
    expect(requests.map((r) => r.url)).toEqual(['/api/auth/me'])
    expect(wrapper.attributes('aria-label')).toBe('Review queue')
    expect(headers(wrapper)).toEqual(['Image', 'Frame', 'Condition', 'Annotated by', 'Submitted', 'Mask', 'Notes', ''])
    const images = wrapper.findAll('tbody tr').map((row) => row.findAll('td')[headers(wrapper).indexOf('Image')])
    expect(images.map((cell) => [cell.get('.review-queue-table__image').text(), cell.get('.review-queue-table__sub').text()])).toEqual([
      ['KB24-A300_remanent.tif', 'KB-24 anneal series · KB24-A300'],
      ['KB24-A300_field-sweep.tif', 'KB-24 anneal series'],
      ['KB24-A300_remanent.tif', 'KB-24 anneal series · KB24-A300'],
    ])
    // A stack gives the frame's index of the last one (41 frames: 0 to 40); a single frame says so.
    expect(column(wrapper, 'Frame')).toEqual(['single', '12 / 40', 'single'])
    expect(column(wrapper, 'Condition')).toEqual(['—', '12.5 mT · 300 K', '—'])
    expect(column(wrapper, 'Annotated by')).toEqual(['Priya Raman', 'Priya Raman', '—'])
    expect(column(wrapper, 'Mask')).toEqual(['v2', 'auto', 'v4'])
  })

  it('When someone other than the annotator submitted, then the submission names them under its date; a missing date reads as a dash', async () => {
    const { wrapper } = await mountTable({ items: [REMANENT, SWEEP, ORPHAN] })
    const submitted = wrapper.findAll('tbody tr').map((row) => row.findAll('td')[headers(wrapper).indexOf('Submitted')])

    expect(submitted[0].text()).toBe(dateTime.format(new Date('2026-11-20T10:00:00.000Z')))
    expect(submitted[1].text()).toContain(dateTime.format(new Date('2026-11-21T08:40:00.000Z')))
    expect(submitted[1].get('.review-queue-table__sub').text()).toBe('by Jonas Adeyemi')
    expect(submitted[2].text()).toBe('—')
  })

  it('When the submitter left a note, then it is quoted with the whole of it in the tooltip, beside the open comments and a newer-mask warning', async () => {
    const { wrapper } = await mountTable({ items: [REMANENT, SWEEP, ORPHAN] })
    const notes = wrapper.findAll('tbody tr').map((row) => row.findAll('td')[headers(wrapper).indexOf('Notes')])

    const quoted = notes[0].get('.review-queue-table__note')
    expect(quoted.text()).toBe(`“${NOTE}”`)
    expect(quoted.attributes('title')).toBe(NOTE)
    expect(notes[0].findAll('.el-tag')).toEqual([])

    expect(notes[1].find('.review-queue-table__note').exists()).toBe(false)
    expect(notes[1].findAll('.el-tag').map((t) => t.text())).toEqual(['1 open comment', 'Newer mask exists'])
    expect(notes[2].findAll('.el-tag').map((t) => t.text())).toEqual(['3 open comments'])
  })

  it('When Open is pressed on a row, then that analysis’ review page opens', async () => {
    const { wrapper } = await mountTable({ items: [REMANENT, SWEEP] })
    const open = wrapper.findAll('button').filter((b) => b.text() === 'Open')
    expect(open.map((b) => b.attributes('aria-label'))).toEqual(['Open the analysis of KB24-A300_remanent.tif, frame 0', 'Open the analysis of KB24-A300_field-sweep.tif, frame 12'])

    await open[1].trigger('click')
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/analyses/6'), { timeout: 10_000 })
    expect(router.currentRoute.value.name).toBe('analysis-review')
  })

  it('When the queue is empty, then the table says the given empty text', async () => {
    const { wrapper } = await mountTable({ items: [] })
    expect(wrapper.findAll('tbody tr')).toEqual([])
    expect(wrapper.get('.el-empty').text()).toBe(EMPTY_TEXT)
  })

  it('When the queue is still loading, then no empty text claims there is nothing, until the answer comes', async () => {
    const { wrapper } = await mountTable({ items: [], loading: true })
    expect(wrapper.find('.el-loading-mask').exists()).toBe(true)
    expect(wrapper.find('.el-empty').exists()).toBe(false)
    expect(wrapper.text()).not.toContain(EMPTY_TEXT)

    await wrapper.setProps({ loading: false })
    await flushPromises()
    expect(wrapper.get('.el-empty').text()).toBe(EMPTY_TEXT)
  })
})
