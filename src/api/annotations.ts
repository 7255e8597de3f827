/**
 * Masks of frames: versioned saves (optimistic, against the version the client edited), the version history, one
 * version or conflict copy, restore, the frame's latest analysis, its annotation status, and the annotation queue.
 */
import type {
  AnalysisDto,
  AnnotationConflictBody,
  AnnotationDto,
  AnnotationVersionDto,
  QueueFrameDto,
  SaveAnnotationRequest,
  SaveAnnotationResponse,
} from '@shared/types/annotation'
import { http } from './http'

/**
 * What a save (or a restore) came to: stored as a new version with its analysis, or refused because someone saved
 * another version first. A conflict is an expected answer, not an error: the server kept the edit as a conflict copy
 * and the person chooses what happens next.
 */
export type SaveOutcome =
  | ({ kind: 'saved' } & SaveAnnotationResponse)
  | { kind: 'conflict'; message: string; latestVersion: number; conflictCopy: AnnotationVersionDto }

function isConflict(body: SaveAnnotationResponse | AnnotationConflictBody): body is AnnotationConflictBody {
  return 'latestVersion' in body && 'error' in body
}

function outcomeOf(body: SaveAnnotationResponse | AnnotationConflictBody): SaveOutcome {
  if (isConflict(body)) return { kind: 'conflict', message: body.error.message, latestVersion: body.latestVersion, conflictCopy: body.conflictCopy }
  return { kind: 'saved', ...body }
}

/** Save a mask as the next version after `request.baseVersion`; needs `mask.edit`. Throws `ApiError` for other failures. */
export async function saveAnnotation(frameId: number, request: SaveAnnotationRequest): Promise<SaveOutcome> {
  const body = await http.post<SaveAnnotationResponse | AnnotationConflictBody>(`/frames/${frameId}/annotations`, request, { acceptStatuses: [409] })
  return outcomeOf(body)
}

/** Saved versions and conflict copies, newest first. */
export function listVersions(frameId: number): Promise<AnnotationVersionDto[]> {
  return http.get<AnnotationVersionDto[]>(`/frames/${frameId}/annotations`)
}

/** Which mask to read: the latest saved version, a saved version by number, or a conflict copy by its id. */
export type AnnotationRef = 'latest' | { version: number } | { copy: number }

/** One mask with its shapes; the latest answers 404 `annotation-not-found` while the frame has no saved mask. */
export function getAnnotation(frameId: number, which: AnnotationRef): Promise<AnnotationDto> {
  if (which === 'latest') return http.get<AnnotationDto>(`/frames/${frameId}/annotations/latest`)
  // The server looks a conflict copy up by id and ignores the version number in the path.
  if ('copy' in which) return http.get<AnnotationDto>(`/frames/${frameId}/annotations/0?copy=${which.copy}`)
  return http.get<AnnotationDto>(`/frames/${frameId}/annotations/${which.version}`)
}

/** Save an older version again as the newest; `baseVersion` is the latest version the client knows. */
export async function restoreVersion(frameId: number, version: number, baseVersion: number | null): Promise<SaveOutcome> {
  const body = await http.post<SaveAnnotationResponse | AnnotationConflictBody>(`/frames/${frameId}/annotations/${version}/restore`, { baseVersion }, { acceptStatuses: [409] })
  return outcomeOf(body)
}

/** The frame's latest analysis (measurements with units), or null before the first save. */
export function getFrameAnalysis(frameId: number): Promise<AnalysisDto | null> {
  return http.get<AnalysisDto | null>(`/frames/${frameId}/analysis`)
}

/** Frames to annotate: the person's own (default), or every assigned frame, optionally of one project. */
export function getQueue(options: { mine?: boolean; projectId?: number } = {}): Promise<QueueFrameDto[]> {
  const params = new URLSearchParams({ mine: String(options.mine ?? true) })
  if (options.projectId !== undefined) params.set('projectId', String(options.projectId))
  return http.get<QueueFrameDto[]>(`/queue?${params.toString()}`)
}
