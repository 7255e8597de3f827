/** The review workflow: one analysis with its state, the three steps, pinned comments, the queue and the history. */
import type { AnalysisStatus } from '@shared/types/lab'
import type { AnalysisHistoryDto, CommentDto, CreateCommentRequest, ReviewAction, ReviewedAnalysisDto, ReviewQueueCountDto, ReviewQueueItemDto } from '@shared/types/review'
import { http } from './http'

export function getReviewedAnalysis(analysisId: number): Promise<ReviewedAnalysisDto> {
  return http.get<ReviewedAnalysisDto>(`/analyses/${analysisId}`)
}

/**
 * Move an analysis one step (`request-changes` needs a message; submit and approve take an optional note). Throws `ApiError`: 409 `illegal-transition`,
 * `analysis-superseded` or `analysis-has-no-results`; 403 `own-analysis` when approving one's own work.
 */
export function reviewStep(analysisId: number, action: ReviewAction, message?: string): Promise<ReviewedAnalysisDto> {
  return http.post<ReviewedAnalysisDto>(`/analyses/${analysisId}/${action}`, message ? { message } : {})
}

/** Comments, oldest first. */
export function listComments(analysisId: number): Promise<CommentDto[]> {
  return http.get<CommentDto[]>(`/analyses/${analysisId}/comments`)
}

/** A comment, pinned when x and y (image pixels) are given; 400 `point-outside-image`. */
export function addComment(analysisId: number, request: CreateCommentRequest): Promise<CommentDto> {
  return http.post<CommentDto>(`/analyses/${analysisId}/comments`, request)
}

export function setCommentResolved(analysisId: number, commentId: number, resolved: boolean): Promise<CommentDto> {
  return http.patch<CommentDto>(`/analyses/${analysisId}/comments/${commentId}`, { resolved })
}

export interface ReviewQueueFilter {
  status: AnalysisStatus
  projectId?: number | null
  labId?: number | null
}

/** The query string of GET /reviews, leaving out the filters that are not set. */
export function reviewQueueSearch(filter: ReviewQueueFilter): string {
  const params = new URLSearchParams({ status: filter.status })
  if (filter.projectId) params.set('projectId', String(filter.projectId))
  if (filter.labId) params.set('labId', String(filter.labId))
  return params.toString()
}

/** Analyses in a status across the person's labs, oldest first (at most REVIEW_QUEUE_LIMIT). */
export function listReviewQueue(filter: ReviewQueueFilter): Promise<ReviewQueueItemDto[]> {
  return http.get<ReviewQueueItemDto[]>(`/reviews?${reviewQueueSearch(filter)}`)
}

/** How many analyses the filter covers in all (the queue itself lists at most REVIEW_QUEUE_LIMIT). */
export function countReviewQueue(filter: ReviewQueueFilter): Promise<ReviewQueueCountDto> {
  return http.get<ReviewQueueCountDto>(`/reviews/count?${reviewQueueSearch(filter)}`)
}

/** Workflow steps and audit events of an analysis. */
export function getAnalysisHistory(analysisId: number): Promise<AnalysisHistoryDto> {
  return http.get<AnalysisHistoryDto>(`/analyses/${analysisId}/history`)
}
