/**
 * Domain contrast of a frame on a fixed domain mask, and the frame of a series with the clearest domains.
 *
 * Method (METHODS §6, temperature series [P]): contrast = |mean(up) − mean(down)| of the grey values inside the two
 * phases of a fixed mask (segmented once on the sharpest frame and reused for the whole series, so the contrast
 * follows M(T) instead of re-thresholding noise); noise = pooled within-phase standard deviation
 * √((Σ_up (I − μ_up)² + Σ_down (I − μ_down)²)/(n_up + n_down − 2)). The sharpest frame of a series of images is the one
 * with the largest contrast-to-noise ratio on its own Otsu split (otsuThreshold, METHODS §1.1).
 * Checked against: synthetic two-level images with known means and noise (tests).
 * Input: a GrayImage/FloatImage and a BinaryMask of the same size (1 = up); the mask's ignore map excludes pixels;
 * non-finite grey values are skipped. Kerr contrast tracks M only if the optical constants do not change with T.
 * Output: grey-value units of the input.
 */
import { otsuThreshold } from './otsuThreshold'
import type { BinaryMask, FloatImage, GrayImage } from './types'

/** Result of {@link domainContrast}; null where a phase has no analysed pixel. */
export interface DomainContrast {
  /** |upMean − downMean|; 0 when either phase is empty (no contrast can be measured). */
  contrast: number
  upMean: number | null
  downMean: number | null
  /** Pooled within-phase standard deviation; null with fewer than 3 analysed pixels or an empty phase. */
  noise: number | null
  upPixels: number
  downPixels: number
}

/**
 * Contrast between the up and down phases of `mask` in `image`.
 * @throws RangeError when image and mask differ in size.
 */
export function domainContrast(image: GrayImage | FloatImage, mask: BinaryMask): DomainContrast {
  if (image.width !== mask.width || image.height !== mask.height) {
    throw new RangeError(`Image ${image.width}×${image.height} and mask ${mask.width}×${mask.height} differ in size.`)
  }
  const n = image.width * image.height
  const { data } = image
  const phase = mask.data
  const ignore = mask.ignore
  const { sum0, sum1, count0, count1, allAnalysed } = analysedPhaseSums(data, phase, ignore, n)
  const sums = [sum0, sum1]
  const counts = [count0, count1]
  // An empty phase (all-up or all-down mask, or everything ignored) leaves no difference to measure.
  if (counts[0] === 0 || counts[1] === 0) {
    return {
      contrast: 0,
      upMean: counts[1] ? sums[1] / counts[1] : null,
      downMean: counts[0] ? sums[0] / counts[0] : null,
      noise: null,
      upPixels: counts[1],
      downPixels: counts[0],
    }
  }
  const means = [sums[0] / counts[0], sums[1] / counts[1]]
  const phaseMeans = Float64Array.of(means[0], means[1])
  const squares = allAnalysed ? squaredDeviationsOfAll(data, phase, n, phaseMeans) : squaredDeviations(data, phase, ignore, n, phaseMeans)
  const dof = counts[0] + counts[1] - 2
  return {
    contrast: Math.abs(means[1] - means[0]),
    upMean: means[1],
    downMean: means[0],
    noise: dof > 0 ? Math.sqrt(squares / dof) : null,
    upPixels: counts[1],
    downPixels: counts[0],
  }
}

/** Per-phase sums and counts. */
interface PhaseSums {
  sum0: number
  sum1: number
  count0: number
  count1: number
}

/** 1 for a nonzero byte (up), 0 for zero, without a branch. */
function isUp(phase: number): number {
  return (phase + 255) >> 8
}

/**
 * Per-phase sums of the analysed, finite grey values in raster order (index 0 = down, 1 = up). Without an ignore map
 * every pixel is analysed unless its value is not finite, so the sums are first taken without looking at each value:
 * a NaN or infinity shows in a sum that is not finite (it never drops out of a sum), and only then are the values
 * checked one by one. `allAnalysed`: every pixel was analysed (no ignore map, all values finite).
 */
