/**
 * Stacks: one recipe for every frame, a stack-wide Otsu threshold from the pooled histogram (a saturated frame of a
 * field sweep is one domain, and a per-frame Otsu split of it would invent walls — METHODS §1.1 pitfalls), then the
 * stack-level physics: the hysteresis loop (§5.2), jumps between successive frames (§5.3) with a power-law fit of the
 * cluster sizes (§5.4, Clauset, Shalizi & Newman 2009), and for temperature series the Curie fit of the domain contrast
 * measured on the mask of the sharpest frame (§6).
 *
 * The work is split into passes over frames (histogram → segment and measure → contrast) so that the same functions
 * run in one thread (`analyzeStack`) or spread over a worker pool (server/analysis/), with identical results.
 */
import type { BinaryMask, FloatImage, GrayImage } from './types'
import type { AnalysisRecipe } from './recipe'
import { POOLED_HISTOGRAM_BINS, histogramOnRange, measureMask, preprocessFrame, segmentPreprocessed, thresholdFromHistogram, type FrameMeasurements } from './analyzeFrame'
import { hysteresisLoop, type HysteresisLoopResult } from './hysteresisLoop'
import { flippedClusters } from './jumpStatistics'
import { countAtLeastAsFar, preparePowerLawFit, type PendingPowerLawFit, type PowerLawFit } from './powerLawFit'
import { fitCriticalLaw, type CriticalLawFit } from './curieFit'
import { domainContrast, sharpestFrameIndex } from './domainContrast'

export interface FrameCondition {
  /** Applied field in `fieldUnit`, or null. */
  field: number | null
  /** Temperature in kelvin, or null. */
  temperatureK: number | null
}

export interface StackMeta {
  pixelSizeNm: number | null
  fieldUnit: string | null
  frames: FrameCondition[]
}

export interface JumpStep {
  fromFrame: number
  toFrame: number
  deltaM: number
  /** Sizes (px) of the flipped clusters between the two frames (uncensored, ≥ the recipe's minimum area). */
  clusterSizesPx: number[]
  censoredClusters: number
}

export interface LoopSummary extends HysteresisLoopResult {
  fieldUnit: string | null
  jumps: JumpStep[]
  /** Maximum-likelihood power law of all jump-cluster sizes (discrete, px). */
  jumpSizeFit: PowerLawFit | null
}

export interface CurieSummary extends CriticalLawFit {
  /** Frame whose mask was used to measure the contrast of every frame. */
  maskFrame: number
  contrasts: number[]
}

/**
 * A histogram range that contains every preprocessed value without a first pass: smoothing and median filtering stay
 * inside the raw range; flat-fielding adds at most one raw span each way; a reference difference spans ±(max − min).
 */
export function safeHistogramRange(rawMin: number, rawMax: number, recipe: AnalysisRecipe): { min: number; max: number } {
  const span = rawMax - rawMin
  if (recipe.background === 'reference') return { min: -span, max: span }
  if (recipe.background === 'flatten') return { min: rawMin - span, max: rawMax + span }
  return { min: rawMin, max: rawMax }
}

export function rawRange(image: GrayImage | FloatImage): { min: number; max: number } {
  let min = Infinity
  let max = -Infinity
  const { data } = image
  for (let i = 0; i < data.length; i++) {
    const v = data[i]
    if (v < min) min = v
    if (v > max) max = v
  }
  return { min, max }
}

/** Pooled-histogram bins: 4× the single-frame resolution, since the safe range can be up to 3× the data span. */
export const STACK_HISTOGRAM_BINS = POOLED_HISTOGRAM_BINS * 4

/** Bootstrap resamples of the jump-size power-law p-value (Clauset et al. 2009 §4.1; see powerLawFit.ts). */
export const JUMP_BOOTSTRAP_RESAMPLES = 200

/** Pass 1 for one frame: its preprocessed histogram on the stack's common range. */
export function frameHistogramPass(image: GrayImage | FloatImage, recipe: AnalysisRecipe, range: { min: number; max: number }, context: { reference?: GrayImage | FloatImage; registrationAnchor?: GrayImage | FloatImage }): Uint32Array {
  return histogramOnRange(preprocessFrame(image, recipe, context), range.min, range.max, STACK_HISTOGRAM_BINS)
}

