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
import { nextPowerOfTwo, realFft2dHalfPower, type RealRowSource } from './fft2d'
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

/** Background a + b·x + c·y fitted to the analysed pixels, and what the fit saw. */
interface Background {
  a: number
  b: number
  c: number
  /** Analysed pixels. */
  n: number
  /** Every analysed value is 0 or 1 (a binary mask). */
  binary: boolean
}

/** Least-squares background of the analysed pixels (b = c = 0 unless `detrend: 'plane'`); null when none is analysed. */
function fitBackground(image: SpectrumInput, detrend: PowerSpectrumOptions['detrend']): Background | null {
  const { width, height, data } = image
  const ignore = 'ignore' in image ? image.ignore : undefined
  if (detrend === 'plane') return fitPlane(data, width, height, ignore)
  let n = 0
  let sv = 0
  let binary = true
  if (data instanceof Uint8Array) {
    const bytes = ignore === undefined ? { ...sumBytes(data, width * height), count: width * height } : sumAnalysedBytes(data, ignore, width * height)
    sv = bytes.sum
    n = bytes.count
    binary = bytes.bits <= 1
  } else {
    for (let i = 0; i < width * height; i++) {
      if (ignore !== undefined && ignore[i] !== 0) continue
      const v = data[i]
      n++
      sv += v
      if (v !== 0 && v !== 1) binary = false
    }
  }
  return n === 0 ? null : { a: sv / n, b: 0, c: 0, n, binary }
}

/** Byte order of typed arrays on this platform: summing bytes a word at a time needs byte k at bits 8k..8k+7. */
const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1

/**
 * Sum and OR of all bytes (no ignore map). Sums are integers, so the order of addition does not matter: whole
 * 32-bit words are taken four bytes at a time where the array allows it.
 */
function sumBytes(data: Uint8Array, n: number): { sum: number; bits: number } {
  let sum = 0
  let bits = 0
  let i = 0
  if (LITTLE_ENDIAN && data.byteOffset % 4 === 0) {
    const words = new Uint32Array(data.buffer, data.byteOffset, n >> 2)
    // Chunks of 4096 words keep the integer partial sums below 2^31 (4096·4·255).
    for (let from = 0; from < words.length; from += 4096) {
      let chunk = 0
      for (let w = from; w < Math.min(from + 4096, words.length); w++) {
        const word = words[w]
        bits |= word
        const pairs = (word & 0x00ff00ff) + ((word >>> 8) & 0x00ff00ff)
        chunk += (pairs & 0xffff) + (pairs >>> 16)
      }
      sum += chunk
    }
    i = words.length * 4
  }
  for (; i < n; i++) {
    sum += data[i]
    bits |= data[i]
  }
  return { sum, bits: (bits | (bits >>> 8) | (bits >>> 16) | (bits >>> 24)) & 0xff }
}

/** Sum, count and OR of the analysed bytes (pixels with a nonzero ignore byte left out). */
function sumAnalysedBytes(data: Uint8Array, ignore: Uint8Array, n: number): { sum: number; count: number; bits: number } {
  let sum = 0
  let count = 0
  let bits = 0
  for (let i = 0; i < n; i++) {
    if (ignore[i] !== 0) continue
    sum += data[i]
    bits |= data[i]
    count++
  }
  return { sum, count, bits }
}

/** Least-squares plane a + b·x + c·y (METHODS §3.1 option), with the mean as fallback for degenerate geometry. */
function fitPlane(data: SpectrumInput['data'], width: number, height: number, ignore: Uint8Array | undefined): Background | null {
  let n = 0
  let sv = 0
  let sx = 0
  let sy = 0
  let sxx = 0
  let syy = 0
  let sxy = 0
  let sxv = 0
  let syv = 0
  let binary = true
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
      if (v !== 0 && v !== 1) binary = false
    }
  }
  if (n === 0) return null
  let a = sv / n
  let b = 0
  let c = 0
  if (n >= 3) {
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
  return { a, b, c, n, binary }
}

