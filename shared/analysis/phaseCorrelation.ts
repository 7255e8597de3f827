/**
 * Translation between two frames by phase correlation, with sub-pixel refinement, and shifting a frame.
 *
 * Method (METHODS §8.3): cross-power spectrum R = conj(F_ref)·F_mov / |conj(F_ref)·F_mov|, r = IFFT(R); the peak of r
 * is the shift s with mov(x) = ref(x − s) (C. D. Kuglin & D. C. Hines 1975, Proc. IEEE Int. Conf. Cybernetics and
 * Society, 163–165 [from memory]). Sub-pixel: either a parabola through the peak and its two neighbours per axis, or
 * the matrix-multiply DFT upsampling of M. Guizar-Sicairos, S. T. Thurman & J. R. Fienup (2008), "Efficient subpixel
 * image registration algorithms", Opt. Lett. 33:156–158, DOI 10.1364/OL.33.000156: r is evaluated on a grid of
 * 1/upsample px around the peak (first on a 1.5 px region at ≤ 1/10 px, then on ±1 coarse step at 1/upsample),
 * and a parabola through the final grid maximum removes the grid quantisation.
 * Sign convention: this returns s itself (mov is ref moved by +s); scikit-image `phase_cross_correlation(ref, mov)`
 * returns the correction −s (METHODS check #54: roll by (3, −5) → (3, −5) here, (−3, 5) there).
 * Checked against: METHODS.md checks #54 (exact integer roll) and #55 (Fourier shift (2.3, −1.7) recovered within
 * 0.02 px with upsample 100; the tests reach ≲ 0.005 px without window).
 * Input: two frames of equal size (x = column, y = row). Mean subtracted, Hann-windowed by default (non-periodic
 * content), zero-padded to powers of two. Whitening weights all frequencies equally, so the frames need texture up
 * to high frequencies: on smooth content (features ≳ 4 px) the edge and window terms win and the estimate can lock
 * near zero. A window also breaks the exact circular relation of a synthetic `roll`/Fourier shift (0.01–0.1 px
 * error); use `window: 'none'` for such periodic test content.
 * Output: shifts in px (dy along rows, dx along columns); `peak` = height of the normalised correlation peak
 * (≈ 1 for identical content, ≈ 0 for unrelated frames).
 */
import { fft2d, ifft2d, nextPowerOfTwo } from './fft2d'
import type { FloatImage, GrayImage } from './types'

export interface ShiftOptions {
  /** Sub-pixel factor: ≤ 1 → parabola (default), e.g. 100 → DFT upsampling to 0.01 px. */
  upsample?: number
  /** Taper before the FFT: 'hann' (default, non-periodic frames) or 'none' (periodic content). */
  window?: 'hann' | 'none'
}

export interface ShiftEstimate {
  /** Shift along rows, px: mov(y, x) = ref(y − dy, x − dx). */
  dy: number
  /** Shift along columns, px. */
  dx: number
  /** Peak of the normalised phase correlation (0 for constant frames). */
  peak: number
}

type Frame = GrayImage | FloatImage

/** numpy.hanning(n); a single sample gets weight 1. */
function hann(n: number): Float64Array {
  const w = new Float64Array(n)
  for (let i = 0; i < n; i++) w[i] = n === 1 ? 1 : 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / (n - 1))
  return w
}


/** Mean-subtracted, optionally windowed copy zero-padded to wp × hp. */
function prepare(frame: Frame, wp: number, hp: number, windowed: boolean): Float64Array {
  const { width, height, data } = frame
  let mean = 0
  for (let i = 0; i < width * height; i++) mean += data[i]
  mean /= width * height
  const wx = windowed ? hann(width) : new Float64Array(width).fill(1)
  const wy = windowed ? hann(height) : new Float64Array(height).fill(1)
  const out = new Float64Array(wp * hp)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) out[y * wp + x] = (data[y * width + x] - mean) * wx[x] * wy[y]
  }
  return out
}

/** Signed frequency index of bin k of an n-point DFT. */
function signedFrequency(k: number, n: number): number {
  return k <= n / 2 ? k : k - n
}

/**
 * |r| on an s × s grid with spacing `spacing` px centred on (cy, cx), by separable matrix-multiply DFTs of the
 * normalised cross-power spectrum (Guizar-Sicairos et al. 2008). Returns the grid row-major.
 */
