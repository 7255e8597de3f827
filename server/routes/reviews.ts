/** The review workflow: read an analysis, submit / approve / request changes, comments, the review queue, history. */
import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { ANALYSIS_STATUSES } from '../../shared/types/lab'
import type { ReviewAction } from '../../shared/types/review'
import type { ReviewService } from '../services/reviewService'

const analysisParams = z.object({ analysisId: z.coerce.number().int().positive() })
const PersonSchema = z.object({ id: z.number().int(), name: z.string() }).nullable()
const StatusSchema = z.enum(ANALYSIS_STATUSES)
const ReviewedAnalysisSchema = z.object({
  id: z.number().int(),
  frameId: z.number().int(),
  imageId: z.number().int(),
  labId: z.number().int(),
  annotationVersion: z.number().int().nullable(),
  status: StatusSchema,
  statusLabel: z.string(),
  engineVersion: z.string(),
  recipe: z.record(z.string(), z.unknown()),
  measurements: z.record(z.string(), z.unknown()).nullable(),
  author: PersonSchema,
  submittedBy: PersonSchema,
  approvedBy: PersonSchema,
  approvedAt: z.string().nullable(),
  superseded: z.boolean(),
  createdAt: z.string(),
  updatedAt: z.string(),
})
const CommentSchema = z.object({
  id: z.number().int(),
  analysisId: z.number().int(),
  author: PersonSchema,
  body: z.string(),
  x: z.number().nullable(),
  y: z.number().nullable(),
  resolved: z.boolean(),
  resolvedAt: z.string().nullable(),
  createdAt: z.string(),
})
const QueueItemSchema = z.object({
  analysisId: z.number().int(),
  status: StatusSchema,
  statusLabel: z.string(),
  labId: z.number().int(),
  project: z.object({ id: z.number().int(), name: z.string() }),
  image: z.object({ id: z.number().int(), name: z.string(), frameCount: z.number().int() }),
  frame: z.object({ id: z.number().int(), index: z.number().int(), field: z.number().nullable(), fieldUnit: z.string().nullable(), temperatureK: z.number().nullable() }),
  sample: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  author: PersonSchema,
  submittedBy: PersonSchema,
  submittedAt: z.string().nullable(),
  submitNote: z.string(),
  annotationVersion: z.number().int().nullable(),
  openComments: z.number().int(),
  superseded: z.boolean(),
  updatedAt: z.string(),
})
const HistorySchema = z.object({
  analysisId: z.number().int(),
  reviews: z.array(z.object({ id: z.number().int(), analysisId: z.number().int(), fromStatus: StatusSchema, toStatus: StatusSchema, message: z.string(), by: PersonSchema, createdAt: z.string() })),
  audit: z.array(
    z.object({
      id: z.number().int(),
      action: z.string(),
      actor: PersonSchema,
      before: z.record(z.string(), z.unknown()).nullable(),
      after: z.record(z.string(), z.unknown()).nullable(),
      createdAt: z.string(),
    }),
  ),
})
const TransitionErrors = {
  403: { description: 'Role may not do this, or approving one\u2019s own analysis (own-analysis)' },
  404: { description: 'No such analysis' },
  409: { description: 'illegal-transition (body names from and to), analysis-superseded, analysis-has-no-results' },
}

