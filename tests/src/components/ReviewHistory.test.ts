import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { AnalysisHistoryDto, AuditEventDto, ReviewDto } from '@shared/types/review'
import ReviewHistory from '@/components/ReviewHistory.vue'

const JONAS = { id: 7, name: 'Jonas Adeyemi' }
const PRIYA = { id: 4, name: 'Priya Raman' }

// Expected dates come from Intl with the options of src/formatDateTime.ts, in this test's locale.
const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' })
const shown = (iso: string) => dateTime.format(new Date(iso))

const CREATED = { at: '2026-11-20T09:30:00.000Z', by: 'Priya Raman' }
const SUBMIT_NOTE = 'Threshold lowered to 0.42 so the thin walls near the edge of KB24-A300_remanent.tif stay connected.'
const CHANGES_NOTE = 'Two bubbles at the top right are merged; please split them.'

function event(id: number, action: string, actor: AuditEventDto['actor'], createdAt: string, before: AuditEventDto['before'], after: AuditEventDto['after']): AuditEventDto {
  return { id, action, actor, before, after, createdAt }
}

/** One round of review as the server records it (oldest first): submitted, a comment, sent back, resolved, resubmitted, approved. */
const AUDIT: AuditEventDto[] = [
  event(101, 'analysis.submit', PRIYA, '2026-11-20T10:00:00.000Z', { status: 'draft', frameStatus: 'in-progress' }, { status: 'submitted', frameStatus: 'submitted', message: SUBMIT_NOTE }),
  event(102, 'comment.create', JONAS, '2026-11-20T11:00:00.000Z', null, { commentId: 31 }),
  event(103, 'analysis.request-changes', JONAS, '2026-11-20T11:30:00.000Z', { status: 'submitted', frameStatus: 'submitted' }, { status: 'changes-requested', frameStatus: 'in-progress', message: CHANGES_NOTE }),
  event(104, 'comment.resolve', PRIYA, '2026-11-21T08:10:00.000Z', null, { commentId: 31 }),
  event(105, 'analysis.submit', PRIYA, '2026-11-21T08:40:00.000Z', { status: 'changes-requested', frameStatus: 'in-progress' }, { status: 'submitted', frameStatus: 'submitted' }),
  event(106, 'analysis.approve', JONAS, '2026-11-21T10:05:00.000Z', { status: 'submitted', frameStatus: 'submitted' }, { status: 'approved', frameStatus: 'submitted', approvedAt: '2026-11-21T10:05:00.000Z' }),
]

function history(audit: AuditEventDto[], reviews: ReviewDto[] = []): AnalysisHistoryDto {
  return { analysisId: 5, reviews, audit }
}

function mountHistory(shownHistory: AnalysisHistoryDto, created: { at: string; by: string | null } = CREATED) {
  return mount(ReviewHistory, { props: { history: shownHistory, created }, global: { plugins: [ElementPlus] }, attachTo: document.body })
}

type Wrapper = ReturnType<typeof mountHistory>

/** Each line of the timeline as a person reads it, top to bottom. */
const entries = (wrapper: Wrapper) =>
  wrapper.findAll('.el-timeline-item').map((item) => ({
    at: item.get('.el-timeline-item__timestamp').text(),
    what: item.get('.review-history__what').text(),
    changes: item.findAll('.review-history__change').map((c) => c.text()),
    message: item.find('blockquote').exists() ? item.get('blockquote').text() : null,
  }))