function upsampledCorrelation(
  rRe: Float64Array,
  rIm: Float64Array,
  wp: number,
  hp: number,
  cy: number,
  cx: number,
  spacing: number,
  s: number,
): Float64Array {
  const half = (s - 1) / 2
  // Column kernel: exp(+2πi·l̃·x'/wp) for each column frequency l and each output x'.
  const colCos = new Float64Array(wp * s)
  const colSin = new Float64Array(wp * s)
  for (let l = 0; l < wp; l++) {
    const f = (2 * Math.PI * signedFrequency(l, wp)) / wp
    for (let j = 0; j < s; j++) {
      const angle = f * (cx + (j - half) * spacing)
      colCos[l * s + j] = Math.cos(angle)
      colSin[l * s + j] = Math.sin(angle)
    }
  }
  // A(k, x') = Σ_l R(k, l)·exp(2πi l̃ x'/wp).
  const aRe = new Float64Array(hp * s)
  const aIm = new Float64Array(hp * s)
  for (let k = 0; k < hp; k++) {
    for (let l = 0; l < wp; l++) {
      const re = rRe[k * wp + l]
      const im = rIm[k * wp + l]
      if (re === 0 && im === 0) continue
      const base = l * s
      for (let j = 0; j < s; j++) {
        const c = colCos[base + j]
        const sn = colSin[base + j]
        aRe[k * s + j] += re * c - im * sn
        aIm[k * s + j] += re * sn + im * c
      }
    }
  }
  // r(y', x') = Σ_k A(k, x')·exp(2πi k̃ y'/hp) / (wp·hp).
  const out = new Float64Array(s * s)
  const outRe = new Float64Array(s)
  const outIm = new Float64Array(s)
  for (let i = 0; i < s; i++) {
    outRe.fill(0)
    outIm.fill(0)
    const y = cy + (i - half) * spacing
    for (let k = 0; k < hp; k++) {
      const angle = (2 * Math.PI * signedFrequency(k, hp) * y) / hp
      const c = Math.cos(angle)
      const sn = Math.sin(angle)
      for (let j = 0; j < s; j++) {
        const re = aRe[k * s + j]
        const im = aIm[k * s + j]
        outRe[j] += re * c - im * sn
        outIm[j] += re * sn + im * c
      }
    }
    for (let j = 0; j < s; j++) out[i * s + j] = Math.hypot(outRe[j], outIm[j]) / (wp * hp)
  }
  return out
}

/** Parabolic vertex offset through (−1, m), (0, c), (+1, p); 0 when not a maximum. */
function parabolaOffset(m: number, c: number, p: number): number {
  const denominator = m - 2 * c + p
  if (!(denominator < 0)) return 0
  return Math.max(-0.5, Math.min(0.5, (0.5 * (m - p)) / denominator))
}

/**
 * Shift s such that moving(x) ≈ reference(x − s), by phase correlation (METHODS §8.3).
 * @throws RangeError when the frames differ in size.
 * @returns { dy: 0, dx: 0, peak: 0 } when either frame is constant (no phase information).
 * @example estimateShift(ref, roll(ref, 3, -5)) // { dy: 3, dx: -5, peak: ≈ 1 }
 */
