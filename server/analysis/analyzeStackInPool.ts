/**
 * A whole stack through the worker pool: the same passes and the same stack-level steps as `analyzeStack`
 * (shared/analysis/analyzeStack.ts), so the result is identical to the one-thread analysis of the decoded frames,
 * with frames placed by index whatever order the workers finish in. The raw range is one more pass here, because the
 * frames are decoded in the workers rather than held by the caller.
 * Masks stay in their stored encoding (shared/imageio/maskEncoding.ts, tens of kB for a 1024² frame) and are decoded
 * one at a time when a step needs them, so a long stack does not hold a megabyte per frame in this thread.
 */
import {
  contrastMaskFrame,
  pooledThreshold,
  prepareLoopSummary,
  safeHistogramRange,
  summarizeCurie,
  type LoopSummary,
  type MaskAt,
  type StackMeta,
  type StackResults,
} from '../../shared/analysis/analyzeStack'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { BinaryMask } from '../../shared/analysis/types'
import { decodeMask } from '../../shared/imageio/maskEncoding'
import type { AnalysisRecipe } from '../../shared/analysis/recipe'
import type { DecodeLimits } from '../../shared/imageio/decodeImage'
import type { AnalysisPool, FrameOutcome } from './analysisPool'

/** A stack analysed in the pool: the numbers, and each frame's mask in the stored encoding. */
export interface PooledStackAnalysis extends StackResults {
  encodedMasks: Uint8Array[]
}

/**
 * The masks of a stack from their encodings, for the loop summary: each is decoded when asked for and only the last
 * one is kept, which is all a walk through successive pairs needs.
 */
export function decodingMaskAt(encodedMasks: Uint8Array[]): MaskAt {
  let lastIndex = -1
  let last: BinaryMask | null = null
  return (index) => {
    if (last === null || index !== lastIndex) {
      last = decodeMask(encodedMasks[index])
      lastIndex = index
    }
    return last
  }
}

/** Frames of a stack that could not be analysed; `failures` names each with its index (0-based) and reason. */
export class StackFramesError extends Error {
  readonly code = 'frames-failed'
  readonly status = 422
  readonly fileName: string
  readonly failures: { index: number; message: string; code?: string }[]

  constructor(fileName: string, failures: { index: number; message: string; code?: string }[]) {
    const shown = failures.slice(0, 5).map((f) => `frame ${f.index}: ${f.message}`)
    if (failures.length > 5) shown.push(`… and ${failures.length - 5} more`)
    super(`"${fileName}": ${failures.length} frame(s) could not be analysed (${shown.join('; ')}).`)
    this.name = 'StackFramesError'
    this.fileName = fileName
    this.failures = failures
  }
}

/**
 * summarizeLoop (shared/analysis/analyzeStack.ts) with the refits of the jump-size bootstrap spread over the pool's
 * threads: the same summary, in a fraction of the time it takes on one thread.
 */
export async function summarizeLoopInPool(pool: AnalysisPool, measurements: FrameMeasurements[], maskAt: MaskAt, meta: StackMeta, minClusterArea: number): Promise<LoopSummary | null> {
  const pending = prepareLoopSummary(measurements, maskAt, meta, minClusterArea)
  if (pending === null) return null
  const fit = pending.jumpSizeFit
  return pending.complete(fit === null ? 0 : await pool.countAtLeastAsFar(fit.sets, fit.reference))
}

function values<T>(fileName: string, outcomes: FrameOutcome<T>[]): T[] {
  const failures = outcomes.flatMap((o) => (o.ok ? [] : [{ index: o.index, message: o.error.message, code: o.error.code }]))
  if (failures.length > 0) throw new StackFramesError(fileName, failures)
  return outcomes.map((o) => (o as { value: T }).value)
}

/**
 * Analyse every frame of an image file in the pool and summarise the stack (loop, jumps, Curie fit).
 * @param input the file's bytes (shared with the workers), or its path on this machine (each worker reads the ranges
 *   it needs, so no thread holds the whole file).
 * @param meta one condition per frame of the file (from its frames CSV), and the pixel size.
 * @throws AnalysisWorkerError with the ImageDecodeError's code and status when the file itself cannot be read; RangeError when `meta` does not match the frame count
 *   or the recipe's reference frame is not in the stack; StackFramesError naming the frames that failed.
 */
export async function analyzeStackInPool(
  pool: AnalysisPool,
  input: Uint8Array | { path: string },
  fileName: string,
  recipe: AnalysisRecipe,
  meta: StackMeta,
  limits?: Partial<DecodeLimits>,
): Promise<PooledStackAnalysis> {
  const file = input instanceof Uint8Array ? pool.shareFile(input, fileName, limits) : pool.openFile(input.path, fileName, limits)
  try {
    // The header is read in a worker, which keeps the parsed file for decoding: this thread never parses it.
    const { frameCount } = await pool.probe(file)
    if (meta.frames.length !== frameCount) {
      throw new RangeError(`"${fileName}" has ${frameCount} frame(s) but ${meta.frames.length} frame condition(s) were given.`)
    }
    if (recipe.background === 'reference' && (recipe.referenceFrame ?? 0) >= frameCount) {
      throw new RangeError(`recipe.referenceFrame ${recipe.referenceFrame} is not a frame of this stack (it has ${frameCount})`)
    }
    const indices = Array.from({ length: frameCount }, (_, i) => i)
    let threshold: number | undefined
    if (recipe.method === 'otsu' && recipe.stackThreshold === 'stack-wide') {
      let min = Infinity
      let max = -Infinity
      for (const r of values(fileName, await pool.rawRangePass(file, indices))) {
        min = Math.min(min, r.min)
        max = Math.max(max, r.max)
      }
      const range = safeHistogramRange(min, max, recipe)
      threshold = pooledThreshold(values(fileName, await pool.histogramPass(file, indices, recipe, range)), range)
    }
    const results = values(fileName, await pool.measurePass(file, indices, recipe, { pixelSizeNm: meta.pixelSizeNm, threshold }))
    const measurements = results.map((r) => r.measurements)
    const encodedMasks = results.map((r) => r.encodedMask)
    const loop = await summarizeLoopInPool(pool, measurements, decodingMaskAt(encodedMasks), meta, recipe.minDomainArea)
    const maskFrame = contrastMaskFrame(measurements, meta)
    const curie = maskFrame === null ? null : summarizeCurie(values(fileName, await pool.contrastPass(file, indices, recipe, decodeMask(encodedMasks[maskFrame]))), maskFrame, meta)
    return { threshold: threshold ?? null, frames: measurements, encodedMasks, loop, curie }
  } finally {
    pool.releaseFile(file)
  }
}
