/**
 * The per-frame pipeline: preprocess → segment → clean up → measure. It only composes the method modules (each cites
 * its method); the order follows METHODS §8 → §1 → §2–§5. Measurements are taken from the binary mask alone (plus the
 * grey image for the domain contrast), so a mask saved from the workspace and the same mask from the CLI give
 * identical numbers.
 *
 * Units: every length is in pixels first; the `…Nm` / `…PerUm` fields are filled only when the pixel size is known
 * (never guessed: METHODS §0 / §9) and are null otherwise.
 */
import type { BinaryMask, FloatImage, GrayImage } from './types'
import type { AnalysisRecipe } from './recipe'
import { gaussianBlur } from './gaussianBlur'
import { medianFilter } from './medianFilter'
import { flattenField, subtractReference } from './backgroundCorrection'
import { binUpperEdge, otsuFromHistogram } from './otsuThreshold'
import { kmeansSegment } from './kmeansSegmentation'
import { closeMask, fillHoles, openMask, squareFilter3Packed } from './morphology'
import { removeSmallDomains, removeSmallDomainsPacked } from './minimumAreaFilter'
import { packAbove, packNonZero, unpackBits, wordsPerRow } from './bitPackedMask'
import { componentStatsBothPhases } from './connectedComponents'
import { domainSizeStats } from './domainSizes'
import { localDomainWidths } from './localWidth'
import { domainPeriod } from './powerSpectrumPeriod'
import { stripeOrientation } from './stripeOrientation'
import { wallDensity } from './wallLength'
import { areaFractions } from './magnetization'
import { domainContrast } from './domainContrast'
import { applyShift, estimateShift } from './phaseCorrelation'

/** Histogram resolution used to pool frames for a stack-wide Otsu threshold. */
export const POOLED_HISTOGRAM_BINS = 1024

export interface FrameMeasurements {
  width: number
  height: number
  pixelSizeNm: number | null
  /** Threshold in preprocessed-intensity units (Otsu), or null for k-means / a given mask. */
  threshold: number | null
  analysedPx: number
  upFraction: number
  downFraction: number
  /** M/Ms = (A_up − A_down)/(A_up + A_down) (METHODS §5.1, binary route). */
  magnetization: number
  /** Domains of both phases (up 8-connected, down 4-connected), border-touching ones included. */
  domainCount: number
  upDomainCount: number
  downDomainCount: number
  /** Number-weighted mean equivalent-circle diameter of complete up domains, px (§2.2). */
  meanUpDiameterPx: number | null
  /** Mean local width perpendicular to the walls, both phases, px (§2.3) ± standard error. */
  meanWidthPx: number | null
  meanWidthStdErrPx: number | null
  meanWidthNm: number | null
  upMeanWidthPx: number | null
  downMeanWidthPx: number | null
  /** Period from the radially averaged power spectrum of the mask (§3.1), px. */
  periodPx: number | null
  periodNm: number | null
  /** Wall direction of stripes, degrees, x = column, y = row (angles turn clockwise on screen), §3.3. */
  orientationDeg: number | null
  /** Stripe order parameter S ∈ [0, 1]. */
  orderParameter: number
  /** Wall length per analysed area (Crofton, §4), px⁻¹ and µm⁻¹. */
  wallDensityPerPx: number
  wallDensityPerUm: number | null
  wallLengthPx: number
  /** Share of pixels given to the surrounding phase by the minimum-area filter (§1.5). */
  reassignedFraction: number
  /** |mean(up) − mean(down)| of the preprocessed image on this mask, or null without an image. */
  contrast: number | null
}

export interface FrameDistributions {
  /** Histogram of local widths, px: bin edges (n+1) and counts (n). */
  widthHistogram: { edges: number[]; counts: number[] }
  /** Equivalent-circle diameters of complete up domains, px. */
  upDiametersPx: number[]
  /** Radially averaged power spectrum of the mask: frequency (cycles/px) and power. */
  spectrum: { frequencies: number[]; power: number[] }
}

/**
 * Preprocess one raw frame: optional registration shift, background (reference difference or flat-field), denoise,
 * smoothing. Returns a new float image; the input is not modified.
 */
