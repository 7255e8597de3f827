/**
 * Domain-wall intensity profile: sampling across a wall and a tanh fit by Levenberg–Marquardt.
 *
 * Method (METHODS §7.1): sample a profile perpendicular to the wall by bilinear interpolation, averaging parallel
 * profiles; fit I(x) = a + b·tanh((x − x0)/w) by Levenberg–Marquardt (K. Levenberg 1944, Q. Appl. Math. 2:164–168;
 * D. W. Marquardt 1963, J. SIAM 11:431–441 [from memory]) with Marquardt's diagonal scaling; standard errors from
 * the covariance s²·(JᵀJ)⁻¹, s² = RSS/(n − 4). Start: a, b from the two plateaus (outer 10 % of samples), x0 at the
 * steepest step, w = |b|/(largest slope) (the slope of b·tanh at its centre is b/w).
 * Width conventions (for a Bloch wall m_z = tanh(x/Δ) the fitted w = Δ): tangent width 2w, Lilley width πw,
 * 10–90 % rise ln 9·w = 2.1972·w [D]. Kerr images resolve the optics, not the wall (METHODS §7.1 pitfalls).
 * Checked against: METHODS.md check #46 (a 100, b 50, x0 32.3, w 3 on x = 0…63, noise-free → inputs to 1e-6;
 * 10–90 % 6.592 px; δ_L 9.425 px).
 * Input: any GrayImage/FloatImage; coordinates in px with pixel centres at integers (x = column, y = row); samples
 * outside the image take the nearest edge value. The fit expects positions in ascending order (the outer 10 % at
 * each end are taken as the plateaus). Output: positions in px along the line from (x0, y0); widths in px.
 */
import type { FloatImage, GrayImage } from './types'
import { solveLinearSystem } from './linearSolve'

export interface LineProfileOptions {
  /** Parallel profiles on each side, 1 px apart, averaged with the central one (default 0). */
  halfWidth?: number
  /** Sample spacing along the line, px (default 1). */
  step?: number
}

export interface LineProfile {
  /** Distance from (x0, y0) along the line, px. */
  positions: Float64Array
  values: Float64Array
}

export interface TanhFit {
  a: number
  /** Signed step half-height (positive when the profile rises along x). */
  b: number
  x0: number
  /** Fitted w (= Δ for a Bloch wall), px, ≥ 0. */
  w: number
  /** Standard error of w, px; null when it cannot be estimated (n ≤ 4 or singular fit). */
  wStdErr: number | null
  /** 2w, px. */
  tangentWidth: number
  /** πw, px. */
  lilleyWidth: number
  /** ln 9·w, px. */
  rise10to90: number
  /** √(RSS/n) in intensity units. */
  residualRms: number
  /** True when the iterations stopped because the step or the cost decrease became negligible, or no step could
   * lower the cost any more; false at the iteration limit or for degenerate input. */
  converged: boolean
  aStdErr?: number | null
  bStdErr?: number | null
  x0StdErr?: number | null
  iterations?: number
}

/** Bilinear sample with edge clamping. */
function bilinear(data: ArrayLike<number>, width: number, height: number, x: number, y: number): number {
  const cx = Math.min(Math.max(x, 0), width - 1)
  const cy = Math.min(Math.max(y, 0), height - 1)
  const x0 = Math.min(Math.floor(cx), Math.max(0, width - 2))
  const y0 = Math.min(Math.floor(cy), Math.max(0, height - 2))
  const x1 = Math.min(x0 + 1, width - 1)
  const y1 = Math.min(y0 + 1, height - 1)
  const fx = cx - x0
  const fy = cy - y0
  const top = data[y0 * width + x0] * (1 - fx) + data[y0 * width + x1] * fx
  const bottom = data[y1 * width + x0] * (1 - fx) + data[y1 * width + x1] * fx
  return top * (1 - fy) + bottom * fy
}

/**
 * Intensity profile along (x0, y0) → (x1, y1), averaged over 2·halfWidth + 1 parallel lines 1 px apart.
 * @returns one sample at (x0, y0) for a zero-length line; empty arrays for an empty image.
 */
