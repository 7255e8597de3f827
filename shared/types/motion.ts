/**
 * Wall motion (issue #8) over the API: GET /api/images/:imageId/motion (one motion series) and
 * GET /api/samples/:sampleId/motion (every motion series of a sample, with the v(H) points pooled and one creep fit).
 */
import type { AnalysisRecipe } from '../analysis/recipe'
import type { MotionAnalysis, MotionCreep } from '../analysis/analyzeMotion'

/** The motion analysis of one image (a pulsed-field or timed series). */
export interface ImageMotionDto {
  imageId: number
  imageName: string
  sample: { id: number; name: string } | null
  engineVersion: string
  /** The recipe the masks were made with (motion defaults under the requested fields). */
  recipe: AnalysisRecipe
  motion: MotionAnalysis
}

/** One step of one series as a v(H) point of the sample's pooled fit; field as μ0H in mT. */
export interface MotionPointDto {
  imageId: number
  imageName: string
  fromFrame: number
  toFrame: number
  fieldMT: number
  velocity: number
  velocityStdErr: number | null
  velocityUnit: 'm/s' | 'px/s'
}

/** One motion series of a sample: its analysis, or why it could not be analysed. */
export interface SampleMotionSeriesDto {
  imageId: number
  imageName: string
  recipe: AnalysisRecipe | null
  motion: MotionAnalysis | null
  error: { code: string; message: string } | null
}

export interface SampleMotionDto {
  sample: { id: number; name: string; annealTemperatureC: number | null }
  engineVersion: string
  series: SampleMotionSeriesDto[]
  /** Every step of every analysed series in the pooled unit (the most common velocity unit). */
  points: MotionPointDto[]
  velocityUnit: 'm/s' | 'px/s' | null
  /** One creep fit over `points` (fields in mT), null below 3 distinct fields. */
  creep: MotionCreep | null
  notes: string[]
}
