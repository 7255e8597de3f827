/**
 * Dominant domain period from the power spectrum: radially averaged (rings of labyrinths) or its 2-D peak (stripes).
 *
 * Method (METHODS §3.1): subtract the mean (or a least-squares plane), multiply by a separable Hann window
 * w(n) = 0.5 − 0.5·cos(2πn/(N−1)) (numpy `hanning` form), zero-pad to powers of two, P = |F|², average P over
 * annular shells of width Δq (round(q/Δq) = shell index), skip shells below 2/N (window and background leakage), take
 * the peak shell k and refine it with a parabola through P_{k−1}, P_k, P_{k+1}: δ = ½(P_{k−1} − P_{k+1})/(P_{k−1} −
 * 2P_k + P_{k+1}), q* = (k + δ)Δq, period λ = 1/q*. Wiener–Khinchin / periodogram practice; no single paper [P].
 * For stripes (two spots instead of a ring) the strongest 2-D peak is located instead, with Gaussian (log-parabola)
 * interpolation along both frequency axes, as METHODS §3.1 advises; `method: 'auto'` picks it when the spots hold
 * most of the power.
 * Checked against: METHODS.md checks #16/#17 with method 'radial' (256² sinusoids: reference run 19.96 / 19.75 /
 * 25.61 / 32.17 / 15.99 px, reproduced to 0.015 px by the tests); synthetic square-wave stripes with noise and an
 * illumination gradient at 0–75° (2-D peak within 0.3 %); band-limited labyrinths (radial).
 * Padding choice: the image is windowed at its own size, then zero-padded (not cropped) to the next power of two in
 * each direction, so no data is discarded; after the Hann taper the padding adds no edge discontinuity, it only
 * samples the spectrum more finely. Shell width Δq = 1/min(Wp, Hp·pixelAspect), the coarser of the two grid steps,
 * so no shell is empty near the axes; shells with q < 2/min(W, H·pixelAspect) are skipped (two shells when N is a
 * power of two).
 * Input: any GrayImage/FloatImage, or a BinaryMask (0/1 values; pixels in `ignore` are replaced by the mean).
 * Non-square pixels: `pixelAspect` = pixel height / pixel width (ay/ax); all lengths and frequencies are then in
 * units of the pixel width ax. Output: frequencies in cycles per px, power in (intensity·px)² (arbitrary scale),
 * period in px. Peak search covers 2/N ≤ q ≤ 0.5 cycles/px.
 */
import { nextPowerOfTwo, realFft2dHalf } from './fft2d'
import type { BinaryMask, FloatImage, GrayImage } from './types'

/** Shell-averaged power spectrum; `frequencies[k] = k·shellWidth`. */
export interface RadialSpectrum {
  /** Shell centre frequencies, cycles per px. */
  frequencies: Float64Array
  /** Mean |F|² per shell (0 for an empty shell). */
  power: Float64Array
  /** Frequency samples per shell (full plane). */
  counts?: Uint32Array
  /** Δq, cycles per px. */
  shellWidth?: number
  /** Shells below this index are leakage and skipped by the peak search. */
  firstUsedShell?: number
}

export interface PowerSpectrumOptions {
  /** Background removed before windowing: 'mean' (METHODS §3.1 step 1, default) or a least-squares 'plane'. */
  detrend?: 'mean' | 'plane'
  /** Apply the Hann window (default true; false only to show leakage). */
  window?: boolean
  /** Pixel height / pixel width (default 1). */
  pixelAspect?: number
  /** Peak location for `domainPeriod`: 'auto' (default), 'radial' (shell average) or 'peak2d' (2-D spot). */
  method?: 'auto' | 'radial' | 'peak2d'
}

/**
 * Share of the band power in the two 3×3 spots around the 2-D peak above which 'auto' treats the pattern as stripes.
 * Clean or noisy stripes give 0.3–0.95 (a square wave keeps 81 % in its fundamental); rings of labyrinths and
 * bubble lattices, and white noise, give a few per cent.
 */