export function sampleLineProfile(
  image: GrayImage | FloatImage,
  x0: number,
  y0: number,
  x1: number,
  y1: number,
  options: LineProfileOptions = {},
): LineProfile {
  const { width, height, data } = image
  if (width * height === 0) return { positions: new Float64Array(0), values: new Float64Array(0) }
  const step = options.step !== undefined && options.step > 0 ? options.step : 1
  const half = Math.max(0, Math.floor(options.halfWidth ?? 0))
  const length = Math.hypot(x1 - x0, y1 - y0)
  const count = Math.floor(length / step + 1e-9) + 1
  const tx = length > 0 ? (x1 - x0) / length : 1
  const ty = length > 0 ? (y1 - y0) / length : 0
  // Unit normal (perpendicular offsets of the parallel profiles).
  const nx = -ty
  const ny = tx
  const positions = new Float64Array(count)
  const values = new Float64Array(count)
  for (let i = 0; i < count; i++) {
    const s = i * step
    positions[i] = s
    let sum = 0
    for (let o = -half; o <= half; o++) {
      sum += bilinear(data, width, height, x0 + s * tx + o * nx, y0 + s * ty + o * ny)
    }
    values[i] = sum / (2 * half + 1)
  }
  return { positions, values }
}

/** Residual sum of squares of a + b·tanh((x − x0)/w). */
function rss(x: Float64Array, y: Float64Array, p: Float64Array): number {
  let s = 0
  for (let i = 0; i < x.length; i++) {
    const r = y[i] - (p[0] + p[1] * Math.tanh((x[i] - p[2]) / p[3]))
    s += r * r
  }
  return s
}

/** JᵀJ (4×4, row-major) and Jᵀr at parameters p. */
function normalEquations(
  x: Float64Array,
  y: Float64Array,
  p: Float64Array,
  jtj: Float64Array,
  jtr: Float64Array,
): void {
  jtj.fill(0)
  jtr.fill(0)
  const g = new Float64Array(4)
  for (let i = 0; i < x.length; i++) {
    const u = (x[i] - p[2]) / p[3]
    const t = Math.tanh(u)
    const sech2 = 1 - t * t
    g[0] = 1
    g[1] = t
    g[2] = (-p[1] * sech2) / p[3]
    g[3] = (-p[1] * sech2 * u) / p[3]
    const r = y[i] - (p[0] + p[1] * t)
    for (let j = 0; j < 4; j++) {
      jtr[j] += g[j] * r
      for (let k = 0; k < 4; k++) jtj[j * 4 + k] += g[j] * g[k]
    }
  }
}

/** Start values from the plateaus and the steepest step; null when the profile is flat. */
function initialGuess(x: Float64Array, y: Float64Array): Float64Array | null {
  const n = x.length
  const k = Math.max(1, Math.floor(n / 10))
  let left = 0
  let right = 0
  for (let i = 0; i < k; i++) {
    left += y[i]
    right += y[n - 1 - i]
  }
  left /= k
  right /= k
  let steepest = 0
  let slope = 0
  for (let i = 0; i + 1 < n; i++) {
    const s = (y[i + 1] - y[i]) / (x[i + 1] - x[i])
    if (Math.abs(s) > Math.abs(slope)) {
      slope = s
      steepest = i
    }
  }
  const b = (right - left) / 2
  if (!(Math.abs(b) > 0) || !(Math.abs(slope) > 0)) return null
  const spacing = Math.abs(x[n - 1] - x[0]) / (n - 1)
  const w = Math.max(Math.abs(b / slope), spacing / 4)
  return Float64Array.from([(left + right) / 2, b, 0.5 * (x[steepest] + x[steepest + 1]), w])
}

const MAX_ITERATIONS = 500

