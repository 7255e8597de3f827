/**
 * The review workflow against the real PostgreSQL, s3rver and SMTP sink: the state machine (table-driven, from the
 * transitions and permissions tables both sides read), e-mails to the people concerned, Review and audit rows with
 * before/after, approved analyses staying locked when the mask is edited, pinned comments, the queue and the history.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { mailsTo, waitForMail } from './mailbox'
import { saveAutoMask, uploadImage, type Session } from './analysisFixtures'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { LAB_ROLES, roleAllows, type LabRole } from '../../shared/auth/permissions'
import { ANALYSIS_STATUSES, type AnalysisStatus } from '../../shared/types/lab'
import { REVIEW_TRANSITIONS, REVIEW_ACTIONS, type ReviewAction } from '../../shared/types/review'
import { Analysis, AuditEvent, Frame, Review, Sample } from '../../server/models'

const PIXEL_NM = 100

describe('review workflow', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  const s = {} as Record<LabRole | 'outsider', Session>
  // Fixed seeds: the same maze every run.
  const frames = [renderLabyrinth({ size: 128, periodPx: 16, seed: 21 }).image, renderLabyrinth({ size: 128, periodPx: 12, seed: 22 }).image]
  let frameIds: number[]
  let imageId: number
  let base: Analysis

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Review')
    for (const role of LAB_ROLES) s[role] = await signIn(ctx.app, home.people[role].email)
    const other = await createLabWithRoles('ReviewOther')
    s.outsider = await signIn(ctx.app, other.people.admin.email)
    const sample = await Sample.create({ projectId: home.project.id, name: 'CoFeB 300C', thicknessNm: 1.1, annealTemperatureC: 300, annealDurationMin: 60, annealFieldMT: null })
    ;({ imageId, frameIds } = await uploadImage(s.microscopist, home.project.id, { name: 'review-maze.tif', frames, pixelSizeNm: PIXEL_NM, sampleId: sample.id }))
    const saved = await saveAutoMask(s.annotator, frameIds[1], frames[1], PIXEL_NM)
    base = (await Analysis.findByPk(saved.id))!
  })
  afterAll(() => ctx.stop())

  const act = (who: Session, analysisId: number, action: ReviewAction, message?: string) =>
    who.agent.post(`/api/analyses/${analysisId}/${action}`).set('x-csrf-token', who.csrf).send(action === 'request-changes' ? { message: message ?? 'Please redo the walls near the edge.' } : message ? { message } : {})

  /** approvedFrameCount of the review image, as the image list and the image page give it. */
  const approvedFrames = async () => {
    const listed = await s.reviewer.agent.get(`/api/images?projectId=${home.project.id}&pageSize=100`)
    const detail = await s.reviewer.agent.get(`/api/images/${imageId}`)
    return { listed: listed.body.items.find((i: { id: number }) => i.id === imageId).approvedFrameCount, detail: detail.body.approvedFrameCount }
  }

  /** A fresh analysis in `status` that is the newest of its frame (so only the state machine decides). */
  const analysisIn = async (status: AnalysisStatus) =>
    Analysis.create({ frameId: base.frameId, annotationId: base.annotationId, recipe: base.recipe, engineVersion: base.engineVersion, results: base.results, status, createdById: base.createdById, approvedById: null, approvedAt: null, error: null })

  describe('POST /api/analyses/:analysisId/{submit,approve,request-changes}: the state machine', () => {
    const actorFor: Record<ReviewAction, LabRole> = { submit: 'annotator', approve: 'reviewer', 'request-changes': 'reviewer' }
    const cases = ANALYSIS_STATUSES.flatMap((from) => REVIEW_ACTIONS.map((action) => ({ from, action, legal: REVIEW_TRANSITIONS[action].from.includes(from), to: REVIEW_TRANSITIONS[action].to })))
    // The table itself, written out as the issue states it, so a change to REVIEW_TRANSITIONS is a visible decision.
    it('When the transitions table is read, then it is draft → submitted → approved | changes-requested → submitted', () => {
      expect(cases.filter((c) => c.legal).map((c) => `${c.from} -${c.action}-> ${c.to}`)).toEqual([
        'draft -submit-> submitted',
        'submitted -approve-> approved',
        'submitted -request-changes-> changes-requested',
        'changes-requested -submit-> submitted',
      ])
    })
    it.each(cases)('When $action is called on a $from analysis, then legal=$legal', async ({ from, action, legal, to }) => {
      const analysis = await analysisIn(from)
      const res = await act(s[actorFor[action]], analysis.id, action)
      const stored = (await Analysis.findByPk(analysis.id))!
      const reviews = await Review.findAll({ where: { analysisId: analysis.id } })
      if (legal) {
        expect(res.status, JSON.stringify(res.body)).toBe(200)
        expect(res.body.status).toBe(to)
        expect(stored.status).toBe(to)
        expect(reviews.map((r) => [r.fromStatus, r.toStatus, r.reviewerId])).toEqual([[from, to, home.people[actorFor[action]].id]])
      } else {
        expect(res.status).toBe(409)
        expect(res.body.error).toMatchObject({ code: 'illegal-transition', from, to })
        expect(res.body.error.message).toContain(from)
        expect(res.body.error.message).toContain(to)
        expect(stored.status).toBe(from)
        expect(reviews).toHaveLength(0)
      }
    })
  })

  describe('roles', () => {
    const startFor: Record<ReviewAction, AnalysisStatus> = { submit: 'draft', approve: 'submitted', 'request-changes': 'submitted' }
    const permissionFor = { submit: 'analysis.submit', approve: 'analysis.review', 'request-changes': 'analysis.review' } as const
    const cases = REVIEW_ACTIONS.flatMap((action) => LAB_ROLES.map((role) => ({ action, role, allowed: roleAllows(role, permissionFor[action]) })))
    it.each(cases)('When the $role calls $action, then allowed=$allowed (permissions table)', async ({ action, role, allowed }) => {
      const analysis = await analysisIn(startFor[action])
      const res = await act(s[role], analysis.id, action)
      expect(res.status, JSON.stringify(res.body)).toBe(allowed ? 200 : 403)
      if (!allowed) expect((await Analysis.findByPk(analysis.id))!.status).toBe(startFor[action])
    })
    it('When an admin of another lab calls any transition, then 404 (no existence leak)', async () => {
      const analysis = await analysisIn('submitted')
      for (const action of REVIEW_ACTIONS) expect((await act(s.outsider, analysis.id, action)).status).toBe(404)
    })
    it('When a PI approves an analysis they made, then 403 own-analysis; another reviewer may', async () => {
      const mine = await saveAutoMask(s.pi, frameIds[0], frames[0], PIXEL_NM)
      expect((await act(s.pi, mine.id, 'submit')).status).toBe(200)
      const own = await act(s.pi, mine.id, 'approve')
      expect(own.status).toBe(403)
      expect(own.body.error.code).toBe('own-analysis')
      expect((await act(s.admin, mine.id, 'approve')).status).toBe(200)
    })
  })

  describe('the whole round: submit, changes requested, resubmit, approve', () => {
    let analysisId: number
    let frameId: number

    it('When an annotator submits, then the frame is submitted, a Review and an audit row (before → after) exist and the lab\u2019s reviewers get an e-mail', async () => {
      frameId = frameIds[0]
      const saved = await saveAutoMask(s.annotator, frameId, frames[0], PIXEL_NM, (await latestVersion(frameId)) ?? null)
      analysisId = saved.id
      const res = await act(s.annotator, analysisId, 'submit', '  Corrected the walls along the scratch at the left edge.  ')
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ status: 'submitted', statusLabel: 'Waiting for review', submittedBy: { id: home.people.annotator.id }, superseded: false })
      expect((await Frame.findByPk(frameId))!.annotationStatus).toBe('submitted')
      const audit = await AuditEvent.findOne({ where: { entityType: 'analysis', entityId: analysisId, action: 'analysis.submit' } })
      expect(audit!.actorId).toBe(home.people.annotator.id)
      expect(audit!.before).toMatchObject({ status: 'draft' })
      expect(audit!.after).toMatchObject({ status: 'submitted', frameStatus: 'submitted' })
      // Reviewers = everyone whose role may review (reviewer, PI, admin), not the submitter.
      for (const role of ['reviewer', 'pi', 'admin'] as const) {
        const mail = await waitForMail(home.people[role].email, /Waiting for review: review-maze\.tif, frame 0/)
        expect(mail.text).toContain(`${ctx.deps.config.publicUrl}/analyses/${analysisId}`)
      }
      expect((await mailsTo(home.people.annotator.email)).filter((m) => m.subject.includes('Waiting for review'))).toEqual([])
    })

    it('When the reviewer lists the queue, then the analysis is there with image, frame, sample and author', async () => {
      const res = await s.reviewer.agent.get('/api/reviews?status=submitted')
      expect(res.status).toBe(200)
      const item = res.body.find((q: { analysisId: number }) => q.analysisId === analysisId)
      expect(item).toMatchObject({
        status: 'submitted',
        image: { id: imageId, name: 'review-maze.tif', frameCount: 2 },
        frame: { id: frameId, index: 0 },
        sample: { name: 'CoFeB 300C' },
        author: { id: home.people.annotator.id },
        submittedBy: { id: home.people.annotator.id },
        submitNote: 'Corrected the walls along the scratch at the left edge.',
        superseded: false,
        openComments: 0,
      })
      const outsider = await s.outsider.agent.get('/api/reviews?status=submitted')
      expect(outsider.body.map((q: { analysisId: number }) => q.analysisId)).not.toContain(analysisId)
    })

    it('When the queue is counted, then the count covers exactly the rows the same filter lists, and nothing of other labs', async () => {
      for (const search of ['status=submitted', `status=submitted&projectId=${home.project.id}`, `status=submitted&labId=${home.lab.id}`, 'status=approved']) {
        const [rows, counted] = await Promise.all([s.reviewer.agent.get(`/api/reviews?${search}`), s.reviewer.agent.get(`/api/reviews/count?${search}`)])
        expect(counted.status).toBe(200)
        expect(counted.body).toEqual({ status: new URLSearchParams(search).get('status'), count: rows.body.length })
      }
      expect((await s.reviewer.agent.get('/api/reviews/count')).body.count).toBeGreaterThanOrEqual(1)
      const outsiderRows = await s.outsider.agent.get('/api/reviews?status=submitted')
      expect((await s.outsider.agent.get('/api/reviews/count?status=submitted')).body.count).toBe(outsiderRows.body.length)
      expect((await s.outsider.agent.get(`/api/reviews/count?labId=${home.lab.id}`)).body.count).toBe(0)
      expect((await s.reviewer.agent.get('/api/reviews/count?status=finished')).status).toBe(400)
    })

    it('When the reviewer pins comments, then they are listed with their point; a point off the image is refused; resolving counts down', async () => {
      const post = (body: object) => s.reviewer.agent.post(`/api/analyses/${analysisId}/comments`).set('x-csrf-token', s.reviewer.csrf).send(body)
      const pinned = await post({ body: 'Wall missed here', x: 40.5, y: 12 })
      expect(pinned.status).toBe(201)
      expect(pinned.body).toMatchObject({ body: 'Wall missed here', x: 40.5, y: 12, resolved: false, author: { id: home.people.reviewer.id } })
      expect((await post({ body: 'General remark' })).status).toBe(201)
      const off = await post({ body: 'Nowhere', x: 500, y: 3 })
      expect(off.status).toBe(400)
      expect(off.body.error.code).toBe('point-outside-image')
      expect((await post({ body: 'Half a point', x: 3 })).status).toBe(400)
      const queue = await s.reviewer.agent.get('/api/reviews')
      expect(queue.body.find((q: { analysisId: number }) => q.analysisId === analysisId).openComments).toBe(2)
      const resolved = await s.annotator.agent.patch(`/api/analyses/${analysisId}/comments/${pinned.body.id}`).set('x-csrf-token', s.annotator.csrf).send({ resolved: true })
      expect(resolved.status).toBe(200)
      expect(resolved.body.resolved).toBe(true)
      const list = await s.microscopist.agent.get(`/api/analyses/${analysisId}/comments`)
      expect(list.body.map((c: { body: string; resolved: boolean }) => [c.body, c.resolved])).toEqual([
        ['Wall missed here', true],
        ['General remark', false],
      ])
    })

    it('When the reviewer requests changes, then the submitter is e-mailed the message and the frame is back in progress', async () => {
      const res = await act(s.reviewer, analysisId, 'request-changes', 'The top-left domain is split in two.')
      expect(res.status).toBe(200)
      expect(res.body.statusLabel).toBe('Changes requested')
      const mail = await waitForMail(home.people.annotator.email, /Changes requested: review-maze\.tif, frame 0/)
      expect(mail.text).toContain('The top-left domain is split in two.')
      expect((await Frame.findByPk(frameId))!.annotationStatus).toBe('in-progress')
      const empty = await s.reviewer.agent.post(`/api/analyses/${analysisId}/request-changes`).set('x-csrf-token', s.reviewer.csrf).send({ message: '  ' })
      expect(empty.status).toBe(400)
    })

    it('When it is resubmitted and approved, then approver and time are stored, the submitter is e-mailed and the history has every step', async () => {
      expect((await act(s.annotator, analysisId, 'submit')).status).toBe(200)
      const res = await act(s.reviewer, analysisId, 'approve')
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ status: 'approved', statusLabel: 'Approved', approvedBy: { id: home.people.reviewer.id } })
      const stored = (await Analysis.findByPk(analysisId))!
      expect(stored.approvedById).toBe(home.people.reviewer.id)
      expect(stored.approvedAt!.toISOString()).toBe(res.body.approvedAt)
      await waitForMail(home.people.annotator.email, /Approved: review-maze\.tif, frame 0/)
      // The image list and page count frames whose newest analysis is approved: one of the two.
      expect(await approvedFrames()).toEqual({ listed: 1, detail: 1 })

      const history = await s.annotator.agent.get(`/api/analyses/${analysisId}/history`)
      expect(history.status).toBe(200)
      expect(history.body.reviews.map((r: { fromStatus: string; toStatus: string }) => `${r.fromStatus}→${r.toStatus}`)).toEqual([
        'draft→submitted',
        'submitted→changes-requested',
        'changes-requested→submitted',
        'submitted→approved',
      ])
      expect(history.body.reviews[1].message).toBe('The top-left domain is split in two.')
      const transitions = history.body.audit.filter((e: { action: string }) => e.action.startsWith('analysis.'))
      expect(transitions.map((e: { before: { status: string }; after: { status: string } }) => [e.before.status, e.after.status])).toEqual([
        ['draft', 'submitted'],
        ['submitted', 'changes-requested'],
        ['changes-requested', 'submitted'],
        ['submitted', 'approved'],
      ])
      expect(history.body.audit.some((e: { action: string }) => e.action === 'comment.resolve')).toBe(true)
    })

    it('When the mask of the approved frame is edited, then a new version with a new draft analysis needs review and the approved one stays unchanged', async () => {
      const before = (await Analysis.findByPk(analysisId))!.get({ plain: true })
      const edited = await saveAutoMask(s.annotator, frameId, frames[1], PIXEL_NM, (await latestVersion(frameId))!)
      expect(edited.id).not.toBe(analysisId)
      expect(edited.status).toBe('draft')
      // The newer mask needs review: the frame no longer counts as approved.
      expect(await approvedFrames()).toEqual({ listed: 0, detail: 0 })
      const after = (await Analysis.findByPk(analysisId))!.get({ plain: true })
      expect(after).toEqual(before)
      const old = await s.reviewer.agent.get(`/api/analyses/${analysisId}`)
      expect(old.body).toMatchObject({ status: 'approved', superseded: true })
      // An approved analysis is final; the edit goes through review on its own.
      expect((await act(s.annotator, analysisId, 'submit')).body.error.code).toBe('illegal-transition')
      expect((await act(s.annotator, edited.id, 'submit')).status).toBe(200)
      const queue = await s.reviewer.agent.get('/api/reviews?status=submitted')
      expect(queue.body.map((q: { analysisId: number }) => q.analysisId)).toContain(edited.id)
      expect((await act(s.reviewer, edited.id, 'approve')).status).toBe(200)
      expect((await Analysis.findByPk(analysisId))!.status).toBe('approved')
      expect(await approvedFrames()).toEqual({ listed: 1, detail: 1 })
    })

    it('When a submitted analysis is superseded by a newer mask, then approving it is refused with 409 analysis-superseded', async () => {
      const first = await saveAutoMask(s.annotator, frameId, frames[0], PIXEL_NM, (await latestVersion(frameId))!)
      expect((await act(s.annotator, first.id, 'submit')).status).toBe(200)
      await saveAutoMask(s.annotator, frameId, frames[1], PIXEL_NM, (await latestVersion(frameId))!)
      const res = await act(s.reviewer, first.id, 'approve')
      expect(res.status).toBe(409)
      expect(res.body.error.code).toBe('analysis-superseded')
      const queue = await s.reviewer.agent.get('/api/reviews?status=submitted')
      expect(queue.body.find((q: { analysisId: number }) => q.analysisId === first.id).superseded).toBe(true)
    })
  })

  async function latestVersion(frameId: number): Promise<number | null> {
    const res = await s.annotator.agent.get(`/api/frames/${frameId}/annotations`)
    const saved = res.body.filter((v: { state: string }) => v.state === 'saved')
    return saved.length ? saved[0].version : null
  }
})