export const SPOT_FRACTION_FOR_STRIPES = 0.2

export interface DomainPeriodResult {
  /** 1/q* in px, or null when there is no peak (constant image, too small, no structure). */
  periodPx: number | null
  /** q* in cycles per px, or null. */
  peakFrequency: number | null
  spectrum: RadialSpectrum
  /** Peak location actually used. */
  method?: 'radial' | 'peak2d'
  /** Period from the shell average (METHODS §3.1 procedure), px, whichever method was used. */
  radialPeriodPx?: number | null
  /** Share of the band power in the two 3×3 spots around the 2-D peak. */
  spotFraction?: number
}

type SpectrumInput = GrayImage | FloatImage | BinaryMask

/** numpy.hanning(n): 0.5 − 0.5·cos(2πi/(n−1)); a single sample gets weight 1. */
function hann(n: number): Float64Array {
  const w = new Float64Array(n)
  if (n === 1) {
    w[0] = 1
    return w
  }
  for (let i = 0; i < n; i++) w[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / (n - 1))
  return w
}

/**
 * Detrended, windowed copy of the image in a zero-padded power-of-two buffer. Returns null when nothing is
 * analysed or the detrended image is identically zero (constant image).
 */
function preparePadded(
  image: SpectrumInput,
  options: PowerSpectrumOptions,
  wp: number,
  hp: number,
): Float64Array | null {
  const { width, height, data } = image
  const ignore = 'ignore' in image ? image.ignore : undefined
  // Least-squares plane a + b·x + c·y on analysed pixels (b = c = 0 for mean detrending).
  let n = 0
  let sv = 0
  let sx = 0
  let sy = 0
  let sxx = 0
  let syy = 0
  let sxy = 0
  let sxv = 0
  let syv = 0
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x
      if (ignore !== undefined && ignore[i] !== 0) continue
      const v = data[i]
      n++
      sv += v
      sx += x
      sy += y
      sxx += x * x
      syy += y * y
      sxy += x * y
      sxv += x * v
      syv += y * v
    }
  }
  if (n === 0) return null
  let a = sv / n
  let b = 0
  let c = 0
  if (options.detrend === 'plane' && n >= 3) {
    // Centred normal equations for (b, c); a follows from the means.
    const mx = sx / n
    const my = sy / n
    const cxx = sxx - n * mx * mx
    const cyy = syy - n * my * my
    const cxy = sxy - n * mx * my
    const cxv = sxv - mx * sv
    const cyv = syv - my * sv
    const det = cxx * cyy - cxy * cxy
    if (Math.abs(det) > 1e-12 * (cxx * cyy + 1)) {
      b = (cxv * cyy - cyv * cxy) / det
      c = (cyv * cxx - cxv * cxy) / det
      a = sv / n - b * mx - c * my
    }
  }
  const useWindow = options.window !== false
  const wx = useWindow ? hann(width) : new Float64Array(width).fill(1)
  const wy = useWindow ? hann(height) : new Float64Array(height).fill(1)
  const out = spectrumScratch(wp * hp, 'padded')
  // Padding and ignored pixels stay 0.
  out.fill(0)
  let energy = 0
  for (let y = 0; y < height; y++) {
    const row = y * width
    const outRow = y * wp
    const base = a + c * y
    for (let x = 0; x < width; x++) {
      const i = row + x
      if (ignore !== undefined && ignore[i] !== 0) continue
      const v = (data[i] - base - b * x) * wx[x] * wy[y]
      out[outRow + x] = v
      energy += v * v
    }
  }
  // Relative test: rounding of a constant image's mean leaves residues ~1e-16 of the level.
  const scale = Math.abs(a) + 1
  if (!(energy > 1e-20 * scale * scale * n)) return null
  return out
}

/** |F|² on the non-redundant half plane (columns l = 0..Wp/2) with its frequency geometry. */
interface HalfPower {
  power: Float64Array
  halfWidth: number
  wp: number
  hp: number
  aspect: number
  shellWidth: number
  firstUsedShell: number
}