/**
 * Least-squares fit of a + b·tanh((x − x0)/w) by Levenberg–Marquardt, with standard errors.
 * @returns `converged: false` with a = mean, b = 0, w = 0 and null errors for fewer than 5 samples or a flat profile.
 * @example fitTanhProfile(x, y).rise10to90 // ln 9 · w
 */
export function fitTanhProfile(positions: Float64Array, values: Float64Array): TanhFit {
  const n = Math.min(positions.length, values.length)
  const x = positions.subarray(0, n)
  const y = values.subarray(0, n)
  let mean = 0
  for (let i = 0; i < n; i++) mean += y[i]
  mean = n > 0 ? mean / n : 0
  const start = n >= 5 ? initialGuess(x, y) : null
  if (start === null) {
    // Degenerate: too few samples or no step to fit; report the mean level and no wall.
    let ss = 0
    for (let i = 0; i < n; i++) ss += (y[i] - mean) ** 2
    return {
      a: mean,
      b: 0,
      x0: n > 0 ? 0.5 * (x[0] + x[n - 1]) : 0,
      w: 0,
      wStdErr: null,
      tangentWidth: 0,
      lilleyWidth: 0,
      rise10to90: 0,
      residualRms: n > 0 ? Math.sqrt(ss / n) : 0,
      converged: false,
      aStdErr: null,
      bStdErr: null,
      x0StdErr: null,
      iterations: 0,
    }
  }

  let p = start
  let cost = rss(x, y, p)
  let lambda = 1e-3
  const jtj = new Float64Array(16)
  const jtr = new Float64Array(4)
  const damped = new Float64Array(16)
  let converged = false
  let iterations = 0
  for (; iterations < MAX_ITERATIONS && !converged; iterations++) {
    normalEquations(x, y, p, jtj, jtr)
    // Inner loop: raise λ until a step lowers the cost (or λ explodes: the fit is as good as it gets).
    for (;;) {
      damped.set(jtj)
      for (let j = 0; j < 4; j++) damped[j * 5] += lambda * (jtj[j * 5] > 0 ? jtj[j * 5] : 1)
      const delta = solveLinearSystem(damped, jtr, 1e-300)
      const trial = delta === null ? null : Float64Array.from(p, (v, j) => v + delta[j])
      const trialCost = trial === null || trial[3] === 0 ? Infinity : rss(x, y, trial)
      if (trial !== null && delta !== null && trialCost <= cost) {
        let small = true
        for (let j = 0; j < 4; j++) if (Math.abs(delta[j]) > 1e-12 * (Math.abs(trial[j]) + 1e-12)) small = false
        const relativeDrop = cost > 0 ? (cost - trialCost) / cost : 0
        p = trial
        cost = trialCost
        lambda = Math.max(lambda / 10, 1e-12)
        if (small || relativeDrop < 1e-15 || cost === 0) converged = true
        break
      }
      lambda *= 10
      if (lambda > 1e12) {
        converged = true
        break
      }
    }
  }
  // tanh is odd: (b, w) and (−b, −w) describe the same curve; report w ≥ 0.
  if (p[3] < 0) {
    p[3] = -p[3]
    p[1] = -p[1]
  }
  normalEquations(x, y, p, jtj, jtr)
  const stdErr: (number | null)[] = [null, null, null, null]
  if (n > 4) {
    const s2 = cost / (n - 4)
    for (let j = 0; j < 4; j++) {
      const e = new Float64Array(4)
      e[j] = 1
      const column = solveLinearSystem(jtj, e, 1e-300)
      if (column !== null && column[j] >= 0) stdErr[j] = Math.sqrt(s2 * column[j])
    }
  }
  const w = p[3]
  return {
    a: p[0],
    b: p[1],
    x0: p[2],
    w,
    wStdErr: stdErr[3],
    tangentWidth: 2 * w,
    lilleyWidth: Math.PI * w,
    rise10to90: Math.log(9) * w,
    residualRms: Math.sqrt(cost / n),
    converged,
    aStdErr: stdErr[0],
    bStdErr: stdErr[1],
    x0StdErr: stdErr[2],
    iterations,
  }
}