/** Pass 2 for one frame: segment with the given threshold (or per frame) and measure. */
export function frameMeasurePass(
  image: GrayImage | FloatImage,
  recipe: AnalysisRecipe,
  context: { pixelSizeNm: number | null; threshold?: number; reference?: GrayImage | FloatImage; registrationAnchor?: GrayImage | FloatImage },
): { measurements: FrameMeasurements; mask: BinaryMask } {
  const pre = preprocessFrame(image, recipe, context)
  const { mask, threshold, reassignedFraction } = segmentPreprocessed(pre, recipe, context.threshold)
  return { measurements: measureMask(mask, { pixelSizeNm: context.pixelSizeNm, image: pre, threshold, reassignedFraction }).measurements, mask }
}

/**
 * Pass 3 for one frame of a temperature series: the signed contrast mean(up) − mean(down) of the preprocessed frame
 * on a fixed mask. Signed, so that above Tc it scatters around zero instead of staying at the noise's |mean|.
 */
export function frameContrastPass(image: GrayImage | FloatImage, recipe: AnalysisRecipe, mask: BinaryMask, context: { reference?: GrayImage | FloatImage; registrationAnchor?: GrayImage | FloatImage }): number {
  const { upMean, downMean } = domainContrast(preprocessFrame(image, recipe, context), mask)
  return upMean === null || downMean === null ? 0 : Number((upMean - downMean).toPrecision(6))
}

/** Add pass-1 histograms and take Otsu's threshold of the sum. */
export function pooledThreshold(histograms: Uint32Array[], range: { min: number; max: number }): number {
  const total = new Uint32Array(STACK_HISTOGRAM_BINS)
  for (const h of histograms) for (let i = 0; i < total.length; i++) total[i] += h[i]
  return thresholdFromHistogram(total, range.min, range.max)
}

const isNumber = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v)

/**
 * The mask of a stack frame by index. The loop summary asks for them in frame order, each pair once, so a caller that
 * keeps masks encoded (server/analysis/analyzeStackInPool.ts) needs only the last one decoded.
 */
export type MaskAt = (index: number) => BinaryMask

/** A loop summary whose jump-size bootstrap is still to be counted (see {@link prepareLoopSummary}). */
export interface PendingLoopSummary {
  /** The jump-size power-law fit awaiting its bootstrap count, or null when there are too few jumps to fit. */
  jumpSizeFit: PendingPowerLawFit | null
  /** The summary, given countAtLeastAsFar of the fit's bootstrap sets (ignored without a fit). */
  complete(atLeastAsFar: number): LoopSummary
}

/**
 * {@link summarizeLoop} in two steps, for callers that count the jump-size bootstrap elsewhere (on several threads);
 * `complete(countAtLeastAsFar(jumpSizeFit.sets, jumpSizeFit.reference))` is exactly summarizeLoop's result.
 */
export function prepareLoopSummary(measurements: FrameMeasurements[], maskAt: MaskAt, meta: StackMeta, minClusterArea: number): PendingLoopSummary | null {
  const indices = meta.frames.map((f, i) => (isNumber(f.field) ? i : -1)).filter((i) => i >= 0)
  if (indices.length < 3) return null
  const loop = hysteresisLoop(indices.map((i) => ({ field: meta.frames[i].field as number, magnetization: measurements[i].magnetization })))
  const jumps: JumpStep[] = []
  for (let k = 0; k + 1 < indices.length; k++) {
    const from = indices[k]
    const to = indices[k + 1]
    const clusters = flippedClusters(maskAt(from), maskAt(to), Math.max(1, minClusterArea))
    jumps.push({ fromFrame: from, toFrame: to, deltaM: Number((measurements[to].magnetization - measurements[from].magnetization).toPrecision(6)), clusterSizesPx: clusters.sizes, censoredClusters: clusters.censored })
  }
  const sizes = jumps.flatMap((j) => j.clusterSizesPx)
  const jumpSizeFit = sizes.length >= 2 ? preparePowerLawFit(sizes, { discrete: true, bootstrap: JUMP_BOOTSTRAP_RESAMPLES, seed: 1 }) : null
  return {
    jumpSizeFit,
    complete: (atLeastAsFar) => ({ ...loop, fieldUnit: meta.fieldUnit, jumps, jumpSizeFit: jumpSizeFit?.complete(atLeastAsFar) ?? null }),
  }
}