/**
 * Rows y < height of the detrended, windowed image (data − a − b·x − c·y)·w(x)·w(y), zero-padded to wp columns,
 * ignored pixels 0 (the rows below, up to the power of two, are zero). Returns null when the windowed image is
 * identically zero (constant image): Σv² ≤ 1e-20·(|a|+1)²·n, a relative test because rounding of a constant image's
 * mean leaves residues ~1e-16 of the level.
 */
function windowedRows(
  image: SpectrumInput,
  fit: Background,
  useWindow: boolean,
  wp: number,
): RealRowSource | null {
  const { width, height, data } = image
  const ignore = 'ignore' in image ? image.ignore : undefined
  const { a, b, c } = fit
  const wx = useWindow ? hann(width) : new Float64Array(width).fill(1)
  const wy = useWindow ? hann(height) : new Float64Array(height).fill(1)
  const value = (x: number, y: number): number => (data[y * width + x] - (a + c * y) - b * x) * wx[x] * wy[y]
  const scale = Math.abs(a) + 1
  if (!hasEnergy(value, fit, width, height, ignore, 1e-20 * scale * scale * fit.n)) return null
  if (fit.binary && b === 0 && c === 0) {
    // With b = c = 0 a pixel is (v − a)·w(x)·w(y), v = 0 or 1: two values per column, each then times w(y) — the
    // products `value` forms (a zero may differ in sign, which no power value sees).
    const columnValues = new Float64Array(2 * width)
    for (let x = 0; x < width; x++) {
      columnValues[x] = (0 - a) * wx[x]
      columnValues[width + x] = (1 - a) * wx[x]
    }
    return (y, out, offset) => {
      binaryRow(data, ignore, columnValues, y * width, width, wy[y], out, offset)
      out.fill(0, offset + width, offset + wp)
    }
  }
  return (y, out, offset) => {
    for (let x = 0; x < width; x++) out[offset + x] = ignore !== undefined && ignore[y * width + x] !== 0 ? 0 : value(x, y)
    out.fill(0, offset + width, offset + wp)
  }
}

/** One windowed row of a 0/1 image from the per-column values (index value·width + x) times the row weight. */
function binaryRow(
  data: SpectrumInput['data'],
  ignore: Uint8Array | undefined,
  columnValues: Float64Array,
  from: number,
  width: number,
  rowWeight: number,
  out: Float64Array,
  offset: number,
): void {
  if (ignore === undefined) {
    for (let x = 0; x < width; x++) out[offset + x] = columnValues[data[from + x] * width + x] * rowWeight
    return
  }
  for (let x = 0; x < width; x++) {
    out[offset + x] = ignore[from + x] !== 0 ? 0 : columnValues[data[from + x] * width + x] * rowWeight
  }
}

/**
 * Whether Σv² over the analysed pixels, added in raster order, exceeds `threshold`. With finite data (a finite fit;
 * 8/16-bit or float32 values cannot overflow a double here) a partial sum of non-negative terms never drops below any
 * of its terms (rounding is monotonic), so one term above the threshold decides it: the centre pixel is tried first
 * and the full sum is only needed for (nearly) constant images, or when a NaN or infinity may be among the terms.
 */
function hasEnergy(
  value: (x: number, y: number) => number,
  fit: Background,
  width: number,
  height: number,
  ignore: Uint8Array | undefined,
  threshold: number,
): boolean {
  const cx = width >> 1
  const cy = height >> 1
  const finite = Number.isFinite(fit.a) && Number.isFinite(fit.b) && Number.isFinite(fit.c)
  if (finite && (ignore === undefined || ignore[cy * width + cx] === 0)) {
    const v = value(cx, cy)
    if (v * v > threshold) return true
  }
  let energy = 0
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      if (ignore !== undefined && ignore[y * width + x] !== 0) continue
      const v = value(x, y)
      energy += v * v
    }
  }
  return energy > threshold
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
  const fit = fitBackground(image, options.detrend)
  const rows = fit === null ? null : windowedRows(image, fit, options.window !== false, wp)
  if (rows === null) return { geometry, ok: false }
  geometry.halfWidth = wp === 1 ? 1 : wp / 2 + 1
  geometry.power = realFft2dHalfPower(rows, wp, hp, height, spectrumScratch(geometry.halfWidth * hp))
  return { geometry, ok: true }
}

