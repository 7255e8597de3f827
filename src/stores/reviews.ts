/**
 * Review work: the queue of analyses in a status, and the one analysis open on the review page with everything the
 * page shows (frame, mask, measurements, comments, history). Loads record failures for a Retry; steps and comments
 * throw `ApiError` for the panel that started them, after refreshing what the refusal showed to be stale.
 */
import { computed, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { LabAction } from '@shared/auth/permissions'
import type { AnalysisRecipe } from '@shared/analysis/recipe'
import type { BinaryMask } from '@shared/analysis/types'
import { maskFromBase64 } from '@shared/imageio/maskEncoding'
import type { AnalysisDto } from '@shared/types/annotation'
import type { ImageDetailDto } from '@shared/types/image'
import type { AnalysisStatus } from '@shared/types/lab'
import { REVIEW_QUEUE_LIMIT, REVIEW_TRANSITIONS, type AnalysisHistoryDto, type CommentDto, type ReviewAction, type ReviewedAnalysisDto, type ReviewQueueItemDto } from '@shared/types/review'
import { getAnnotation, getFrameAnalysis } from '@/api/annotations'
import { asApiError, type ApiError } from '@/api/http'
import { getImage } from '@/api/images'
import { addComment, countReviewQueue, getAnalysisHistory, getReviewedAnalysis, listComments, listReviewQueue, reviewStep, setCommentResolved, type ReviewQueueFilter } from '@/api/reviews'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

/** Which workflow buttons a person gets for an analysis; `approve` is 'own' when only someone else may approve. */
export interface ReviewButtons {
  submit: boolean
  approve: 'yes' | 'own' | 'no'
  requestChanges: boolean
}

/**
 * The buttons for `analysis`, from the person's role in its lab and its state (the server checks both again).
 * A superseded analysis can only be sent back: a newer mask is what needs review.
 */
export function reviewButtons(analysis: ReviewedAnalysisDto, can: (action: LabAction, labId?: number) => boolean, userId: number | null): ReviewButtons {
  const from = (action: ReviewAction) => REVIEW_TRANSITIONS[action].from.includes(analysis.status)
  const reviewer = can('analysis.review', analysis.labId)
  const own = userId !== null && (analysis.author?.id === userId || analysis.submittedBy?.id === userId)
  const approvable = reviewer && from('approve') && !analysis.superseded
  return {
    submit: can('analysis.submit', analysis.labId) && from('submit') && !analysis.superseded,
    approve: approvable ? (own ? 'own' : 'yes') : 'no',
    requestChanges: reviewer && from('request-changes'),
  }
}

/** The panel's view of the analysis: the measurements of the reviewed analysis, with the distributions when known. */
function asPanelAnalysis(analysis: ReviewedAnalysisDto, latest: AnalysisDto | null): AnalysisDto {
  if (latest && latest.id === analysis.id) return latest
  return {
    id: analysis.id,
    frameId: analysis.frameId,
    annotationId: null,
    annotationVersion: analysis.annotationVersion,
    recipe: analysis.recipe as unknown as AnalysisRecipe,
    engineVersion: analysis.engineVersion,
    status: analysis.status,
    measurements: analysis.measurements,
    distributions: null,
    error: null,
    createdAt: analysis.createdAt,
  }
}

export const useReviewsStore = defineStore('reviews', () => {
  const queue = ref<ReviewQueueItemDto[]>([])
  const queueStatus = ref<LoadStatus>('idle')
  const queueError = shallowRef<ApiError | null>(null)
  /** How many analyses the filter covers; more than `queue` holds when the queue reached REVIEW_QUEUE_LIMIT. */
  const queueTotal = ref(0)
  const filter = ref<{ status: AnalysisStatus; projectId: number | null; labId: number | null }>({ status: 'submitted', projectId: null, labId: null })

  const analysis = ref<ReviewedAnalysisDto | null>(null)
  const image = shallowRef<ImageDetailDto | null>(null)
  const mask = shallowRef<BinaryMask | null>(null)
  const latestAnalysis = shallowRef<AnalysisDto | null>(null)
  const comments = ref<CommentDto[]>([])
  const history = ref<AnalysisHistoryDto | null>(null)
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  /** Why the mask could not be shown (the page still works without it). */
  const maskError = shallowRef<ApiError | null>(null)

  const panelAnalysis = computed(() => (analysis.value ? asPanelAnalysis(analysis.value, latestAnalysis.value) : null))
  const frame = computed(() => image.value?.frames.find((f) => f.id === analysis.value?.frameId) ?? null)
  /** Pinned comments with their number on the canvas (1, 2, … in the order they were made). */
  const pins = computed(() => comments.value.filter((c) => c.x !== null && c.y !== null).map((c, i) => ({ number: i + 1, comment: c })))

  async function fetchQueue(): Promise<void> {
    queueStatus.value = 'loading'
    queueError.value = null
    const asked: ReviewQueueFilter = { ...filter.value }
    try {
      const rows = await listReviewQueue(asked)
      // A full answer may be the oldest part of a longer queue: ask how long.
      const total = rows.length < REVIEW_QUEUE_LIMIT ? rows.length : (await countReviewQueue(asked)).count
      // Only the answer to the latest filter counts.
      if (JSON.stringify(asked) !== JSON.stringify({ ...filter.value })) return
      queue.value = rows
      queueTotal.value = total
      queueStatus.value = 'ready'
    } catch (e) {
      queueError.value = asApiError(e)
      queueStatus.value = 'error'
    }
  }

  /** How many analyses wait for review across the person's labs (for the overview), whatever the queue's filter. */
  const waitingCount = ref<number | null>(null)
  const waitingStatus = ref<LoadStatus>('idle')

  async function fetchWaitingCount(): Promise<void> {
    waitingStatus.value = 'loading'
    try {
      waitingCount.value = (await countReviewQueue({ status: 'submitted' })).count
      waitingStatus.value = 'ready'
    } catch {
      waitingStatus.value = 'error'
    }
  }

  async function loadMask(current: ReviewedAnalysisDto): Promise<void> {
    maskError.value = null
    try {
      const annotation = await getAnnotation(current.frameId, current.annotationVersion === null ? 'latest' : { version: current.annotationVersion })
      if (analysis.value?.id === current.id) mask.value = maskFromBase64(annotation.mask)
    } catch (e) {
      if (analysis.value?.id === current.id) maskError.value = asApiError(e)
    }
  }

  /** Open an analysis: its state first, then frame, mask, measurements, comments and history together. */
  async function open(analysisId: number): Promise<void> {
    status.value = 'loading'
    error.value = null
    analysis.value = null
    image.value = null
    mask.value = null
    latestAnalysis.value = null
    comments.value = []
    history.value = null
    try {
      const current = await getReviewedAnalysis(analysisId)
      analysis.value = current
      const [imageDetail, commentRows, historyDto, latest] = await Promise.all([
        getImage(current.imageId),
        listComments(analysisId),
        getAnalysisHistory(analysisId),
        // Only the frame's newest analysis carries the distributions; an older one shows its numbers alone.
        current.superseded ? Promise.resolve(null) : getFrameAnalysis(current.frameId).catch(() => null),
        loadMask(current),
      ])
      if (analysis.value?.id !== analysisId) return
      image.value = imageDetail
      comments.value = commentRows
      history.value = historyDto
      latestAnalysis.value = latest
      status.value = 'ready'
    } catch (e) {
      if (analysis.value !== null && analysis.value.id !== analysisId) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  async function refreshState(analysisId: number): Promise<void> {
    const [current, historyDto] = await Promise.all([getReviewedAnalysis(analysisId), getAnalysisHistory(analysisId)])
    if (analysis.value?.id !== analysisId) return
    analysis.value = current
    history.value = historyDto
  }

  /**
   * Take a workflow step. On a 409 (someone else moved the analysis, or a newer mask exists) the state is reloaded
   * before the error is rethrown, so the buttons match what the server now says.
   */
  async function step(action: ReviewAction, message?: string): Promise<ReviewedAnalysisDto> {
    const current = analysis.value
    if (!current) throw new Error('No analysis open.')
    try {
      const next = await reviewStep(current.id, action, message)
      analysis.value = next
      history.value = await getAnalysisHistory(current.id)
      return next
    } catch (e) {
      if (asApiError(e).status === 409) await refreshState(current.id).catch(() => undefined)
      throw e
    }
  }

  async function comment(body: string, point: { x: number; y: number } | null): Promise<CommentDto> {
    const current = analysis.value
    if (!current) throw new Error('No analysis open.')
    const created = await addComment(current.id, point ? { body, x: point.x, y: point.y } : { body })
    comments.value = [...comments.value, created]
    await refreshHistory(current.id)
    return created
  }

  async function resolve(commentId: number, resolved: boolean): Promise<CommentDto> {
    const current = analysis.value
    if (!current) throw new Error('No analysis open.')
    const updated = await setCommentResolved(current.id, commentId, resolved)
    comments.value = comments.value.map((c) => (c.id === updated.id ? updated : c))
    await refreshHistory(current.id)
    return updated
  }

  /**
   * The history after a comment was added, resolved or reopened (the server records each). The comment itself is
   * done: a history that fails to load keeps the one shown rather than failing the action.
   */
  async function refreshHistory(analysisId: number): Promise<void> {
    history.value = await getAnalysisHistory(analysisId).catch(() => history.value)
  }

  const session = useSessionStore()
  watch(
    () => session.user?.id,
    () => {
      queue.value = []
      queueStatus.value = 'idle'
      analysis.value = null
      comments.value = []
      history.value = null
      status.value = 'idle'
    },
  )

  return {
    queue,
    queueStatus,
    queueError,
    queueTotal,
    filter,
    analysis,
    image,
    frame,
    mask,
    maskError,
    panelAnalysis,
    comments,
    pins,
    history,
    status,
    error,
    fetchQueue,
    waitingCount,
    waitingStatus,
    fetchWaitingCount,
    open,
    step,
    comment,
    resolve,
  }
})