function analysedPhaseSums(data: GrayImage['data'], phase: Uint8Array, ignore: Uint8Array | undefined, n: number): PhaseSums & { allAnalysed: boolean } {
  if (ignore === undefined) {
    const sums = phaseSumsOfAll(data, phase, n)
    if (Number.isFinite(sums.sum0) && Number.isFinite(sums.sum1)) return { ...sums, allAnalysed: true }
  }
  return { ...phaseSums(data, phase, ignore, n), allAnalysed: false }
}

/** Per-phase sums of all grey values in raster order. */
function phaseSumsOfAll(data: GrayImage['data'], phase: Uint8Array, n: number): PhaseSums {
  let sum0 = 0
  let sum1 = 0
  let count1 = 0
  for (let i = 0; i < n; i++) {
    if (phase[i] !== 0) {
      sum1 += data[i]
      count1++
    } else {
      sum0 += data[i]
    }
  }
  return { sum0, sum1, count0: n - count1, count1 }
}

/** Per-phase sums of the analysed, finite grey values in raster order. */
function phaseSums(data: GrayImage['data'], phase: Uint8Array, ignore: Uint8Array | undefined, n: number): PhaseSums {
  let sum0 = 0
  let sum1 = 0
  let count0 = 0
  let count1 = 0
  for (let i = 0; i < n; i++) {
    const v = data[i]
    if ((ignore !== undefined && ignore[i] !== 0) || !Number.isFinite(v)) continue
    if (phase[i] !== 0) {
      sum1 += v
      count1++
    } else {
      sum0 += v
      count0++
    }
  }
  return { sum0, sum1, count0, count1 }
}

/** Σ(v − μ_phase)² over all grey values in raster order; `means` = [μ_down, μ_up]. */
function squaredDeviationsOfAll(data: GrayImage['data'], phase: Uint8Array, n: number, means: Float64Array): number {
  let squares = 0
  for (let i = 0; i < n; i++) {
    const d = data[i] - means[isUp(phase[i])]
    squares += d * d
  }
  return squares
}

/** Σ(v − μ_phase)² over the analysed, finite grey values in raster order. */
function squaredDeviations(data: GrayImage['data'], phase: Uint8Array, ignore: Uint8Array | undefined, n: number, means: Float64Array): number {
  let squares = 0
  for (let i = 0; i < n; i++) {
    const v = data[i]
    if ((ignore !== undefined && ignore[i] !== 0) || !Number.isFinite(v)) continue
    const d = v - means[isUp(phase[i])]
    squares += d * d
  }
  return squares
}

/** Contrast-to-noise ratio of a frame on its own Otsu split, with the contrast to break ties between noise-free frames. */
function frameScore(image: GrayImage | FloatImage): { cnr: number; contrast: number } {
  const { threshold } = otsuThreshold(image)
  const n = image.width * image.height
  const phase = new Uint8Array(n)
  for (let i = 0; i < n; i++) phase[i] = image.data[i] > threshold ? 1 : 0
  const { contrast, noise } = domainContrast(image, { width: image.width, height: image.height, data: phase })
  if (contrast === 0) return { cnr: 0, contrast }
  // A noise-free two-level frame has an infinite CNR: it outranks every noisy frame, larger contrast first.
  return { cnr: noise && noise > 0 ? contrast / noise : Infinity, contrast }
}

/**
 * Index of the frame with the clearest domains.
 * @param frames either precomputed contrasts (largest wins) or images (largest contrast-to-noise ratio on each frame's
 *   own Otsu split wins; equal ratios, e.g. noise-free frames, are ranked by contrast).
 * @returns the first index on ties; null for an empty list or when no score is a number.
 */
export function sharpestFrameIndex(frames: readonly number[] | readonly (GrayImage | FloatImage)[]): number | null {
  let best: number | null = null
  let bestCnr = -Infinity
  let bestContrast = -Infinity
  for (let i = 0; i < frames.length; i++) {
    const frame = frames[i]
    const { cnr, contrast } = typeof frame === 'number' ? { cnr: frame, contrast: frame } : frameScore(frame)
    if (Number.isNaN(cnr) || cnr === -Infinity) continue
    if (cnr > bestCnr || (cnr === bestCnr && contrast > bestContrast)) {
      best = i
      bestCnr = cnr
      bestContrast = contrast
    }
  }
  return best
}
