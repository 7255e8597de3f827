import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import { maskToBase64 } from '@shared/imageio/maskEncoding'
import type { AnalysisStatus } from '@shared/types/lab'
import type { ReviewedAnalysisDto } from '@shared/types/review'
import { createAppRouter } from '@/router'
import AnalysisReviewView from '@/views/AnalysisReviewView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'

const ME = 7
const SOMEONE_ELSE = { id: 3, name: 'Priya Raman' }
const WORKFLOW_BUTTONS = ['Submit for review', 'Approve', 'Ask for changes']

let pinia: Pinia

function analysis(status: AnalysisStatus, overrides: Partial<ReviewedAnalysisDto> = {}): ReviewedAnalysisDto {
  return {
    id: 5,
    frameId: 11,
    imageId: 9,
    labId: 1,
    annotationVersion: 2,
    status,
    statusLabel: status,
    engineVersion: '1.0.0',
    recipe: {},
    measurements: null,
    author: SOMEONE_ELSE,
    submittedBy: status === 'draft' ? null : SOMEONE_ELSE,
    approvedBy: null,
    approvedAt: null,
    superseded: false,
    createdAt: '2026-03-01T10:00:00Z',
    updatedAt: '2026-03-01T10:00:00Z',
    ...overrides,
  }
}

const IMAGE = {
  id: 9,
  name: 'anneal-300.tif',
  sha256: 'ab',
  width: 4,
  height: 4,
  bitDepth: 8,
  frameCount: 1,
  pixelSizeNm: 100,
  projectId: 2,
  sampleId: null,
  technique: 'kerr-polar',
  createdAt: '2026-03-01T09:00:00Z',
  acquiredAt: null,
  annotationStatus: 'submitted',
  notes: '',
  pixelSizeSource: null,
  mediaType: 'image/tiff',
  byteSize: 100,
  sample: null,
  frames: [{ id: 11, index: 0, field: null, fieldUnit: null, temperatureK: null, annotationStatus: 'submitted', assignee: null }],
}

const MASK = maskToBase64({ width: 4, height: 4, data: new Uint8Array(16).fill(1) })

async function mountReview(role: LabRole, shown: ReviewedAnalysisDto, extra: Parameters<typeof stubFetch>[0] = {}) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: ME, email: 'me@x.example', name: 'Me', memberships: [{ labId: 1, labName: 'Lab', role }], csrfToken: 't' }),
    'GET /api/analyses/5': () => jsonResponse(200, shown),
    'GET /api/images/9': () => jsonResponse(200, IMAGE),
    'GET /api/analyses/5/comments': () => jsonResponse(200, []),
    'GET /api/analyses/5/history': () => jsonResponse(200, { analysisId: 5, reviews: [], audit: [] }),
    'GET /api/frames/11/analysis': () => jsonResponse(200, null),
    'GET /api/frames/11/annotations/2': () => jsonResponse(200, { id: 1, version: 2, state: 'saved', basedOnVersion: 1, author: SOMEONE_ELSE, createdAt: '', frameId: 11, mask: MASK, shapes: [] }),
    ...extra,
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/analyses/5')
  const wrapper = mount(AnalysisReviewView, {
    props: { analysisId: 5 },
    // The canvas (Konva) and the measurements panel (charts) are other components' business: stubbed here.
    global: { plugins: [pinia, router, ElementPlus], stubs: { ReviewCanvas: true, WorkspaceResultsPanel: true } },
    attachTo: document.body,
  })
  await flushPromises()
  await vi.waitFor(() => expect(wrapper.find('[data-testid="review-status"]').exists()).toBe(true))
  return { wrapper, requests }
}