export function registerReviewRoutes(api: ApiDefinition, reviews: ReviewService): void {
  apiRoute(api, {
    method: 'get',
    path: '/analyses/:analysisId',
    summary: 'One analysis with its review state: status and label, author, submitter, approver, and whether a newer mask superseded it',
    tags: ['reviews'],
    access: 'signed-in',
    params: analysisParams,
    responses: { 200: { description: 'The analysis', schema: ReviewedAnalysisSchema }, 404: { description: 'No such analysis' } },
    handler: (req, _res, { params }) => reviews.detail(currentUser(req), params.analysisId),
  })

  const transitions: { action: ReviewAction; summary: string; message: 'required' | 'optional' }[] = [
    { action: 'submit', summary: 'Submit an analysis for review (draft or changes requested → waiting for review), with an optional note for the reviewer; e-mails the lab\u2019s reviewers', message: 'optional' },
    { action: 'approve', summary: 'Approve an analysis waiting for review (not one\u2019s own), with an optional note; it is locked from then on; e-mails the submitter', message: 'optional' },
    { action: 'request-changes', summary: 'Send an analysis back with a message (waiting for review → changes requested); e-mails the submitter', message: 'required' },
  ]
  for (const t of transitions) {
    apiRoute(api, {
      method: 'post',
      path: `/analyses/:analysisId/${t.action}`,
      summary: t.summary,
      tags: ['reviews'],
      access: 'signed-in',
      params: analysisParams,
      body: t.message === 'required' ? z.object({ message: z.string().trim().min(1).max(10_000) }) : z.object({ message: z.string().trim().max(10_000).optional() }),
      responses: { 200: { description: 'The analysis after the step', schema: ReviewedAnalysisSchema }, ...TransitionErrors },
      handler: (req, _res, { params, body }) => reviews.transition(currentUser(req), params.analysisId, t.action, (body as { message?: string }).message ?? ''),
    })
  }

  apiRoute(api, {
    method: 'get',
    path: '/analyses/:analysisId/comments',
    summary: 'Comments on an analysis, oldest first',
    tags: ['reviews'],
    access: 'signed-in',
    params: analysisParams,
    responses: { 200: { description: 'Comments', schema: z.array(CommentSchema) }, 404: { description: 'No such analysis' } },
    handler: (req, _res, { params }) => reviews.listComments(currentUser(req), params.analysisId),
  })

  apiRoute(api, {
    method: 'post',
    path: '/analyses/:analysisId/comments',
    summary: 'Comment on an analysis, optionally pinned to a point (x, y) in image pixel coordinates (origin top-left, x along columns)',
    tags: ['reviews'],
    access: 'signed-in',
    params: analysisParams,
    body: z
      .object({ body: z.string().trim().min(1).max(10_000), x: z.number().finite().optional(), y: z.number().finite().optional() })
      .refine((b) => (b.x === undefined) === (b.y === undefined), { message: 'Give both x and y, or neither.', path: ['x'] }),
    responses: { 201: { description: 'Created', schema: CommentSchema }, 400: { description: 'Point outside the image (point-outside-image)' }, 403: { description: 'Role may not comment' } },
    handler: async (req, res, { params, body }) => res.status(201).json(await reviews.addComment(currentUser(req), params.analysisId, body)),
  })

  apiRoute(api, {
    method: 'patch',
    path: '/analyses/:analysisId/comments/:commentId',
    summary: 'Resolve (or reopen) a comment',
    tags: ['reviews'],
    access: 'signed-in',
    params: analysisParams.extend({ commentId: z.coerce.number().int().positive() }),
    body: z.object({ resolved: z.boolean() }),
    responses: { 200: { description: 'The comment', schema: CommentSchema }, 403: { description: 'Role may not comment' }, 404: { description: 'No such comment' } },
    handler: (req, _res, { params, body }) => reviews.setCommentResolved(currentUser(req), params.analysisId, params.commentId, body.resolved),
  })

  const queueQuery = z.object({
    status: StatusSchema.default('submitted'),
    projectId: z.coerce.number().int().positive().optional(),
    labId: z.coerce.number().int().positive().optional(),
  })

  apiRoute(api, {
    method: 'get',
    path: '/reviews/count',
    summary: 'How many analyses the review queue\u2019s filter covers (default: waiting for review), with no limit',
    tags: ['reviews'],
    access: 'signed-in',
    query: queueQuery,
    responses: { 200: { description: 'Count', schema: z.object({ status: StatusSchema, count: z.number().int() }) } },
    handler: (req, _res, { query }) => reviews.count(currentUser(req), query),
  })

  apiRoute(api, {
    method: 'get',
    path: '/reviews',
    summary: 'The review queue: analyses in a status (default submitted) across the person\u2019s labs, oldest first, with image, frame, sample and author',
    tags: ['reviews'],
    access: 'signed-in',
    query: queueQuery,
    responses: { 200: { description: 'Queue (at most 500)', schema: z.array(QueueItemSchema) } },
    handler: (req, _res, { query }) => reviews.queue(currentUser(req), query),
  })

  apiRoute(api, {
    method: 'get',
    path: '/analyses/:analysisId/history',
    summary: 'The workflow steps of an analysis (reviews) and its audit events, each with before and after',
    tags: ['reviews'],
    access: 'signed-in',
    params: analysisParams,
    responses: { 200: { description: 'History', schema: HistorySchema }, 404: { description: 'No such analysis' } },
    handler: (req, _res, { params }) => reviews.history(currentUser(req), params.analysisId),
  })
}
