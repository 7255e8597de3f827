/**
 * The data of a sample's report page (GET /api/samples/:sampleId/report): everything needed to print what was
 * measured on a sample and who approved it, with provenance.
 */
import type { FrameMeasurements } from '../analysis/analyzeFrame'
import type { AnalysisStatus, SampleDto, Technique } from './lab'

export interface ReportAnalysisDto {
  id: number
  status: AnalysisStatus
  statusLabel: string
  engineVersion: string
  recipe: Record<string, unknown>
  annotationVersion: number | null
  annotator: { id: number; name: string } | null
  reviewer: { id: number; name: string } | null
  approvedAt: string | null
  measurements: FrameMeasurements
}

export interface ReportFrameDto {
  frameId: number
  index: number
  field: number | null
  fieldUnit: string | null
  /** μ0H in mT (converted from the recorded unit), or null. */
  fieldMT: number | null
  temperatureK: number | null
  /** The counted analysis of the frame (approved only unless drafts are included), or null. */
  analysis: ReportAnalysisDto | null
}

export interface ReportStackRunDto {
  id: number
  status: 'done' | 'done-with-errors'
  engineVersion: string
  recipe: Record<string, unknown>
  finishedAt: string | null
  loop: {
    fieldUnit: string | null
    coerciveField: number | null
    exchangeBias: number | null
    remanence: number | null
    squareness: number | null
    saturated: boolean
  } | null
  curie: { tc: number | null; tcStdErr: number | null; beta: number | null; betaStdErr: number | null; converged: boolean } | null
}

export interface ReportImageDto {
  id: number
  name: string
  sha256: string
  technique: Technique
  width: number
  height: number
  frameCount: number
  /** The frame shown for the image (ImageSummaryDto.coverFrameIndex). */
  coverFrameIndex: number
  pixelSizeNm: number | null
  acquiredAt: string | null
  frames: ReportFrameDto[]
  stackRun: ReportStackRunDto | null
}

export interface ReportApprovalDto {
  analysisId: number
  imageId: number
  imageName: string
  frameIndex: number
  reviewer: { id: number; name: string } | null
  approvedAt: string | null
  /** False when a newer analysis of the frame exists (the mask was edited after approval). */
  current: boolean
}

export interface SampleReportDto {
  generatedAt: string
  generatedBy: { id: number; name: string }
  includeDrafts: boolean
  /** Engine version of the server that made the report; each analysis records its own. */
  engineVersion: string
  lab: { id: number; name: string }
  project: { id: number; name: string }
  sample: SampleDto
  images: ReportImageDto[]
  approvals: ReportApprovalDto[]
}
