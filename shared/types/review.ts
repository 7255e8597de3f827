/**
 * The review workflow of analyses: draft → submitted → approved | changes-requested → submitted …, with the labels
 * people see, the review queue, pinned comments and the history of an analysis.
 */
import type { FrameMeasurements } from '../analysis/analyzeFrame'
import type { AnalysisStatus } from './lab'

/** What each status reads as, in our own plain words. */
export const ANALYSIS_STATUS_LABELS: Record<AnalysisStatus, string> = {
  draft: 'Draft',
  submitted: 'Waiting for review',
  approved: 'Approved',
  'changes-requested': 'Changes requested',
}

/** Most analyses one review-queue answer lists (oldest first); GET /reviews/count tells how many there are in all. */
export const REVIEW_QUEUE_LIMIT = 500

export const REVIEW_ACTIONS = ['submit', 'approve', 'request-changes'] as const
export type ReviewAction = (typeof REVIEW_ACTIONS)[number]

/**
 * The state machine: each action, the states it may start from, and where it leads. Anything else is an illegal
 * transition (409 `illegal-transition`). Approved is final: a new mask save makes a new draft analysis instead.
 */
export const REVIEW_TRANSITIONS: Record<ReviewAction, { from: readonly AnalysisStatus[]; to: AnalysisStatus }> = {
  submit: { from: ['draft', 'changes-requested'], to: 'submitted' },
  approve: { from: ['submitted'], to: 'approved' },
  'request-changes': { from: ['submitted'], to: 'changes-requested' },
}

export interface PersonRefDto {
  id: number
  name: string
}

/** One step of the workflow (a row of the reviews table). `by` is whoever made the step, submitter or reviewer. */
export interface ReviewDto {
  id: number
  analysisId: number
  fromStatus: AnalysisStatus
  toStatus: AnalysisStatus
  message: string
  by: PersonRefDto | null
  createdAt: string
}

/** A comment on an analysis, optionally pinned to a point of the image (pixel coordinates, origin top-left). */
export interface CommentDto {
  id: number
  analysisId: number
  author: PersonRefDto | null
  body: string
  x: number | null
  y: number | null
  resolved: boolean
  resolvedAt: string | null
  createdAt: string
}

export interface CreateCommentRequest {
  body: string
  x?: number
  y?: number
}

/** An analysis with its place in the workflow (GET /api/analyses/:analysisId and every transition's answer). */
export interface ReviewedAnalysisDto {
  id: number
  frameId: number
  imageId: number
  labId: number
  annotationVersion: number | null
  status: AnalysisStatus
  statusLabel: string
  engineVersion: string
  recipe: Record<string, unknown>
  measurements: FrameMeasurements | null
  author: PersonRefDto | null
  submittedBy: PersonRefDto | null
  approvedBy: PersonRefDto | null
  approvedAt: string | null
  /** True when a newer analysis of the same frame exists (a later mask save): this one can no longer be submitted or approved. */
  superseded: boolean
  createdAt: string
  updatedAt: string
}

/** A row of the review queue: the analysis and what it is about. */
/** How many analyses a review-queue filter covers (GET /reviews/count). */
export interface ReviewQueueCountDto {
  status: AnalysisStatus
  count: number
}

export interface ReviewQueueItemDto {
  analysisId: number
  status: AnalysisStatus
  statusLabel: string
  labId: number
  project: { id: number; name: string }
  image: { id: number; name: string; frameCount: number }
  frame: { id: number; index: number; field: number | null; fieldUnit: string | null; temperatureK: number | null }
  sample: { id: number; name: string } | null
  author: PersonRefDto | null
  submittedBy: PersonRefDto | null
  submittedAt: string | null
  /** What the submitter wrote with the latest submission ('' when nothing). */
  submitNote: string
  annotationVersion: number | null
  openComments: number
  superseded: boolean
  updatedAt: string
}

export interface AuditEventDto {
  id: number
  action: string
  actor: PersonRefDto | null
  before: Record<string, unknown> | null
  after: Record<string, unknown> | null
  createdAt: string
}

export interface AnalysisHistoryDto {
  analysisId: number
  reviews: ReviewDto[]
  audit: AuditEventDto[]
}