/** Frequency geometry for an image size, and the half-plane power (null for degenerate input). */
function halfPowerSpectrum(image: SpectrumInput, options: PowerSpectrumOptions): { geometry: HalfPower; ok: boolean } {
  const { width, height } = image
  const aspect = options.pixelAspect !== undefined && options.pixelAspect > 0 ? options.pixelAspect : 1
  const wp = nextPowerOfTwo(width)
  const hp = nextPowerOfTwo(height)
  const shellWidth = 1 / Math.min(wp, hp * aspect)
  const firstUsedShell = Math.max(0, Math.ceil(2 / Math.min(width, height * aspect) / shellWidth - 1e-9))
  const geometry: HalfPower = { power: new Float64Array(0), halfWidth: 0, wp, hp, aspect, shellWidth, firstUsedShell }
  // Degenerate input (empty, constant, all ignored): no spectrum rather than a spectrum of rounding noise.
  if (width * height === 0) return { geometry, ok: false }
  const padded = preparePadded(image, options, wp, hp)
  if (padded === null) return { geometry, ok: false }
  const halfSize = (wp === 1 ? 1 : wp / 2 + 1) * hp
  const half = realFft2dHalf(padded, wp, hp, { re: spectrumScratch(halfSize, 're'), im: spectrumScratch(halfSize, 'im') })
  const power = spectrumScratch(half.re.length, 'power')
  for (let i = 0; i < power.length; i++) power[i] = half.re[i] * half.re[i] + half.im[i] * half.im[i]
  geometry.power = power
  geometry.halfWidth = half.halfWidth
  return { geometry, ok: true }
}

/** Working arrays of the spectrum (padded image, half spectrum, power), kept for the largest size seen. */
const scratchArrays = new Map<'padded' | 're' | 'im' | 'power', Float64Array>()

/** A view of `length` values of a kept array; its contents are whatever the last call left. */
function spectrumScratch(length: number, name: 'padded' | 're' | 'im' | 'power'): Float64Array {
  let array = scratchArrays.get(name)
  if (array === undefined || array.length < length) {
    array = new Float64Array(length)
    scratchArrays.set(name, array)
  }
  return array.subarray(0, length)
}

/** Shell index of every half-plane bin for the last geometry seen (it is the same for every frame of a stack). */
let shellTable: { key: string; table: Int32Array } | null = null

/**
 * round(|q|/Δq) per bin of the half plane: the squared radial coordinate in shell units is separable,
 * (l/(Wp·Δq))² + (k/(Hp·aspect·Δq))².
 */
function shellIndexTable(g: HalfPower): Int32Array {
  const { halfWidth, wp, hp, aspect, shellWidth } = g
  const key = `${halfWidth},${wp},${hp},${aspect},${shellWidth}`
  if (shellTable !== null && shellTable.key === key) return shellTable.table
  const table = new Int32Array(halfWidth * hp)
  const colTerm = new Float64Array(halfWidth)
  for (let l = 0; l < halfWidth; l++) colTerm[l] = (l / (wp * shellWidth)) ** 2
  for (let k = 0; k < hp; k++) {
    const ks = k <= hp / 2 ? k : k - hp
    const rowTerm = (ks / (hp * aspect * shellWidth)) ** 2
    const row = k * halfWidth
    for (let l = 0; l < halfWidth; l++) table[row + l] = Math.round(Math.sqrt(colTerm[l] + rowTerm))
  }
  shellTable = { key, table }
  return table
}

