/**
 * A MaskMeasurer backed by the analysis worker pool: the request thread only awaits, a worker thread computes. The
 * pool (one worker by default, MEASURE_WORKERS to change) starts on first use, so an idle server holds no threads.
 */
import { createAnalysisPool, measureMaskInPool, type AnalysisPool } from './analysisPool'
import type { MaskMeasurer } from './maskMeasurer'

export function createPoolMeasurer(size = Number(process.env.MEASURE_WORKERS ?? 1)): MaskMeasurer {
  let pool: AnalysisPool | null = null
  return {
    async measure({ mask, frame, recipe, pixelSizeNm }) {
      pool ??= createAnalysisPool({ size })
      const { measurements, distributions } = await measureMaskInPool(pool, mask, { pixelSizeNm, frame, recipe, detail: true })
      return { measurements, distributions: distributions! }
    },
    async close() {
      const running = pool
      pool = null
      await running?.close()
    },
  }
}
