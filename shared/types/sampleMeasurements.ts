/**
 * GET /api/samples/:sampleId/measurements: what has been measured on a sample — the latest analysis of every analysed
 * frame of its images, and the summaries of its images' stack runs — for comparison with theory (METHODS §7.2).
 */
import type { AnalysisStatus, SampleDto } from './lab'
import type { StackRunStatus } from './stack'

/** The latest analysis of one frame (mask saved in the workspace). Lengths in px always, in nm when calibrated. */
export interface SampleFrameMeasurementDto {
  analysisId: number
  imageId: number
  imageName: string
  frameIndex: number
  field: number | null
  fieldUnit: string | null
  temperatureK: number | null
  status: AnalysisStatus
  createdAt: string
  pixelSizeNm: number | null
  magnetization: number | null
  meanWidthPx: number | null
  meanWidthNm: number | null
  periodPx: number | null
  periodNm: number | null
}

/** One stack run of one of the sample's images, with the medians over its analysed frames. */
export interface SampleStackRunSummaryDto {
  runId: number
  imageId: number
  imageName: string
  status: StackRunStatus
  framesTotal: number
  framesDone: number
  createdAt: string
  finishedAt: string | null
  pixelSizeNm: number | null
  /** Frames with measurements. */
  framesMeasured: number
  /**
   * The measured frame with the smallest |M/Ms|: the nearest to the demagnetized state that the Kittel model
   * describes (METHODS §7.2), with its mean width and period.
   */
  nearZeroFrame: { index: number; magnetization: number; meanWidthPx: number | null; meanWidthNm: number | null; periodPx: number | null; periodNm: number | null } | null
  medianWidthPx: number | null
  medianWidthNm: number | null
  medianPeriodPx: number | null
  medianPeriodNm: number | null
  /** Loop values in the frames' field unit, when the run had a field sweep. */
  coerciveField: number | null
  fieldUnit: string | null
  /** Curie fit, when the run had a temperature series. */
  tcK: number | null
  beta: number | null
}

export interface SampleMeasurementsDto {
  sample: SampleDto
  labId: number
  projectName: string
  frames: SampleFrameMeasurementDto[]
  stackRuns: SampleStackRunSummaryDto[]
}