export function preprocessFrame(image: GrayImage | FloatImage, recipe: AnalysisRecipe, context: { reference?: GrayImage | FloatImage; registrationAnchor?: GrayImage | FloatImage } = {}): FloatImage {
  let current: GrayImage | FloatImage = image
  if (recipe.registerFrames && context.registrationAnchor && context.registrationAnchor !== image) {
    const shift = estimateShift(context.registrationAnchor, current)
    // mov(x) = ref(x − s): shifting by −s brings the frame back onto the anchor.
    if (shift.dx !== 0 || shift.dy !== 0) current = applyShift(current, -shift.dy, -shift.dx)
  }
  if (recipe.background === 'reference') {
    if (!context.reference) throw new RangeError('recipe.background is "reference" but no reference frame was given')
    current = subtractReference(current, context.reference, 'difference')
  } else if (recipe.background === 'flatten') {
    current = flattenField(current, recipe.flattenSigma)
  }
  if (recipe.denoise !== 'none') current = medianFilter(current, recipe.denoise === 'median3' ? 1 : 2)
  // An intermediate made here can be smoothed in place; the caller's own image cannot.
  if (recipe.smoothingSigma > 0) return gaussianBlur(current, recipe.smoothingSigma, undefined, current !== image && current.data instanceof Float32Array ? current.data : undefined)
  return current.data instanceof Float32Array ? (current as FloatImage) : { width: current.width, height: current.height, data: Float32Array.from(current.data) }
}