/** The half-plane power array, kept for the largest size seen (its contents are whatever the last call left). */
let powerScratch = new Float64Array(0)

function spectrumScratch(length: number): Float64Array {
  if (powerScratch.length < length) powerScratch = new Float64Array(length)
  return powerScratch.subarray(0, length)
}

/** Per-bin tables of a frequency geometry; they depend on the sizes only, so a stack computes them once. */
interface ShellTables {
  key: string
  /** round(|q|/Δq) per half-plane bin. */
  shellOf: Int32Array
  /** Frequency samples per shell over the full plane (a bin of columns 1..Wp/2−1 counts twice). */
  counts: Uint32Array
  /** Per row k: the columns with 2/N ≤ |q| ≤ 0.5 (the 2-D peak search band) are bandFrom[k]..bandTo[k] − 1. */
  bandFrom: Int32Array
  bandTo: Int32Array
}

let lastTables: ShellTables | null = null

/** Number of shells up to the corner of the band, q = √(0.25 + (0.5/aspect)²). */
function shellCount(g: HalfPower): number {
  const qyMax = 0.5 / g.aspect
  return Math.floor(Math.sqrt(0.25 + qyMax * qyMax) / g.shellWidth + 0.5) + 1
}

/** Weight of half-plane column l: 1 for l = 0 and l = Wp/2 (their own mirror), else 2. */
function columnWeight(l: number, wp: number): number {
  return l === 0 || 2 * l === wp ? 1 : 2
}

/**
 * Tables for a geometry, cached for the last one seen. The squared radial coordinate in shell units is separable,
 * (l/(Wp·Δq))² + (k/(Hp·aspect·Δq))²; along a row |q| only grows with l, so the band is one run of columns.
 */
function shellTables(g: HalfPower): ShellTables {
  const { halfWidth, wp, hp, aspect, shellWidth, firstUsedShell } = g
  const key = `${halfWidth},${wp},${hp},${aspect},${shellWidth},${firstUsedShell}`
  if (lastTables !== null && lastTables.key === key) return lastTables
  const shellOf = new Int32Array(halfWidth * hp)
  const counts = new Uint32Array(shellCount(g))
  const bandFrom = new Int32Array(hp)
  const bandTo = new Int32Array(hp)
  const colTerm = new Float64Array(halfWidth)
  for (let l = 0; l < halfWidth; l++) colTerm[l] = (l / (wp * shellWidth)) ** 2
  const qMin2 = (firstUsedShell * shellWidth) ** 2
  for (let k = 0; k < hp; k++) {
    const ks = k <= hp / 2 ? k : k - hp
    const rowTerm = (ks / (hp * aspect * shellWidth)) ** 2
    const row = k * halfWidth
    for (let l = 0; l < halfWidth; l++) {
      const shell = Math.round(Math.sqrt(colTerm[l] + rowTerm))
      shellOf[row + l] = shell
      counts[shell] += columnWeight(l, wp)
    }
    const qy = ks / (hp * aspect)
    const inBand = (l: number): number => {
      const qx = l / wp
      const q2 = qx * qx + qy * qy
      return q2 < qMin2 ? -1 : q2 > 0.25 ? 1 : 0
    }
    let from = 0
    while (from < halfWidth && inBand(from) < 0) from++
    let to = from
    while (to < halfWidth && inBand(to) === 0) to++
    bandFrom[k] = from
    bandTo[k] = to
  }
  lastTables = { key, shellOf, counts, bandFrom, bandTo }
  return lastTables
}

