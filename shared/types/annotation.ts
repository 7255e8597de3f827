import type { AnalysisRecipe } from '../analysis/recipe'
import type { FrameDistributions, FrameMeasurements } from '../analysis/analyzeFrame'
import type { AnalysisStatus } from './lab'

/** A vector shape drawn in the workspace (kept with the mask as JSON, in image pixel coordinates). */
export interface AnnotationShape {
  kind: 'wall-trace' | 'polygon' | 'calibration-line' | 'probe-line'
  points: number[]
  phase?: 0 | 1
  note?: string
}

export interface AnnotationVersionDto {
  id: number
  version: number | null
  state: 'saved' | 'conflict'
  basedOnVersion: number | null
  author: { id: number; name: string } | null
  createdAt: string
}

export interface AnnotationDto extends AnnotationVersionDto {
  frameId: number
  /** Base64 of the RMSK run-length encoding (shared/imageio/maskEncoding.ts). */
  mask: string
  shapes: AnnotationShape[]
}

export interface SaveAnnotationRequest {
  /** The version the client edited (null when the frame had none). */
  baseVersion: number | null
  mask: string
  shapes: AnnotationShape[]
  recipe: Partial<AnalysisRecipe>
}

export interface AnalysisDto {
  id: number
  frameId: number
  annotationId: number | null
  annotationVersion: number | null
  recipe: AnalysisRecipe
  engineVersion: string
  status: AnalysisStatus
  measurements: FrameMeasurements | null
  distributions: FrameDistributions | null
  error: string | null
  createdAt: string
}

export interface SaveAnnotationResponse {
  annotation: AnnotationVersionDto
  analysis: AnalysisDto
}

/** Body of a 409 answer to a stale save: the client can reload the latest or save its copy as a new version. */
export interface AnnotationConflictBody {
  error: { code: 'version-conflict'; message: string }
  latestVersion: number
  conflictCopy: AnnotationVersionDto
}

export interface QueueFrameDto {
  frameId: number
  imageId: number
  imageName: string
  frameIndex: number
  frameCount: number
  field: number | null
  fieldUnit: string | null
  temperatureK: number | null
  status: string
  assignee: { id: number; name: string } | null
  projectId: number
  projectName: string
  latestVersion: number | null
  updatedAt: string
}