describe('ReviewHistory', () => {
  it('When the analysis went through a round of review, then every step is listed newest first, with who did it, the changes in words and the date', async () => {
    const wrapper = mountHistory(history(AUDIT))
    await flushPromises()

    expect(wrapper.get('#review-history-title').text()).toBe('History')
    expect(entries(wrapper)).toEqual([
      { at: shown('2026-11-21T10:05:00.000Z'), what: 'Jonas Adeyemi · Approved', changes: ['Status: Waiting for review → Approved'], message: null },
      { at: shown('2026-11-21T08:40:00.000Z'), what: 'Priya Raman · Submitted for review', changes: ['Status: Changes requested → Waiting for review', 'Frame: In progress → Submitted'], message: null },
      { at: shown('2026-11-21T08:10:00.000Z'), what: 'Priya Raman · Resolved a comment', changes: [], message: null },
      { at: shown('2026-11-20T11:30:00.000Z'), what: 'Jonas Adeyemi · Asked for changes', changes: ['Status: Waiting for review → Changes requested', 'Frame: Submitted → In progress'], message: CHANGES_NOTE },
      { at: shown('2026-11-20T11:00:00.000Z'), what: 'Jonas Adeyemi · Added a comment', changes: [], message: null },
      { at: shown('2026-11-20T10:00:00.000Z'), what: 'Priya Raman · Submitted for review', changes: ['Status: Draft → Waiting for review', 'Frame: In progress → Submitted'], message: SUBMIT_NOTE },
      { at: shown('2026-11-20T09:30:00.000Z'), what: 'Priya Raman · Saved the mask; measured', changes: ['Status: Draft'], message: null },
    ])
  })

  it('When the events arrive out of time order, then the timeline still reads newest first', async () => {
    const wrapper = mountHistory(history([AUDIT[2], AUDIT[0], AUDIT[1]]))
    await flushPromises()
    expect(entries(wrapper).map((e) => e.what)).toEqual([
      'Jonas Adeyemi · Asked for changes',
      'Jonas Adeyemi · Added a comment',
      'Priya Raman · Submitted for review',
      'Priya Raman · Saved the mask; measured',
    ])
  })

  it('When the submitter wrote a note, then it is quoted under their step in full, and a reopened comment is worded as such', async () => {
    const note = 'Frame 0 only.\nThe dust particle at (30, 480) is masked out on purpose.'
    const wrapper = mountHistory(
      history([
        event(201, 'analysis.submit', PRIYA, '2026-11-22T09:00:00.000Z', { status: 'draft', frameStatus: 'submitted' }, { status: 'submitted', frameStatus: 'submitted', message: note }),
        event(202, 'comment.reopen', JONAS, '2026-11-22T10:00:00.000Z', null, { commentId: 31 }),
      ]),
    )
    await flushPromises()
    const [reopened, submitted] = entries(wrapper)
    expect(reopened).toEqual({ at: shown('2026-11-22T10:00:00.000Z'), what: 'Jonas Adeyemi · Reopened a comment', changes: [], message: null })
    // The frame was already marked submitted, so only the status changed.
    expect(submitted.changes).toEqual(['Status: Draft → Waiting for review'])
    expect(wrapper.findAll('blockquote').map((q) => q.element.textContent)).toEqual([note])
  })

  it('When an older record has workflow steps but no audit events, then the steps come from the reviews, worded the same way, with their notes', async () => {
    const reviews: ReviewDto[] = [
      { id: 1, analysisId: 5, fromStatus: 'draft', toStatus: 'submitted', message: SUBMIT_NOTE, by: PRIYA, createdAt: '2026-11-20T10:00:00.000Z' },
      { id: 2, analysisId: 5, fromStatus: 'submitted', toStatus: 'changes-requested', message: CHANGES_NOTE, by: JONAS, createdAt: '2026-11-20T11:30:00.000Z' },
      { id: 3, analysisId: 5, fromStatus: 'changes-requested', toStatus: 'submitted', message: '', by: PRIYA, createdAt: '2026-11-21T08:40:00.000Z' },
      { id: 4, analysisId: 5, fromStatus: 'submitted', toStatus: 'approved', message: '', by: JONAS, createdAt: '2026-11-21T10:05:00.000Z' },
    ]
    const wrapper = mountHistory(history([], reviews))
    await flushPromises()
    expect(entries(wrapper)).toEqual([
      { at: shown('2026-11-21T10:05:00.000Z'), what: 'Jonas Adeyemi · Approved', changes: ['Status: Waiting for review → Approved'], message: null },
      { at: shown('2026-11-21T08:40:00.000Z'), what: 'Priya Raman · Submitted for review', changes: ['Status: Changes requested → Waiting for review'], message: null },
      { at: shown('2026-11-20T11:30:00.000Z'), what: 'Jonas Adeyemi · Asked for changes', changes: ['Status: Waiting for review → Changes requested'], message: CHANGES_NOTE },
      { at: shown('2026-11-20T10:00:00.000Z'), what: 'Priya Raman · Submitted for review', changes: ['Status: Draft → Waiting for review'], message: SUBMIT_NOTE },
      { at: shown('2026-11-20T09:30:00.000Z'), what: 'Priya Raman · Saved the mask; measured', changes: ['Status: Draft'], message: null },
    ])
  })

  it('When an older record has audited comments but unaudited steps, then both show: the steps from the reviews, the comments from the audit', async () => {
    const reviews: ReviewDto[] = [
      { id: 1, analysisId: 5, fromStatus: 'draft', toStatus: 'submitted', message: SUBMIT_NOTE, by: PRIYA, createdAt: '2026-11-20T10:00:00.000Z' },
      { id: 2, analysisId: 5, fromStatus: 'submitted', toStatus: 'changes-requested', message: CHANGES_NOTE, by: JONAS, createdAt: '2026-11-20T11:30:00.000Z' },
    ]
    const comments = AUDIT.filter((e) => e.action.startsWith('comment.'))
    const wrapper = mountHistory(history(comments, reviews))
    await flushPromises()
    expect(entries(wrapper).map((e) => e.what)).toEqual([
      'Priya Raman · Resolved a comment',
      'Jonas Adeyemi · Asked for changes',
      'Jonas Adeyemi · Added a comment',
      'Priya Raman · Submitted for review',
      'Priya Raman · Saved the mask; measured',
    ])
    // Once steps are audited, the reviews table is not read again (each step would show twice).
    const audited = mountHistory(history(AUDIT, reviews))
    await flushPromises()
    expect(entries(audited).filter((e) => e.what.endsWith('Submitted for review'))).toHaveLength(2)
  })

  it('When nothing happened since the mask was saved, then the history is that one line', async () => {
    const wrapper = mountHistory(history([]))
    await flushPromises()
    expect(entries(wrapper)).toEqual([{ at: shown(CREATED.at), what: 'Priya Raman · Saved the mask; measured', changes: ['Status: Draft'], message: null }])
  })

  it('When the people behind a step no longer have accounts, then the steps read as by someone', async () => {
    const wrapper = mountHistory(
      history([event(301, 'analysis.approve', null, '2026-11-21T10:05:00.000Z', { status: 'submitted', frameStatus: 'submitted' }, { status: 'approved', frameStatus: 'submitted' })]),
      { at: CREATED.at, by: null },
    )
    await flushPromises()
    expect(entries(wrapper).map((e) => e.what)).toEqual(['Someone · Approved', 'Someone · Saved the mask; measured'])
  })

  it('When steps are approvals, requests for changes or submissions, then their markers have the colours of success, danger and warning', async () => {
    const wrapper = mountHistory(history(AUDIT.filter((e) => e.action.startsWith('analysis.'))))
    await flushPromises()
    const node = (i: number) => wrapper.findAll('.el-timeline-item__node')[i].classes()
    // Newest first: approve, resubmit, request changes, submit, created.
    expect(node(0)).toContain('el-timeline-item__node--success')
    expect(node(1)).toContain('el-timeline-item__node--warning')
    expect(node(2)).toContain('el-timeline-item__node--danger')
    expect(node(3)).toContain('el-timeline-item__node--warning')
    expect(node(4)).toContain('el-timeline-item__node--primary')
  })
})