/** Intensity range of a preprocessed frame (for pooling histograms across a stack). */
export function intensityRange(image: FloatImage): { min: number; max: number } {
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

/** Histogram of a preprocessed frame over a common [min, max] range, so frames can be pooled by adding counts. */
export function histogramOnRange(image: FloatImage, min: number, max: number, bins = POOLED_HISTOGRAM_BINS): Uint32Array {
  const counts = new Uint32Array(bins)
  const { data } = image
  if (!(max > min)) {
    counts[0] = data.length
    return counts
  }
  const scale = bins / (max - min)
  const last = bins - 1
  // Even and odd pixels count into separate tables, so runs of equal bins do not wait on each other's increments.
  const even = new Int32Array(bins)
  const odd = new Int32Array(bins)
  const n = data.length
  let i = 0
  for (; i + 1 < n; i += 2) {
    countBin(even, (data[i] - min) * scale, bins, last)
    countBin(odd, (data[i + 1] - min) * scale, bins, last)
  }
  if (i < n) countBin(even, (data[i] - min) * scale, bins, last)
  for (let b = 0; b < bins; b++) counts[b] = even[b] + odd[b]
  return counts
}

/** Count position t = (v − min)·scale in bin floor(t) clamped to [0, bins − 1]; NaN is not counted. */
function countBin(counts: Int32Array, t: number, bins: number, last: number): void {
  // |0 is floor for 0 ≤ t < bins.
  if (t >= 0 && t < bins) counts[t | 0]++
  else if (t >= bins) counts[last]++
  else if (t < 0) counts[0]++
}

/** Otsu threshold of a pooled histogram on [min, max] (foreground = I > threshold). */
export function thresholdFromHistogram(counts: Uint32Array, min: number, max: number): number {
  if (!(max > min)) return min
  const { level } = otsuFromHistogram(counts)
  return binUpperEdge({ counts, min, max, binWidth: (max - min) / counts.length, exactLevels: false }, level)
}

/**
 * Segment a preprocessed frame into a clean binary domain map. With `threshold` given (stack-wide Otsu), that value
 * is used; otherwise Otsu or k-means runs on this frame alone.
 */
export function segmentPreprocessed(image: FloatImage, recipe: AnalysisRecipe, threshold?: number): { mask: BinaryMask; threshold: number | null; reassignedFraction: number } {
  const { width, height, data } = image
  if (recipe.method === 'kmeans') return { ...cleanMask(kmeansSegment(image, { classes: recipe.kmeansClasses }).upMask, recipe), threshold: null }
  if (threshold === undefined) {
    const { min, max } = intensityRange(image)
    threshold = thresholdFromHistogram(histogramOnRange(image, min, max, 256), min, max)
  }
  if (recipe.fillHoles || width * height === 0) {
    const bits = new Uint8Array(width * height)
    for (let i = 0; i < bits.length; i++) bits[i] = data[i] > threshold ? 1 : 0
    return { ...cleanMask({ width, height, data: bits }, recipe), threshold }
  }
  // Binarise straight into packed rows and clean them there (the cleanMask steps), unpacking once.
  const words = segmentBuffer(width, height)
  packAbove(data, width, height, threshold, words)
  const reassignedFraction = cleanPacked(words, width, height, undefined, recipe)
  const bits = new Uint8Array(width * height)
  unpackBits(words, width, height, bits)
  return { mask: { width, height, data: bits }, reassignedFraction, threshold }
}

/** Morphological clean-up, hole filling and the minimum-area filter, in that order. */
export function cleanMask(mask: BinaryMask, recipe: AnalysisRecipe): { mask: BinaryMask; reassignedFraction: number } {
  const { width, height, ignore } = mask
  const cleans = recipe.cleanup === 'open' || recipe.cleanup === 'close' || recipe.cleanup === 'open-close' || recipe.minDomainArea > 1
  if (cleans && !recipe.fillHoles && width * height > 0) {
    // The same steps on the mask packed 32 pixels to a word (see cleanPacked), packed and unpacked once.
    const words = segmentBuffer(width, height)
    packNonZero(mask.data, width, height, words)
    const reassignedFraction = cleanPacked(words, width, height, ignore, recipe)
    const data = new Uint8Array(width * height)
    unpackBits(words, width, height, data)
    const cleaned: BinaryMask = { width, height, data }
    if (ignore) cleaned.ignore = ignore
    return { mask: cleaned, reassignedFraction }
  }
  let current = mask
  if (recipe.cleanup === 'open' || recipe.cleanup === 'open-close') current = openMask(current)
  if (recipe.cleanup === 'close' || recipe.cleanup === 'open-close') current = closeMask(current)
  if (recipe.fillHoles) current = fillHoles(current)
  if (recipe.minDomainArea > 1) {
    const filtered = removeSmallDomains(current, recipe.minDomainArea)
    return { mask: filtered.mask, reassignedFraction: filtered.reassignedFraction }
  }
  return { mask: current, reassignedFraction: 0 }
}

/** Packed mask of segmentPreprocessed/cleanMask, kept for the largest frame seen (never returned). */
let segmentWords = new Int32Array(0)

function segmentBuffer(width: number, height: number): Int32Array {
  const count = wordsPerRow(width) * height
  if (segmentWords.length < count) segmentWords = new Int32Array(count)
  return segmentWords
}

/**
 * cleanMask's opening/closing (3×3, as openMask/closeMask) and minimum-area filter in place on a packed mask (no hole
 * filling).
 * @returns the reassigned fraction of the minimum-area filter (0 without it).
 */
function cleanPacked(words: Int32Array, width: number, height: number, ignore: Uint8Array | undefined, recipe: AnalysisRecipe): number {
  const steps: boolean[] = []
  if (recipe.cleanup === 'open' || recipe.cleanup === 'open-close') steps.push(true, false)
  if (recipe.cleanup === 'close' || recipe.cleanup === 'open-close') steps.push(false, true)
  if (steps.length > 0) squareFilter3Packed(words, width, height, steps)
  return recipe.minDomainArea > 1 ? removeSmallDomainsPacked(words, width, height, recipe.minDomainArea, ignore).reassignedFraction : 0
}

/** Label buffers of measureMask (needed only with an ignore map; counts and sizes leave it), kept for the largest frame seen. */
let labelScratch = { upLabels: new Int32Array(0), downLabels: new Int32Array(0) }

function labelBuffers(n: number): { upLabels: Int32Array; downLabels: Int32Array } {
  if (labelScratch.upLabels.length < n) labelScratch = { upLabels: new Int32Array(n), downLabels: new Int32Array(n) }
  return labelScratch
}

const round = (value: number | null, digits = 6) => (value === null || !Number.isFinite(value) ? null : Number(value.toPrecision(digits)))

/**
 * Every per-frame measurement of a binary domain map. `image` (the preprocessed frame) is only used for the contrast.
 * Numbers are rounded to 6 significant digits so that output is stable across platforms and easy to read.
 */
export function measureMask(mask: BinaryMask, context: { pixelSizeNm: number | null; image?: FloatImage | GrayImage; threshold?: number | null; reassignedFraction?: number; detail?: boolean }): { measurements: FrameMeasurements; distributions?: FrameDistributions } {
  const { width, height } = mask
  const nm = context.pixelSizeNm && context.pixelSizeNm > 0 ? context.pixelSizeNm : null
  const fractions = areaFractions(mask)
  const phases = componentStatsBothPhases(mask, mask.ignore ? labelBuffers(width * height) : {})
  const sizes = domainSizeStats(phases.up)
  const widths = localDomainWidths(mask)
  // The 0/1 values without the ignore map: the spectrum sees ignored pixels with their stored phase.
  const period = domainPeriod({ width, height, data: mask.data })
  const orientation = stripeOrientation({ width, height, data: mask.data })
  const walls = wallDensity(mask)
  const contrast = context.image ? domainContrast(context.image, mask).contrast : null
  const measurements: FrameMeasurements = {
    width,
    height,
    pixelSizeNm: nm,
    threshold: round(context.threshold ?? null),
    analysedPx: fractions.analysedPx,
    upFraction: round(fractions.up)!,
    downFraction: round(fractions.down)!,
    magnetization: round(fractions.analysedPx > 0 ? fractions.up - fractions.down : 0)!,
    domainCount: phases.up.count + phases.down.count,
    upDomainCount: phases.up.count,
    downDomainCount: phases.down.count,
    meanUpDiameterPx: round(sizes.numberMeanPx),
    meanWidthPx: round(widths.meanPx),
    meanWidthStdErrPx: round(widths.stdErrPx),
    meanWidthNm: nm && widths.meanPx !== null ? round(widths.meanPx * nm) : null,
    upMeanWidthPx: round(widths.upMeanPx),
    downMeanWidthPx: round(widths.downMeanPx),
    periodPx: round(period.periodPx),
    periodNm: nm && period.periodPx !== null ? round(period.periodPx * nm) : null,
    orientationDeg: round(orientation.wallAngleDeg, 4),
    orderParameter: round(orientation.orderParameter, 4) ?? 0,
    wallDensityPerPx: round(walls.perPx)!,
    wallDensityPerUm: nm ? round(walls.perPx / (nm / 1000)) : null,
    wallLengthPx: round(walls.lengthPx)!,
    reassignedFraction: round(context.reassignedFraction ?? 0)!,
    contrast: round(contrast),
  }
  if (!context.detail) return { measurements }
  return { measurements, distributions: { widthHistogram: histogram(widths.widthsPx, 40), upDiametersPx: Array.from(sizes.diametersPx, (d) => round(d)!), spectrum: { frequencies: Array.from(period.spectrum.frequencies, (f) => round(f)!), power: Array.from(period.spectrum.power, (p) => round(p)!) } } }
}

function histogram(values: Float32Array, bins: number): { edges: number[]; counts: number[] } {
  if (values.length === 0) return { edges: [], counts: [] }
  let max = 0
  for (let i = 0; i < values.length; i++) if (values[i] > max) max = values[i]
  const top = Math.max(1, Math.ceil(max))
  const width = top / bins
  const counts = new Array<number>(bins).fill(0)
  for (let i = 0; i < values.length; i++) counts[Math.min(bins - 1, Math.floor(values[i] / width))]++
  return { edges: Array.from({ length: bins + 1 }, (_, i) => round(i * width)!), counts }
}

export interface FrameAnalysis {
  measurements: FrameMeasurements
  mask: BinaryMask
  distributions?: FrameDistributions
}

/** The whole single-frame pipeline (recipe-driven); for stacks use analyzeStack, which pools the threshold. */
export function analyzeFrame(image: GrayImage | FloatImage, recipe: AnalysisRecipe, context: { pixelSizeNm: number | null; threshold?: number; reference?: GrayImage | FloatImage; registrationAnchor?: GrayImage | FloatImage; detail?: boolean }): FrameAnalysis {
  const pre = preprocessFrame(image, recipe, context)
  const { mask, threshold, reassignedFraction } = segmentPreprocessed(pre, recipe, context.threshold)
  const { measurements, distributions } = measureMask(mask, { pixelSizeNm: context.pixelSizeNm, image: pre, threshold, reassignedFraction, detail: context.detail })
  return { measurements, mask, distributions }
}
