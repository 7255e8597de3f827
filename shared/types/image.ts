import type { Technique } from './lab'

/** What POST /api/projects/:projectId/images answers per file. `duplicateOf` is set when the same bytes exist already. */
export interface UploadedImageDto {
  id: number
  name: string
  sha256: string
  width: number
  height: number
  bitDepth: number
  frameCount: number
  pixelSizeNm: number | null
  duplicateOf?: number
}

export type FrameAnnotationStatus = 'new' | 'in-progress' | 'submitted'

export interface ImageSummaryDto extends UploadedImageDto {
  /** The frame that stands for the image in lists and reports: the one with the most wall detail at ingest. */
  coverFrameIndex: number
  projectId: number
  sampleId: number | null
  /** Who uploaded it (null when that account is gone): microscopists may delete their own uploads only. */
  uploadedById: number | null
  technique: Technique
  createdAt: string
  acquiredAt: string | null
  annotationStatus: FrameAnnotationStatus
  /** Frames whose newest analysis is approved (review), of frameCount. */
  approvedFrameCount: number
}

export interface FrameDto {
  id: number
  index: number
  field: number | null
  fieldUnit: string | null
  temperatureK: number | null
  /** Motion series (issue #8): amplitude of the pulse before this frame in `fieldUnit`, its duration in s. */
  pulseField?: number | null
  pulseDurationS?: number | null
  /** Acquisition time of a constant-field motion series, s. */
  timeS?: number | null
  annotationStatus: string
  assignee: { id: number; name: string } | null
}

export interface ImageDetailDto extends ImageSummaryDto {
  notes: string
  pixelSizeSource: string | null
  mediaType: string
  byteSize: number
  sample: { id: number; name: string; annealTemperatureC: number | null } | null
  frames: FrameDto[]
}
