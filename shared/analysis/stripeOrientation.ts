/**
 * Mean stripe orientation and orientational order parameter from the structure tensor.
 *
 * Method (METHODS §3.3): J. Bigün & G. H. Granlund (1987), "Optimal orientation detection of linear symmetry",
 * Proc. 1st ICCV, 433–438 [from memory]; B. Jähne, *Digital Image Processing* (Springer) [from memory]. Gradients by
 * Gaussian smoothing (σ_d, default 1 px) followed by a 5-point central difference, a discrete form of
 * Gaussian-derivative filters. Global tensor sums: z = Σ(Jxx − Jyy + 2i·Jxy), order parameter
 * S = |z| / Σ(Jxx + Jyy) ∈ [0, 1], mean wave-vector angle φ̄ = ½·arg z; walls run along φ̄ + 90°. Integration
 * smoothing (σ_i) leaves these global sums unchanged (a normalised Gaussian preserves sums), so it is only applied
 * for the optional per-pixel maps.
 * Checked against: METHODS.md checks #20 (sinusoid λ = 20 px, k at 30° → 30.0° ± 0.5°, S ≥ 0.99; −45° → −45.0°) and
 * #21 (band-limited isotropic labyrinth → S ≈ 0.11, < 0.2), reproduced by the tests.
 * Angle convention: x = column (to the right), y = row (downwards); angles are measured from +x towards +y, i.e.
 * clockwise on screen, in degrees in (−90°, 90°]. A wave vector at 30° means I ∝ cos(2π(x·cos30° + y·sin30°)/λ).
 * Input: GrayImage/FloatImage (a BinaryMask's 0/1 data also works); `pixelAspect` = pixel height / width scales ∂y.
 * Output: angles in degrees, S dimensionless; null angles for a constant image (no gradient), S = 0.
 * Border: a frame of ceil(3σ_d) px is left out of the sums, where edge replication flattens the gradient.
 */
import { gaussianBlur } from './gaussianBlur'
import type { FloatImage, GrayImage } from './types'

export interface StripeOrientationOptions {
  /** Derivative scale σ_d, px (default 1). */
  sigmaDerivative?: number
  /** Integration scale σ_i for the per-pixel maps, px (default 4 ≈ λ/5 for λ = 20 px; METHODS: λ/6…λ/4). */
  sigmaIntegration?: number
  /** Pixel height / pixel width (default 1). */
  pixelAspect?: number
  /** Also return per-pixel orientation and coherence maps (σ_i-smoothed tensor). */
  maps?: boolean
}

export interface StripeOrientationResult {
  /** Mean wave-vector (gradient) direction φ̄, degrees in (−90, 90], or null when the image has no gradient. */
  waveVectorAngleDeg: number | null
  /** Wall direction φ̄ + 90°, wrapped to (−90, 90], or null. */
  wallAngleDeg: number | null
  /** S = |z| / Σ(Jxx + Jyy): 1 for perfectly parallel stripes, ≈ 0 for isotropic patterns. */
  orderParameter: number
  /** Per-pixel wave-vector angle, degrees (only with `maps`). */
  orientationMapDeg?: Float32Array
  /** Per-pixel coherence √((Jxx−Jyy)² + 4Jxy²)/(Jxx+Jyy) ∈ [0, 1] (only with `maps`). */
  coherenceMap?: Float32Array
}

/**
 * Fourth-order central difference (−f₊₂ + 8f₊₁ − 8f₋₁ + f₋₂)/12 along rows, edge-replicated. The 3-point difference
 * under-reads a sinusoid by sin(k)/k, differently along x and y, which tilts oblique stripes (0.2° at λ = 20 px,
 * 30°); the 5-point stencil's error is O(k⁴/30), negligible here.
 */
function derivativeX(src: Float32Array, dst: Float32Array, width: number, height: number): void {
  const last = width - 1
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) {
      const m2 = src[row + (x > 1 ? x - 2 : 0)]
      const m1 = src[row + (x > 0 ? x - 1 : 0)]
      const p1 = src[row + (x < last ? x + 1 : last)]
      const p2 = src[row + (x < last - 1 ? x + 2 : last)]
      dst[row + x] = (-p2 + 8 * p1 - 8 * m1 + m2) / 12
    }
  }
}