/** Shell average of the half-plane power (columns 1..Wp/2−1 also stand for their Hermitian mirror). */
function shellAverage(g: HalfPower): RadialSpectrum {
  const { power, halfWidth, wp, hp, aspect, shellWidth, firstUsedShell } = g
  const qyMax = 0.5 / aspect
  const shells = Math.floor(Math.sqrt(0.25 + qyMax * qyMax) / shellWidth + 0.5) + 1
  const sum = new Float64Array(shells)
  const counts = new Uint32Array(shells)
  const shellOf = shellIndexTable(g)
  for (let k = 0; k < hp; k++) {
    const row = k * halfWidth
    for (let l = 0; l < halfWidth; l++) {
      const shell = shellOf[row + l]
      const weight = l === 0 || 2 * l === wp ? 1 : 2
      sum[shell] += weight * power[row + l]
      counts[shell] += weight
    }
  }
  const frequencies = new Float64Array(shells)
  const average = new Float64Array(shells)
  for (let s = 0; s < shells; s++) {
    frequencies[s] = s * shellWidth
    average[s] = counts[s] > 0 ? sum[s] / counts[s] : 0
  }
  return { frequencies, power: average, counts, shellWidth, firstUsedShell }
}

/**
 * Radially averaged power spectrum (METHODS §3.1 steps 1–4).
 * @returns shells of width Δq; an empty spectrum (length 0) for a constant or empty image.
 */
export function radialPowerSpectrum(image: SpectrumInput, options: PowerSpectrumOptions = {}): RadialSpectrum {
  const { geometry, ok } = halfPowerSpectrum(image, options)
  if (!ok) {
    return {
      frequencies: new Float64Array(0),
      power: new Float64Array(0),
      counts: new Uint32Array(0),
      shellWidth: geometry.shellWidth,
      firstUsedShell: geometry.firstUsedShell,
    }
  }
  return shellAverage(geometry)
}

/** Parabolic vertex offset through (−1, m), (0, c), (+1, p), clamped to ±½; 0 when the points are not concave. */
function parabolaOffset(m: number, c: number, p: number): number {
  const denominator = m - 2 * c + p
  if (!(denominator < 0)) return 0
  return Math.max(-0.5, Math.min(0.5, (0.5 * (m - p)) / denominator))
}

/**
 * Parabola through the logarithms (Gaussian interpolation): the main lobe of a Hann-windowed line is close to a
 * Gaussian, so this is unbiased to a few hundredths of a bin where a plain parabola is off by up to 0.1 bin.
 */
function logParabolaOffset(m: number, c: number, p: number): number {
  if (!(m > 0) || !(p > 0) || !(c > 0)) return parabolaOffset(m, c, p)
  return parabolaOffset(Math.log(m), Math.log(c), Math.log(p))
}

/** Peak frequency of the shell average with a parabola through the neighbouring shells (METHODS §3.1 steps 5–6). */
function radialPeak(spectrum: RadialSpectrum): number | null {
  const { power, counts } = spectrum
  const shellWidth = spectrum.shellWidth ?? 0
  const first = spectrum.firstUsedShell ?? 2
  const last = Math.min(power.length - 1, Math.floor(0.5 / shellWidth + 1e-9))
  let peak = -1
  for (let k = first; k <= last; k++) {
    if (counts !== undefined && counts[k] === 0) continue
    if (peak < 0 || power[k] > power[peak]) peak = k
  }
  if (peak < 0 || !(power[peak] > 0)) return null
  // At the ends of the searched range the shell centre is kept.
  const delta = peak > first && peak < last ? parabolaOffset(power[peak - 1], power[peak], power[peak + 1]) : 0
  const q = (peak + delta) * shellWidth
  return q > 0 ? q : null
}

/** Location of the strongest 2-D spectral peak, with the share of the band power in its two 3×3 spots. */
interface SpotPeak {
  frequency: number
  spotFraction: number
}

/**
 * 2-D peak in the band 2/N ≤ q ≤ 0.5, refined by separable parabolas through log-power along both frequency axes.
 * Negative columns are read through the Hermitian mirror P(k, −l) = P(−k, l).
 */
