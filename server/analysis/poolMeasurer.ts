/**
 * A MaskMeasurer backed by the web server's analysis threads (lazyAnalysisPool.ts): the request thread only awaits, a
 * worker thread computes.
 */
import { measureMaskInPool } from './analysisPool'
import type { LazyAnalysisPool } from './lazyAnalysisPool'
import type { MaskMeasurer } from './maskMeasurer'

export function createPoolMeasurer(threads: LazyAnalysisPool): MaskMeasurer {
  return {
    async measure({ mask, frame, recipe, pixelSizeNm }) {
      const { measurements, distributions } = await measureMaskInPool(threads.get(), mask, { pixelSizeNm, frame, recipe, detail: true })
      return { measurements, distributions: distributions! }
    },
  }
}