function workflowButtons(wrapper: Awaited<ReturnType<typeof mountReview>>['wrapper']): { text: string; disabled: boolean }[] {
  return wrapper
    .findAll('button')
    .map((b) => ({ text: b.text().trim(), disabled: (b.element as HTMLButtonElement).disabled }))
    .filter((b) => WORKFLOW_BUTTONS.includes(b.text))
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('AnalysisReviewView', () => {
  // The state machine of shared/types/review.ts with the roles of shared/auth/permissions.ts: submit needs
  // analysis.submit (admin, pi, annotator) from draft or changes-requested; approve and ask for changes need
  // analysis.review (admin, pi, reviewer) from submitted; a superseded analysis can only be sent back.
  it.each([
    { role: 'annotator', status: 'draft', expected: ['Submit for review'] },
    { role: 'annotator', status: 'changes-requested', expected: ['Submit for review'] },
    { role: 'annotator', status: 'submitted', expected: [] },
    { role: 'annotator', status: 'approved', expected: [] },
    { role: 'reviewer', status: 'draft', expected: [] },
    { role: 'reviewer', status: 'submitted', expected: ['Approve', 'Ask for changes'] },
    { role: 'reviewer', status: 'approved', expected: [] },
    { role: 'pi', status: 'submitted', expected: ['Approve', 'Ask for changes'] },
    { role: 'pi', status: 'changes-requested', expected: ['Submit for review'] },
    { role: 'microscopist', status: 'draft', expected: [] },
    { role: 'microscopist', status: 'submitted', expected: [] },
  ] as const)('When a $role opens an analysis that is $status, then the buttons are $expected', async ({ role, status, expected }) => {
    const { wrapper } = await mountReview(role, analysis(status))
    expect(workflowButtons(wrapper).map((b) => b.text)).toEqual(expected)
  })

  it('When a reviewer opens their own submitted analysis, then Approve is disabled with the reason and Ask for changes stays', async () => {
    const { wrapper } = await mountReview('reviewer', analysis('submitted', { submittedBy: { id: ME, name: 'Me' } }))
    expect(workflowButtons(wrapper)).toEqual([
      { text: 'Approve', disabled: true },
      { text: 'Ask for changes', disabled: false },
    ])
    expect(wrapper.text()).toContain('You made or submitted this analysis, so someone else approves it.')
  })

  it('When a newer mask superseded the analysis, then the reviewer can only send it back', async () => {
    const { wrapper } = await mountReview('reviewer', analysis('submitted', { superseded: true }))
    expect(workflowButtons(wrapper).map((b) => b.text)).toEqual(['Ask for changes'])
    expect(wrapper.text()).toContain('A newer mask exists')
  })

  it('When approving answers 409 illegal-transition, then the message is shown and the page shows the current state', async () => {
    let current = analysis('submitted')
    const message = 'An analysis that is "Approved" (approved) cannot become "Approved" (approved).'
    const { wrapper, requests } = await mountReview('reviewer', current, {
      'GET /api/analyses/5': () => jsonResponse(200, current),
      'POST /api/analyses/5/approve': () => {
        // Someone else approved it a moment earlier.
        current = analysis('approved', { approvedBy: { id: 4, name: 'Lars Berg' }, approvedAt: '2026-03-01T11:00:00Z' })
        return errorResponse(409, 'illegal-transition', message)
      },
    })
    await getButton(wrapper, 'Approve').trigger('click')
    await flushPromises()

    await vi.waitFor(() => expect(alertTexts(wrapper).join(' ')).toContain('This step is not possible from the current state'))
    expect(alertTexts(wrapper).join(' ')).toContain(message)
    expect(wrapper.get('[data-testid="review-status"]').text()).toBe('Approved')
    expect(workflowButtons(wrapper)).toEqual([])
    expect(requests.filter((r) => r.method === 'POST').map((r) => r.url)).toEqual(['/api/analyses/5/approve'])
  })

  it('When a reviewer approves another person’s analysis, then the status becomes Approved', async () => {
    const { wrapper, requests } = await mountReview('reviewer', analysis('submitted'), {
      'POST /api/analyses/5/approve': () => jsonResponse(200, analysis('approved', { approvedBy: { id: ME, name: 'Me' }, approvedAt: '2026-03-01T11:00:00Z' })),
    })
    await getButton(wrapper, 'Approve').trigger('click')
    await flushPromises()
    expect(wrapper.get('[data-testid="review-status"]').text()).toBe('Approved')
    expect(requests.find((r) => r.method === 'POST')?.headers.get('X-CSRF-Token')).toBe('t')
  })
})