/** The same stencil along columns, row by row for contiguous access. */
function derivativeY(src: Float32Array, dst: Float32Array, width: number, height: number): void {
  const last = height - 1
  for (let y = 0; y < height; y++) {
    const m2 = (y > 1 ? y - 2 : 0) * width
    const m1 = (y > 0 ? y - 1 : 0) * width
    const p1 = (y < last ? y + 1 : last) * width
    const p2 = (y < last - 1 ? y + 2 : last) * width
    const row = y * width
    for (let x = 0; x < width; x++) {
      dst[row + x] = (-src[p2 + x] + 8 * src[p1 + x] - 8 * src[m1 + x] + src[m2 + x]) / 12
    }
  }
}

/** Wrap an angle in degrees to (−90, 90]. */
function wrapHalfTurn(deg: number): number {
  let a = deg
  while (a <= -90) a += 180
  while (a > 90) a -= 180
  return a
}

/** Global sums of the structure tensor: Σ(Jxx − Jyy), Σ2Jxy and Σ(Jxx + Jyy). */
interface TensorSums {
  sumRe: number
  sumIm: number
  trace: number
}

/** Per-pixel tensor components Jxx = gx², Jyy = gy², Jxy = gx·gy (gy divided by the pixel aspect), as float32 maps. */
function tensorMaps(smooth: Float32Array, width: number, height: number, aspect: number): { jxx: Float32Array; jyy: Float32Array; jxy: Float32Array } {
  const n = width * height
  const jxx = new Float32Array(n)
  const jyy = new Float32Array(n)
  const jxy = new Float32Array(n)
  const gx = new Float32Array(n)
  const gy = new Float32Array(n)
  derivativeX(smooth, gx, width, height)
  derivativeY(smooth, gy, width, height)
  for (let i = 0; i < n; i++) {
    const dy = gy[i] / aspect
    jxx[i] = gx[i] * gx[i]
    jyy[i] = dy * dy
    jxy[i] = gx[i] * dy
  }
  return { jxx, jyy, jxy }
}

/** Tensor sums over the pixels at least `frame` px from the border, in raster order. */
function sumsOfMaps(jxx: Float32Array, jyy: Float32Array, jxy: Float32Array, width: number, height: number, frame: number): TensorSums {
  let sumRe = 0
  let sumIm = 0
  let trace = 0
  for (let y = frame; y < height - frame; y++) {
    const row = y * width
    for (let x = frame; x < width - frame; x++) {
      const i = row + x
      sumRe += jxx[i] - jyy[i]
      sumIm += 2 * jxy[i]
      trace += jxx[i] + jyy[i]
    }
  }
  return { sumRe, sumIm, trace }
}

/**
 * The same sums without the maps: derivatives and products computed per pixel of the summed region only, rounded to
 * float32 where the maps would store them, so the result equals sumsOfMaps(tensorMaps(…)) exactly.
 */
function tensorSums(smooth: Float32Array, width: number, height: number, aspect: number, frame: number): TensorSums {
  const f = Math.fround
  const lastX = width - 1
  const lastY = height - 1
  // gy / 1 is gy exactly: the division is skipped for square pixels.
  const squarePixels = aspect === 1
  let sumRe = 0
  let sumIm = 0
  let trace = 0
  for (let y = frame; y < height - frame; y++) {
    const row = y * width
    const m2 = (y > 1 ? y - 2 : 0) * width
    const m1 = (y > 0 ? y - 1 : 0) * width
    const p1 = (y < lastY ? y + 1 : lastY) * width
    const p2 = (y < lastY - 1 ? y + 2 : lastY) * width
    let x = frame
    if (frame >= 2) {
      // Two or more pixels from every border: no clamping needed.
      const end = row + width - frame
      for (let i = row + frame; i < end; i++) {
        const gx = f((-smooth[i + 2] + 8 * smooth[i + 1] - 8 * smooth[i - 1] + smooth[i - 2]) / 12)
        const c = i - row
        const gy = f((-smooth[p2 + c] + 8 * smooth[p1 + c] - 8 * smooth[m1 + c] + smooth[m2 + c]) / 12)
        const dy = squarePixels ? gy : gy / aspect
        const jxx = f(gx * gx)
        const jyy = f(dy * dy)
        const jxy = f(gx * dy)
        sumRe += jxx - jyy
        sumIm += 2 * jxy
        trace += jxx + jyy
      }
      x = width - frame
    }
    for (; x < width - frame; x++) {
      const xm2 = smooth[row + (x > 1 ? x - 2 : 0)]
      const xm1 = smooth[row + (x > 0 ? x - 1 : 0)]
      const xp1 = smooth[row + (x < lastX ? x + 1 : lastX)]
      const xp2 = smooth[row + (x < lastX - 1 ? x + 2 : lastX)]
      const gx = f((-xp2 + 8 * xp1 - 8 * xm1 + xm2) / 12)
      const gy = f((-smooth[p2 + x] + 8 * smooth[p1 + x] - 8 * smooth[m1 + x] + smooth[m2 + x]) / 12)
      const dy = squarePixels ? gy : gy / aspect
      const jxx = f(gx * gx)
      const jyy = f(dy * dy)
      const jxy = f(gx * dy)
      sumRe += jxx - jyy
      sumIm += 2 * jxy
      trace += jxx + jyy
    }
  }
  return { sumRe, sumIm, trace }
}

