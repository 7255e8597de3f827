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
  // Per-phase sums in locals (index 0 = down, 1 = up), added in raster order.
  let sum0 = 0
  let sum1 = 0
  let count0 = 0
  let count1 = 0
  for (let i = 0; i < n; i++) {
    const v = data[i]
    if ((ignore !== undefined && ignore[i]) || !Number.isFinite(v)) continue
    if (phase[i] !== 0) {
      sum1 += v
      count1++
    } else {
      sum0 += v
      count0++
    }
  }
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
  const mean0 = means[0]
  const mean1 = means[1]
  let squares = 0
  for (let i = 0; i < n; i++) {
    const v = data[i]
    if ((ignore !== undefined && ignore[i]) || !Number.isFinite(v)) continue
    const d = v - (phase[i] !== 0 ? mean1 : mean0)
    squares += d * d
  }
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
