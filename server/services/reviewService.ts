/**
 * The review workflow of analyses (shared/types/review.ts REVIEW_TRANSITIONS). A transition tells this story: check
 * the role ('analysis.submit' or 'analysis.review') → under a row lock, check the transition is legal from the
 * current status, that the analysis is the newest of its frame (a later mask save supersedes it) and that a reviewer
 * does not approve their own work → write the status, a Review row and an AuditEvent (before → after) and move the
 * frame's annotation status along → after commit, e-mail the people concerned (the lab's reviewers on submit, the
 * submitter on approve or changes requested).
 *
 * Approved analyses are never changed again: editing the mask of an approved frame saves a new version with a new
 * draft analysis (annotationService.save), which goes through review on its own.
 */
import { Op, type Sequelize, type Transaction } from 'sequelize'
import type { AnalysisStatus } from '../../shared/types/lab'
import { ANALYSIS_STATUS_LABELS, REVIEW_QUEUE_LIMIT, REVIEW_TRANSITIONS, type AnalysisHistoryDto, type CommentDto, type ReviewAction, type ReviewedAnalysisDto, type ReviewQueueCountDto, type ReviewQueueItemDto } from '../../shared/types/review'
import { PERMISSIONS, type LabAction, type LabRole } from '../../shared/auth/permissions'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { AppConfig } from '../config'
import type { Mailer } from '../mail/mailer'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, notFound } from '../errors'
import { Analysis, Annotation, AuditEvent, Comment, Frame, Image, Membership, Project, Review, Sample, User } from '../models'
import { recordAudit } from './auditService'

/** 409 with the two states named, in the message and as `from`/`to` in the error body. */
export class IllegalTransitionError extends AppError {
  constructor(from: AnalysisStatus, to: AnalysisStatus) {
    // The error handler spreads `extra` into the body, so the client gets `from` and `to` as fields too.
    const extra = { from, to, fields: { status: [`${from} → ${to} is not allowed`] } }
    super(409, 'illegal-transition', `An analysis that is "${ANALYSIS_STATUS_LABELS[from]}" (${from}) cannot become "${ANALYSIS_STATUS_LABELS[to]}" (${to}).`, extra)
  }
}

/** The review queue's filter: a status, optionally one project or one of the person's labs. */
type QueueFilter = { status: AnalysisStatus; projectId?: number; labId?: number }
type AnalysisContext = { analysis: Analysis; frame: Frame; image: Image; project: Project; labId: number }

const person = (u: User | null | undefined) => (u ? { id: u.id, name: u.name } : null)

function frameLabel(image: Image, frame: Frame): string {
  return image.frameCount > 1 ? `${image.name}, frame ${frame.index}` : image.name
}