/** The σ_d-smoothed image, kept for the largest image seen (only the sums and maps leave stripeOrientation). */
let smoothScratch = new Float32Array(0)

/**
 * Structure-tensor orientation of a stripe pattern (METHODS §3.3).
 * @example stripeOrientation(stripesAt30deg).waveVectorAngleDeg // ≈ 30
 */
export function stripeOrientation(
  image: GrayImage | FloatImage,
  options: StripeOrientationOptions = {},
): StripeOrientationResult {
  const { width, height } = image
  const none: StripeOrientationResult = { waveVectorAngleDeg: null, wallAngleDeg: null, orderParameter: 0 }
  // Degenerate: below 3 px in a direction there is no usable gradient.
  if (width < 3 || height < 3) return none
  const sigmaD = options.sigmaDerivative ?? 1
  const aspect = options.pixelAspect !== undefined && options.pixelAspect > 0 ? options.pixelAspect : 1
  const n = width * height
  if (smoothScratch.length < n) smoothScratch = new Float32Array(n)
  // Integer input (a mask) is copied into the scratch and smoothed in place there, rather than through a float copy
  // of gaussianBlur's own: one frame-sized buffer less in every analysis thread.
  let source: GrayImage | FloatImage = image
  if (!(image.data instanceof Float32Array)) {
    smoothScratch.set(image.data.subarray(0, n))
    source = { width, height, data: smoothScratch.subarray(0, n) }
  }
  const smooth = gaussianBlur(source, sigmaD, undefined, smoothScratch).data
  // Global sums inside a frame of ceil(3σ_d) px, clamped so that at least the central pixel stays.
  const frame = Math.min(Math.ceil(3 * sigmaD), (width - 1) >> 1, (height - 1) >> 1)
  const result: StripeOrientationResult = { ...none }
  let sums: TensorSums
  if (options.maps === true) {
    const { jxx, jyy, jxy } = tensorMaps(smooth, width, height, aspect)
    sums = sumsOfMaps(jxx, jyy, jxy, width, height, frame)
    const sigmaI = options.sigmaIntegration ?? 4
    const sxx = gaussianBlur({ width, height, data: jxx }, sigmaI).data
    const syy = gaussianBlur({ width, height, data: jyy }, sigmaI).data
    const sxy = gaussianBlur({ width, height, data: jxy }, sigmaI).data
    const orientation = new Float32Array(n)
    const coherence = new Float32Array(n)
    for (let i = 0; i < n; i++) {
      const dxx = sxx[i] - syy[i]
      const t = sxx[i] + syy[i]
      orientation[i] = (0.5 * Math.atan2(2 * sxy[i], dxx) * 180) / Math.PI
      coherence[i] = t > 0 ? Math.sqrt(dxx * dxx + 4 * sxy[i] * sxy[i]) / t : 0
    }
    result.orientationMapDeg = orientation
    result.coherenceMap = coherence
  } else {
    sums = tensorSums(smooth, width, height, aspect, frame)
  }
  const { sumRe, sumIm, trace } = sums
  // Degenerate: a constant (or numerically flat) image has no gradient, hence no orientation.
  if (!(trace > 0)) return result
  const magnitude = Math.hypot(sumRe, sumIm)
  result.orderParameter = Math.min(1, magnitude / trace)
  if (magnitude === 0) return result
  const phi = wrapHalfTurn((0.5 * Math.atan2(sumIm, sumRe) * 180) / Math.PI)
  result.waveVectorAngleDeg = phi
  result.wallAngleDeg = wrapHalfTurn(phi + 90)
  return result
}