/** The loop and its jumps, when at least three frames carry a field. */
export function summarizeLoop(measurements: FrameMeasurements[], masks: BinaryMask[], meta: StackMeta, minClusterArea: number): LoopSummary | null {
  const pending = prepareLoopSummary(measurements, (index) => masks[index], meta, minClusterArea)
  if (pending === null) return null
  const fit = pending.jumpSizeFit
  return pending.complete(fit === null ? 0 : countAtLeastAsFar(fit.sets, fit.reference))
}

/** Index of the frame whose mask the contrast series uses: the largest own-mask contrast among temperature frames. */
export function contrastMaskFrame(measurements: FrameMeasurements[], meta: StackMeta): number | null {
  const contrasts = measurements.map((m, i) => (isNumber(meta.frames[i]?.temperatureK) ? (m.contrast ?? 0) : -Infinity))
  return sharpestFrameIndex(contrasts)
}

/**
 * Contrast below this share of the largest contrast counts as "no domain contrast" (above Tc). Common practice, no
 * source: the signed contrast of a domain-free frame on a fixed mask scatters around zero at the noise level, which
 * for a frame of ≥ 10^4 pixels is well under 1 % of the domain contrast well below Tc.
 */
export const CONTRAST_ZERO_SHARE = 0.01

/** The Curie fit of contrast against temperature, when at least four frames carry a temperature. */
export function summarizeCurie(contrasts: number[], maskFrame: number, meta: StackMeta): CurieSummary | null {
  const points = meta.frames.map((f, i) => ({ temperature: f.temperatureK, value: contrasts[i] })).filter((p): p is { temperature: number; value: number } => isNumber(p.temperature) && isNumber(p.value))
  if (points.length < 4) return null
  const largest = Math.max(...points.map((p) => Math.abs(p.value)))
  return { ...fitCriticalLaw(points, { zeroLevel: CONTRAST_ZERO_SHARE * largest }), maskFrame, contrasts }
}

/** A stack's numbers: the stack-wide threshold, each frame's measurements, the loop and the Curie fit. */
export interface StackResults {
  threshold: number | null
  frames: FrameMeasurements[]
  loop: LoopSummary | null
  curie: CurieSummary | null
}

export interface StackAnalysis extends StackResults {
  masks: BinaryMask[]
}

/** The whole stack in this thread (tests, the browser, small stacks). */
export function analyzeStack(frames: (GrayImage | FloatImage)[], recipe: AnalysisRecipe, meta: StackMeta): StackAnalysis {
  if (frames.length === 0) return { threshold: null, frames: [], masks: [], loop: null, curie: null }
  const context = {
    reference: recipe.background === 'reference' ? frames[recipe.referenceFrame ?? 0] : undefined,
    registrationAnchor: recipe.registerFrames ? frames[0] : undefined,
  }
  if (recipe.background === 'reference' && !context.reference) throw new RangeError(`recipe.referenceFrame ${recipe.referenceFrame} is not a frame of this stack (it has ${frames.length})`)
  let threshold: number | undefined
  if (recipe.method === 'otsu' && recipe.stackThreshold === 'stack-wide') {
    let min = Infinity
    let max = -Infinity
    for (const f of frames) {
      const r = rawRange(f)
      min = Math.min(min, r.min)
      max = Math.max(max, r.max)
    }
    const range = safeHistogramRange(min, max, recipe)
    threshold = pooledThreshold(frames.map((f) => frameHistogramPass(f, recipe, range, context)), range)
  }
  const results = frames.map((f) => frameMeasurePass(f, recipe, { pixelSizeNm: meta.pixelSizeNm, threshold, ...context }))
  const measurements = results.map((r) => r.measurements)
  const masks = results.map((r) => r.mask)
  const loop = summarizeLoop(measurements, masks, meta, recipe.minDomainArea)
  const maskFrame = contrastMaskFrame(measurements, meta)
  const curie = maskFrame === null ? null : summarizeCurie(frames.map((f) => frameContrastPass(f, recipe, masks[maskFrame], context)), maskFrame, meta)
  return { threshold: threshold ?? null, frames: measurements, masks, loop, curie }
}