function spotPeak(g: HalfPower): SpotPeak | null {
  const { power, halfWidth, wp, hp, aspect, shellWidth, firstUsedShell } = g
  const at = (k: number, l: number): number => {
    const kk = ((k % hp) + hp) % hp
    if (l >= 0) return power[kk * halfWidth + l]
    return power[((hp - kk) % hp) * halfWidth - l]
  }
  const qMin2 = (firstUsedShell * shellWidth) ** 2
  let best = -1
  let bestK = 0
  let bestL = 0
  let total = 0
  for (let k = 0; k < hp; k++) {
    const ks = k <= hp / 2 ? k : k - hp
    const qy = ks / (hp * aspect)
    for (let l = 0; l < halfWidth; l++) {
      const qx = l / wp
      const q2 = qx * qx + qy * qy
      if (q2 < qMin2 || q2 > 0.25) continue
      const p = power[k * halfWidth + l]
      total += l === 0 || 2 * l === wp ? p : 2 * p
      if (p > best) {
        best = p
        bestK = ks
        bestL = l
      }
    }
  }
  if (!(best > 0) || !(total > 0)) return null
  let spot = 0
  for (let dk = -1; dk <= 1; dk++) for (let dl = -1; dl <= 1; dl++) spot += at(bestK + dk, bestL + dl)
  const dl = logParabolaOffset(at(bestK, bestL - 1), best, at(bestK, bestL + 1))
  const dk = hp > 2 ? logParabolaOffset(at(bestK - 1, bestL), best, at(bestK + 1, bestL)) : 0
  const frequency = Math.hypot((bestL + dl) / wp, (bestK + dk) / (hp * aspect))
  return frequency > 0 ? { frequency, spotFraction: Math.min(1, (2 * spot) / total) } : null
}

/**
 * Dominant period (METHODS §3.1).
 * - 'radial': peak of the shell average with a parabola, the METHODS procedure; right for labyrinths and bubble
 *   lattices, whose spectrum is a ring.
 * - 'peak2d': the strongest 2-D peak with separable log-parabolas (Gaussian interpolation); right for stripes,
 *   whose spectrum is a pair of spots: the shell average of a spot is biased by up to ±3 % depending on the angle and
 *   N/λ, the 2-D peak by < 0.3 % (tests).
 * - 'auto' (default): 'peak2d' when the two 3×3 spots around the 2-D peak hold at least SPOT_FRACTION_FOR_STRIPES of
 *   the band power, else 'radial'.
 * For square-wave stripes the fundamental dominates the odd harmonics, so the global maximum is the fundamental;
 * period = up width + down width.
 * @returns `periodPx: null` when the image is constant, too small, or its spectrum has no usable peak.
 * @example domainPeriod(stripes).periodPx // ≈ 20 for stripes of period 20 px
 */
export function domainPeriod(image: SpectrumInput, options: PowerSpectrumOptions = {}): DomainPeriodResult {
  const { geometry, ok } = halfPowerSpectrum(image, options)
  const spectrum: RadialSpectrum = ok
    ? shellAverage(geometry)
    : {
        frequencies: new Float64Array(0),
        power: new Float64Array(0),
        counts: new Uint32Array(0),
        shellWidth: geometry.shellWidth,
        firstUsedShell: geometry.firstUsedShell,
      }
  const none: DomainPeriodResult = { periodPx: null, peakFrequency: null, spectrum }
  if (!ok) return none
  const method = options.method ?? 'auto'
  const radial = radialPeak(spectrum)
  const spot = method === 'radial' ? null : spotPeak(geometry)
  let frequency: number | null = radial
  let used: 'radial' | 'peak2d' = 'radial'
  if (spot !== null && (method === 'peak2d' || spot.spotFraction >= SPOT_FRACTION_FOR_STRIPES)) {
    frequency = spot.frequency
    used = 'peak2d'
  }
  if (frequency === null) return none
  return {
    periodPx: 1 / frequency,
    peakFrequency: frequency,
    spectrum,
    method: used,
    radialPeriodPx: radial === null ? null : 1 / radial,
    spotFraction: spot === null ? undefined : spot.spotFraction,
  }
}
