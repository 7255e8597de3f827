/**
 * Recomputes measurements from a saved mask with the shared engine. The request handler awaits it, but the CPU work
 * runs in a worker thread (server/analysis/analysisPool.ts) so the event loop keeps serving other requests.
 */
import type { BinaryMask, GrayImage } from '../../shared/analysis/types'
import type { AnalysisRecipe } from '../../shared/analysis/recipe'
import type { FrameDistributions, FrameMeasurements } from '../../shared/analysis/analyzeFrame'

export interface MaskMeasurementInput {
  mask: BinaryMask
  /** The raw frame, for the domain contrast (preprocessed with the recipe first). */
  frame: GrayImage
  recipe: AnalysisRecipe
  pixelSizeNm: number | null
}

export interface MaskMeasurer {
  measure(input: MaskMeasurementInput): Promise<{ measurements: FrameMeasurements; distributions: FrameDistributions }>
}