export function createReviewService(deps: { sequelize: Sequelize; mailer: Mailer; config: AppConfig }) {
  const { sequelize, mailer, config } = deps

  /** Load an analysis the person can see and check `action`; other labs' analyses answer 404. */
  async function analysisFor(user: SessionUser, analysisId: number, action: LabAction): Promise<AnalysisContext> {
    const analysis = await Analysis.findByPk(analysisId)
    if (!analysis) throw notFound('analysis')
    const frame = await Frame.findByPk(analysis.frameId)
    const image = frame ? await Image.findOne({ where: { id: frame.imageId, deletedAt: null } }) : null
    const project = image ? await Project.findOne({ where: { id: image.projectId, deletedAt: null } }) : null
    if (!frame || !image || !project) throw notFound('analysis')
    assertLabAction(user, project.labId, 'lab.read', 'analysis')
    assertLabAction(user, project.labId, action, 'analysis')
    return { analysis, frame, image, project, labId: project.labId }
  }

  async function newerAnalysisExists(analysis: Analysis, transaction?: Transaction): Promise<boolean> {
    return (await Analysis.count({ where: { frameId: analysis.frameId, id: { [Op.gt]: analysis.id } }, transaction })) > 0
  }

  /** Who last submitted the analysis (the reviewer's counterpart), or null when it was never submitted. */
  async function lastSubmitterId(analysisId: number, transaction?: Transaction): Promise<number | null> {
    const review = await Review.findOne({ where: { analysisId, toStatus: 'submitted' }, order: [['id', 'DESC']], transaction })
    return review?.reviewerId ?? null
  }

  async function toReviewedDto(ctx: AnalysisContext): Promise<ReviewedAnalysisDto> {
    const { analysis, frame, image, labId } = ctx
    const [annotation, submitterId, superseded] = await Promise.all([
      analysis.annotationId ? Annotation.findByPk(analysis.annotationId) : null,
      lastSubmitterId(analysis.id),
      newerAnalysisExists(analysis),
    ])
    const ids = [analysis.createdById, submitterId, analysis.approvedById].filter((id): id is number => id != null)
    const users = await User.findAll({ where: { id: ids }, attributes: ['id', 'name'] })
    const byId = (id: number | null) => person(users.find((u) => u.id === id))
    const results = analysis.results as { measurements?: FrameMeasurements } | null
    return {
      id: analysis.id,
      frameId: frame.id,
      imageId: image.id,
      labId,
      annotationVersion: annotation?.version ?? null,
      status: analysis.status,
      statusLabel: ANALYSIS_STATUS_LABELS[analysis.status as AnalysisStatus],
      engineVersion: analysis.engineVersion,
      recipe: analysis.recipe,
      measurements: results?.measurements ?? null,
      author: byId(analysis.createdById),
      submittedBy: byId(submitterId),
      approvedBy: byId(analysis.approvedById),
      approvedAt: analysis.approvedAt?.toISOString() ?? null,
      superseded,
      createdAt: analysis.createdAt.toISOString(),
      updatedAt: analysis.updatedAt.toISOString(),
    }
  }

  async function detail(user: SessionUser, analysisId: number): Promise<ReviewedAnalysisDto> {
    return toReviewedDto(await analysisFor(user, analysisId, 'lab.read'))
  }

  /**
   * Move an analysis along the workflow.
   * @throws 409 `illegal-transition` (naming from/to), 409 `analysis-superseded` when a newer mask was saved,
   *   409 `analysis-has-no-results` when submitting a failed analysis, 403 `own-analysis` when approving one's own.
   */
  async function transition(user: SessionUser, analysisId: number, action: ReviewAction, message = ''): Promise<ReviewedAnalysisDto> {
    const spec = REVIEW_TRANSITIONS[action]
    const ctx = await analysisFor(user, analysisId, action === 'submit' ? 'analysis.submit' : 'analysis.review')
    const from = await sequelize.transaction(async (transaction) => {
      const analysis = (await Analysis.findByPk(analysisId, { transaction, lock: transaction.LOCK.UPDATE }))!
      const before = analysis.status
      if (!spec.from.includes(before)) throw new IllegalTransitionError(before, spec.to)
      if (action !== 'request-changes' && (await newerAnalysisExists(analysis, transaction))) {
        throw new AppError(409, 'analysis-superseded', 'A newer version of this mask was saved after this analysis; review the newest one instead.')
      }
      if (action === 'submit' && (!analysis.results || analysis.error)) {
        throw new AppError(409, 'analysis-has-no-results', 'This analysis has no measurements (they could not be computed); save the mask again before submitting.')
      }
      if (action === 'approve' && (analysis.createdById === user.id || (await lastSubmitterId(analysisId, transaction)) === user.id)) {
        throw new AppError(403, 'own-analysis', 'You cannot approve an analysis you made or submitted yourself; another reviewer has to.')
      }
      const approval = action === 'approve' ? { approvedById: user.id, approvedAt: new Date() } : {}
      await analysis.update({ status: spec.to, ...approval }, { transaction })
      await Review.create({ analysisId, reviewerId: user.id, fromStatus: before, toStatus: spec.to, message }, { transaction })
      const frameStatus = action === 'submit' ? 'submitted' : action === 'request-changes' ? 'in-progress' : null
      const frameBefore = ctx.frame.annotationStatus
      if (frameStatus && frameStatus !== frameBefore) await Frame.update({ annotationStatus: frameStatus }, { where: { id: ctx.frame.id }, transaction })
      await recordAudit(
        {
          labId: ctx.labId,
          actorId: user.id,
          action: `analysis.${action}`,
          entityType: 'analysis',
          entityId: analysisId,
          before: { status: before, frameStatus: frameBefore },
          after: { status: spec.to, frameStatus: frameStatus ?? frameBefore, ...(message ? { message } : {}), ...(action === 'approve' ? { approvedAt: (approval as { approvedAt: Date }).approvedAt.toISOString() } : {}) },
        },
        transaction,
      )
      ctx.analysis = analysis
      return before
    })
    await notify(user, ctx, action, from, message)
    return toReviewedDto(ctx)
  }

  /** E-mails after a transition. A mail failure is logged and does not undo the committed step. */
  async function notify(actor: SessionUser, ctx: AnalysisContext, action: ReviewAction, from: AnalysisStatus, message: string): Promise<void> {
    const what = frameLabel(ctx.image, ctx.frame)
    const link = `${config.publicUrl}/analyses/${ctx.analysis.id}`
    let recipients: User[]
    let subject: string
    let text: string
    if (action === 'submit') {
      const reviewerRoles = PERMISSIONS['analysis.review'] as readonly LabRole[]
      const members = await Membership.findAll({ where: { labId: ctx.labId, active: true, role: [...reviewerRoles], userId: { [Op.ne]: actor.id } }, include: [{ model: User, where: { active: true } }] })
      recipients = members.map((m) => (m as unknown as { User: User }).User)
      subject = `Waiting for review: ${what}`
      text = `${actor.name} ${from === 'changes-requested' ? 'resubmitted' : 'submitted'} the analysis of ${what} (project ${ctx.project.name}) for review.\n\nOpen it: ${link}\n`
    } else {
      const submitterId = (await lastSubmitterId(ctx.analysis.id)) ?? ctx.analysis.createdById
      const submitter = submitterId && submitterId !== actor.id ? await User.findOne({ where: { id: submitterId, active: true } }) : null
      recipients = submitter ? [submitter] : []
      subject = action === 'approve' ? `Approved: ${what}` : `Changes requested: ${what}`
      text =
        action === 'approve'
          ? `${actor.name} approved the analysis of ${what} (project ${ctx.project.name}).\n\nOpen it: ${link}\n`
          : `${actor.name} asked for changes to the analysis of ${what} (project ${ctx.project.name}):\n\n${message}\n\nOpen it: ${link}\n`
    }
    const results = await Promise.allSettled(recipients.map((r) => mailer.send({ to: r.email, subject: `Remanence: ${subject}`, text })))
    for (const r of results) if (r.status === 'rejected') console.error('[reviews] notification e-mail failed', r.reason)
  }

  function toCommentDto(c: Comment): CommentDto {
    return {
      id: c.id,
      analysisId: c.analysisId,
      author: person((c as unknown as { author?: User | null }).author),
      body: c.body,
      x: c.x,
      y: c.y,
      resolved: c.resolvedAt !== null,
      resolvedAt: c.resolvedAt?.toISOString() ?? null,
      createdAt: c.createdAt.toISOString(),
    }
  }

  async function listComments(user: SessionUser, analysisId: number): Promise<CommentDto[]> {
    await analysisFor(user, analysisId, 'lab.read')
    const rows = await Comment.findAll({ where: { analysisId }, include: [{ model: User, as: 'author', attributes: ['id', 'name'] }], order: [['id', 'ASC']] })
    return rows.map(toCommentDto)
  }

  /**
   * Comment on an analysis, optionally pinned to (x, y) in image pixel coordinates (origin top-left, x along columns).
   * @throws 400 `point-outside-image` when the pin is not on the image.
   */
  async function addComment(user: SessionUser, analysisId: number, input: { body: string; x?: number; y?: number }): Promise<CommentDto> {
    const { image, labId } = await analysisFor(user, analysisId, 'comment.write')
    const pinned = input.x !== undefined && input.y !== undefined
    if (pinned && (input.x! < 0 || input.y! < 0 || input.x! > image.width || input.y! > image.height)) {
      throw new AppError(400, 'point-outside-image', `The point (${input.x}, ${input.y}) is outside the ${image.width} × ${image.height} image.`)
    }
    const comment = await Comment.create({ analysisId, authorId: user.id, body: input.body, x: pinned ? input.x! : null, y: pinned ? input.y! : null, resolvedAt: null })
    await recordAudit({ labId, actorId: user.id, action: 'comment.create', entityType: 'analysis', entityId: analysisId, after: { commentId: comment.id } })
    return toCommentDto(Object.assign(comment, { author: { id: user.id, name: user.name } }))
  }

  async function setCommentResolved(user: SessionUser, analysisId: number, commentId: number, resolved: boolean): Promise<CommentDto> {
    const { labId } = await analysisFor(user, analysisId, 'comment.write')
    const comment = await Comment.findOne({ where: { id: commentId, analysisId }, include: [{ model: User, as: 'author', attributes: ['id', 'name'] }] })
    if (!comment) throw notFound('comment')
    if (resolved !== (comment.resolvedAt !== null)) {
      await comment.update({ resolvedAt: resolved ? new Date() : null })
      await recordAudit({ labId, actorId: user.id, action: resolved ? 'comment.resolve' : 'comment.reopen', entityType: 'analysis', entityId: analysisId, after: { commentId } })
    }
    return toCommentDto(comment)
  }

  /**
   * Which analyses a queue filter covers: those in the status, on live images of live projects in the person's labs
   * (narrowed to one lab or project when asked); null when the person has no lab the filter allows. `withSample`: the
   * queue's rows bring their image's sample along, the count needs no such join.
   */
  function queueScope(user: SessionUser, filter: QueueFilter, withSample = false) {
    const labIds = user.memberships.map((m) => m.labId).filter((id) => filter.labId === undefined || id === filter.labId)
    if (labIds.length === 0) return null
    return {
      where: { status: filter.status },
      include: [
        {
          model: Frame,
          required: true,
          include: [
            {
              model: Image,
              required: true,
              where: { deletedAt: null, ...(filter.projectId ? { projectId: filter.projectId } : {}) },
              include: [{ model: Project, required: true, where: { labId: labIds, deletedAt: null } }, ...(withSample ? [{ model: Sample }] : [])],
            },
          ],
        },
      ],
    }
  }

  /** How many analyses the queue filter covers, beyond the queue's REVIEW_QUEUE_LIMIT too (the overview's count). */
  async function count(user: SessionUser, filter: QueueFilter): Promise<ReviewQueueCountDto> {
    const scope = queueScope(user, filter)
    return { status: filter.status, count: scope === null ? 0 : await Analysis.count({ ...scope, distinct: true, col: 'id' }) }
  }

  /**
   * The review queue: analyses in `status` (default 'submitted') across the person's labs, oldest first, with what
   * they are about. Superseded ones (a newer mask was saved) are flagged, not hidden.
   */
  async function queue(user: SessionUser, filter: QueueFilter): Promise<ReviewQueueItemDto[]> {
    const scope = queueScope(user, filter, true)
    if (scope === null) return []
    const rows = await Analysis.findAll({ ...scope, order: [['updatedAt', 'ASC'], ['id', 'ASC']], limit: REVIEW_QUEUE_LIMIT })
    const ids = rows.map((r) => r.id)
    const frameIds = [...new Set(rows.map((r) => r.frameId))]
    const [submits, openComments, newest, annotations] = await Promise.all([
      Review.findAll({ where: { analysisId: ids, toStatus: 'submitted' }, order: [['id', 'DESC']] }),
      Comment.findAll({ attributes: ['analysisId', [sequelize.fn('COUNT', sequelize.col('id')), 'n']], where: { analysisId: ids, resolvedAt: null }, group: ['analysisId'], raw: true }),
      Analysis.findAll({ attributes: ['frameId', [sequelize.fn('MAX', sequelize.col('id')), 'maxId']], where: { frameId: frameIds }, group: ['frameId'], raw: true }),
      Annotation.findAll({ where: { id: rows.map((r) => r.annotationId).filter((id): id is number => id != null) }, attributes: ['id', 'version'] }),
    ])
    const userIds = new Set<number>()
    for (const r of rows) if (r.createdById) userIds.add(r.createdById)
    for (const s of submits) if (s.reviewerId) userIds.add(s.reviewerId)
    const users = await User.findAll({ where: { id: [...userIds] }, attributes: ['id', 'name'] })
    const byId = (id: number | null) => person(users.find((u) => u.id === id))
    return rows.map((r) => {
      const frame = (r as unknown as { Frame: Frame }).Frame
      const image = (frame as unknown as { Image: Image }).Image
      const project = (image as unknown as { Project: Project }).Project
      const sample = (image as unknown as { Sample: Sample | null }).Sample
      const submit = submits.find((s) => s.analysisId === r.id)
      const maxId = (newest as unknown as { frameId: number; maxId: number }[]).find((n) => n.frameId === r.frameId)?.maxId ?? r.id
      return {
        analysisId: r.id,
        status: r.status,
        statusLabel: ANALYSIS_STATUS_LABELS[r.status as AnalysisStatus],
        labId: project.labId,
        project: { id: project.id, name: project.name },
        image: { id: image.id, name: image.name, frameCount: image.frameCount },
        frame: { id: frame.id, index: frame.index, field: frame.field, fieldUnit: frame.fieldUnit, temperatureK: frame.temperatureK },
        sample: sample ? { id: sample.id, name: sample.name } : null,
        author: byId(r.createdById),
        submittedBy: submit ? byId(submit.reviewerId) : null,
        submittedAt: submit ? submit.createdAt.toISOString() : null,
        submitNote: submit?.message ?? '',
        annotationVersion: annotations.find((a) => a.id === r.annotationId)?.version ?? null,
        openComments: Number((openComments as unknown as { analysisId: number; n: number }[]).find((c) => c.analysisId === r.id)?.n ?? 0),
        superseded: maxId > r.id,
        updatedAt: r.updatedAt.toISOString(),
      }
    })
  }

  /** Every workflow step of the analysis and its audit events (transitions, comments), oldest first. */
  async function history(user: SessionUser, analysisId: number): Promise<AnalysisHistoryDto> {
    await analysisFor(user, analysisId, 'lab.read')
    const [reviews, events] = await Promise.all([
      Review.findAll({ where: { analysisId }, include: [{ model: User, as: 'reviewer', attributes: ['id', 'name'] }], order: [['id', 'ASC']] }),
      AuditEvent.findAll({ where: { entityType: 'analysis', entityId: analysisId }, order: [['id', 'ASC']] }),
    ])
    const actors = await User.findAll({ where: { id: events.map((e) => e.actorId).filter((id): id is number => id != null) }, attributes: ['id', 'name'] })
    return {
      analysisId,
      reviews: reviews.map((r) => ({
        id: r.id,
        analysisId,
        fromStatus: r.fromStatus,
        toStatus: r.toStatus,
        message: r.message,
        by: person((r as unknown as { reviewer?: User | null }).reviewer),
        createdAt: r.createdAt.toISOString(),
      })),
      audit: events.map((e) => ({ id: e.id, action: e.action, actor: person(actors.find((a) => a.id === e.actorId)), before: e.before, after: e.after, createdAt: e.createdAt.toISOString() })),
    }
  }

  return { detail, transition, listComments, addComment, setCommentResolved, queue, count, history }
}

export type ReviewService = ReturnType<typeof createReviewService>
