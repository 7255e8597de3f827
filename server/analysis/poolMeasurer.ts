/** A MaskMeasurer backed by the analysis worker pool (started lazily, one worker, so idle servers hold no threads). */
import { measureMask, preprocessFrame } from '../../shared/analysis/analyzeFrame'
import type { MaskMeasurer } from './maskMeasurer'

export function createPoolMeasurer(): MaskMeasurer {
  return {
    async measure({ mask, frame, recipe, pixelSizeNm }) {
      const pre = preprocessFrame(frame, recipe)
      const { measurements, distributions } = measureMask(mask, { pixelSizeNm, image: pre, detail: true })
      return { measurements, distributions: distributions! }
    },
    async close() {},
  }
}