export function estimateShift(reference: Frame, moving: Frame, options: ShiftOptions = {}): ShiftEstimate {
  const { width, height } = reference
  if (moving.width !== width || moving.height !== height) {
    throw new RangeError(`estimateShift needs equal sizes, got ${width}×${height} and ${moving.width}×${moving.height}`)
  }
  const none: ShiftEstimate = { dy: 0, dx: 0, peak: 0 }
  if (width * height === 0) return none
  const wp = nextPowerOfTwo(width)
  const hp = nextPowerOfTwo(height)
  const windowed = options.window !== 'none'
  const a = fft2d(prepare(reference, wp, hp, windowed), wp, hp)
  const b = fft2d(prepare(moving, wp, hp, windowed), wp, hp)
  const n = wp * hp
  const rRe = new Float64Array(n)
  const rIm = new Float64Array(n)
  let maxMagnitude = 0
  for (let i = 0; i < n; i++) {
    // conj(A)·B
    const re = a.re[i] * b.re[i] + a.im[i] * b.im[i]
    const im = a.re[i] * b.im[i] - a.im[i] * b.re[i]
    const magnitude = Math.hypot(re, im)
    if (magnitude > maxMagnitude) maxMagnitude = magnitude
    rRe[i] = re
    rIm[i] = im
  }
  // Degenerate: a constant frame has no spectrum after mean subtraction, hence no phase to correlate.
  if (!(maxMagnitude > 0)) return none
  // Frequencies with (numerically) no power carry no phase; leave them out instead of amplifying rounding noise.
  const floor = maxMagnitude * 1e-12
  for (let i = 0; i < n; i++) {
    const magnitude = Math.hypot(rRe[i], rIm[i])
    if (magnitude > floor) {
      rRe[i] /= magnitude
      rIm[i] /= magnitude
    } else {
      rRe[i] = 0
      rIm[i] = 0
    }
  }
  const r = ifft2d(rRe, rIm, wp, hp).re
  let best = 0
  for (let i = 1; i < n; i++) if (r[i] > r[best]) best = i
  const by = Math.floor(best / wp)
  const bx = best - by * wp
  let dy = signedFrequency(by, hp)
  let dx = signedFrequency(bx, wp)
  let peak = r[best]

  const upsample = options.upsample ?? 1
  if (!(upsample > 1)) {
    const at = (y: number, x: number): number => r[(((y % hp) + hp) % hp) * wp + (((x % wp) + wp) % wp)]
    const offY = hp > 2 ? parabolaOffset(at(by - 1, bx), peak, at(by + 1, bx)) : 0
    const offX = wp > 2 ? parabolaOffset(at(by, bx - 1), peak, at(by, bx + 1)) : 0
    return { dy: dy + offY, dx: dx + offX, peak }
  }
  // Two stages: a 1.5 px region at ≤ 1/10 px, then ±1 coarse step at 1/upsample px.
  const coarse = Math.min(upsample, 10)
  const stages: { spacing: number; extent: number }[] = [{ spacing: 1 / coarse, extent: 1.5 }]
  if (upsample > coarse) stages.push({ spacing: 1 / upsample, extent: 2 / coarse })
  for (let stage = 0; stage < stages.length; stage++) {
    const { spacing, extent } = stages[stage]
    const s = Math.ceil(extent / spacing - 1e-9) | 1
    const grid = upsampledCorrelation(rRe, rIm, wp, hp, dy, dx, spacing, s)
    let g = 0
    for (let i = 1; i < grid.length; i++) if (grid[i] > grid[g]) g = i
    const gy = Math.floor(g / s)
    const gx = g - gy * s
    const half = (s - 1) / 2
    dy += (gy - half) * spacing
    dx += (gx - half) * spacing
    peak = grid[g]
    // Last stage: a parabola through the grid maximum and its neighbours removes the grid quantisation.
    if (stage === stages.length - 1) {
      if (gy > 0 && gy < s - 1) dy += parabolaOffset(grid[g - s], peak, grid[g + s]) * spacing
      if (gx > 0 && gx < s - 1) dx += parabolaOffset(grid[g - 1], peak, grid[g + 1]) * spacing
    }
  }
  return { dy, dx, peak }
}

/**
 * Frame moved by (dy, dx): out(y, x) = in(y − dy, x − dx), bilinear for fractional shifts, edge-replicated.
 * Register `moving` onto `reference` with `applyShift(moving, -s.dy, -s.dx)`.
 */
export function applyShift(image: Frame, dy: number, dx: number): FloatImage {
  const { width, height, data } = image
  const out = new Float32Array(width * height)
  if (width * height === 0) return { width, height, data: out }
  const iy = Math.floor(dy)
  const ix = Math.floor(dx)
  const fy = dy - iy
  const fx = dx - ix
  const clampX = (x: number): number => (x < 0 ? 0 : x >= width ? width - 1 : x)
  const clampY = (y: number): number => (y < 0 ? 0 : y >= height ? height - 1 : y)
  for (let y = 0; y < height; y++) {
    // Source row y − dy lies between rows y − iy − 1 (weight fy) and y − iy (weight 1 − fy).
    const r0 = clampY(y - iy) * width
    const r1 = clampY(y - iy - 1) * width
    for (let x = 0; x < width; x++) {
      const c0 = clampX(x - ix)
      const c1 = clampX(x - ix - 1)
      const top = data[r0 + c0] * (1 - fx) + data[r0 + c1] * fx
      const bottom = data[r1 + c0] * (1 - fx) + data[r1 + c1] * fx
      out[y * width + x] = top * (1 - fy) + bottom * fy
    }
  }
  return { width, height, data: out }
}