/** Running state of the 2-D peak search: strongest bin of the band so far and the band's total power. */
interface BandSearch {
  best: number
  bestK: number
  bestL: number
  total: number
}

/**
 * Shell average of the half-plane power (columns 1..Wp/2−1 also stand for their Hermitian mirror). With `search`,
 * the 2-D peak search of spotPeak runs in the same pass, row by row while the row is in cache.
 */
function shellAverage(g: HalfPower, search?: BandSearch): RadialSpectrum {
  const { power, halfWidth, wp, hp, shellWidth, firstUsedShell } = g
  const { shellOf, counts, bandFrom, bandTo } = shellTables(g)
  const shells = counts.length
  const sum = new Float64Array(shells)
  for (let k = 0; k < hp; k++) {
    addRowToShells(power, shellOf, k * halfWidth, halfWidth, wp, sum)
    if (search !== undefined) searchRow(power, k, halfWidth, wp, hp, bandFrom[k], bandTo[k], search)
  }
  const frequencies = new Float64Array(shells)
  const average = new Float64Array(shells)
  for (let s = 0; s < shells; s++) {
    frequencies[s] = s * shellWidth
    average[s] = counts[s] > 0 ? sum[s] / counts[s] : 0
  }
  return { frequencies, power: average, counts: counts.slice(), shellWidth, firstUsedShell }
}

/** Band columns from..to−1 of row k into the peak search (raster order: the first of equal maxima wins). */
function searchRow(power: Float64Array, k: number, halfWidth: number, wp: number, hp: number, from: number, to: number, search: BandSearch): void {
  const row = k * halfWidth
  let { best, total } = search
  for (let l = from; l < to; l++) {
    const p = power[row + l]
    total += l === 0 || 2 * l === wp ? p : 2 * p
    if (p > best) {
      best = p
      search.bestK = k <= hp / 2 ? k : k - hp
      search.bestL = l
    }
  }
  search.best = best
  search.total = total
}

/**
 * sum[shell] += weight·P for the bins of one row, in column order. Neighbouring columns mostly share a shell, so the
 * running sum of a shell stays in a local until the shell changes (the same additions in the same order).
 */
function addRowToShells(power: Float64Array, shellOf: Int32Array, row: number, halfWidth: number, wp: number, sum: Float64Array): void {
  let shell = shellOf[row]
  let acc = sum[shell]
  for (let l = 0; l < halfWidth; l++) {
    const s = shellOf[row + l]
    if (s !== shell) {
      sum[shell] = acc
      shell = s
      acc = sum[s]
    }
    acc += columnWeight(l, wp) * power[row + l]
  }
  sum[shell] = acc
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
 * 2-D peak in the band 2/N ≤ q ≤ 0.5 (found by the search that ran with shellAverage), refined by separable
 * parabolas through log-power along both frequency axes. Negative columns are read through the Hermitian mirror
 * P(k, −l) = P(−k, l).
 */
function spotPeak(g: HalfPower, search: BandSearch): SpotPeak | null {
  const { power, halfWidth, wp, hp, aspect } = g
  const { best, bestK, bestL, total } = search
  const at = (k: number, l: number): number => {
    const kk = ((k % hp) + hp) % hp
    if (l >= 0) return power[kk * halfWidth + l]
    return power[((hp - kk) % hp) * halfWidth - l]
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
  const method = options.method ?? 'auto'
  const search: BandSearch | undefined = method === 'radial' ? undefined : { best: -1, bestK: 0, bestL: 0, total: 0 }
  const spectrum: RadialSpectrum = ok
    ? shellAverage(geometry, search)
    : {
        frequencies: new Float64Array(0),
        power: new Float64Array(0),
        counts: new Uint32Array(0),
        shellWidth: geometry.shellWidth,
        firstUsedShell: geometry.firstUsedShell,
      }
  const none: DomainPeriodResult = { periodPx: null, peakFrequency: null, spectrum }
  if (!ok) return none
  const radial = radialPeak(spectrum)
  const spot = search === undefined ? null : spotPeak(geometry, search)
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
