/**
 * Curie temperature Tc and critical exponent β from a temperature series of M (or Kerr domain contrast).
 *
 * Method (METHODS §6): model M(T) = M0·(1 − T/Tc)^β for T < Tc. Start values from a scan of Tc over a logarithmic
 * grid above the last clearly non-zero point, fitting ln M = ln M0 + β·ln(1 − T/Tc) linearly at each Tc and keeping the
 * smallest residual (then a golden-section refinement); final values by Levenberg–Marquardt least squares on M itself
 * (K. Levenberg 1944, Q. Appl. Math. 2:164; D. W. Marquardt 1963, J. SIAM 11:431 [from memory]; Marquardt's
 * diagonal damping, own implementation). Standard errors and the Tc–β covariance from s²·(JᵀJ)⁻¹, s² = SSR/(n − p).
 * Rule for the points at M ≈ 0 (above Tc): the zero level is `options.zeroLevel`, or else 3× the RMS of the values
 * ≤ 0 (negative values can only be noise, so their RMS estimates the noise σ; 0 when there are none). In order of
 * temperature, the series is taken to be above Tc from the first two consecutive points at or below the zero level:
 * those and all later points are excluded (a later noise excursion above the level would otherwise drag Tc up), and
 * isolated zero-level points before them are dropped. Tc is constrained to lie above the last used point (the last
 * clearly non-zero point), where the model must still be positive.
 * Checked against: METHODS checks #43 (exact 2-D Ising curve on [0.99, 0.999]Tc → β_eff ≈ 0.123, Tc ≈ 2.2691) and #44
 * (M0 1, Tc 300 K, β 0.3265 on 250–299 K → inputs to 1e-4) [D]; a noisy synthetic series in the tests.
 * Input: { temperature, value } in any order; temperatures in K (or any unit, Tc is returned in it); non-finite
 * points ignored. Use only the asymptotic region (t = 1 − T/Tc ≲ 0.1) via `temperatureRange`, and drop points
 * rounded by field, finite size or Tc spread; Tc and β are strongly correlated [P].
 */

import { solveLinearSystem } from './linearSolve'

/** One point of a temperature series. */
export interface CriticalPoint {
  temperature: number
  value: number
}

/** Options of {@link fitCriticalLaw}. */
export interface CriticalLawFitOptions {
  /** Fix β (e.g. a universality-class value) and fit M0 and Tc only. */
  fixedBeta?: number
  /** Use only points with temperatureRange[0] ≤ T ≤ temperatureRange[1]. */
  temperatureRange?: [number, number]
  /** Values at or below this are "zero" (above Tc); default 3× the RMS of the non-positive values. */
  zeroLevel?: number
}

/** Result of {@link fitCriticalLaw}; null fields where the fit is undefined for the input. */
export interface CriticalLawFit {
  tc: number | null
  tcStdErr: number | null
  beta: number | null
  /** Null when β was fixed. */
  betaStdErr: number | null
  /** M0, in the unit of `value`. */
  amplitude: number | null
  amplitudeStdErr: number | null
  /** Cov(Tc, β) in K (null when β was fixed). */
  covarianceTcBeta: number | null
  /** √(SSR/n) of the least-squares fit, in the unit of `value`. */
  residualRms: number | null
  /** Points in the fit (above the zero level, inside temperatureRange). */
  usedPoints: number
  converged: boolean
  /** Zero level applied (see the file header). */
  zeroLevel: number
  /** Highest temperature of a point above the zero level: Tc is constrained above it. */
  tcLowerBound: number | null
  /** Range of the reduced temperature t = 1 − T/Tc covered by the used points (check t ≲ 0.1). */
  reducedTemperatureRange: [number, number] | null
  warning?: string
}

interface Sample {
  t: Float64Array
  v: Float64Array
  logV: Float64Array
}

/** Residual sum of squares of the linear log fit at a given Tc, with the fitted ln M0 and β. */
function logFit(sample: Sample, tc: number, fixedBeta: number | undefined): { ssr: number; logM0: number; beta: number } {
  const n = sample.t.length
  const x = new Float64Array(n)
  let mx = 0
  let my = 0
  for (let i = 0; i < n; i++) {
    x[i] = Math.log(1 - sample.t[i] / tc)
    mx += x[i]
    my += sample.logV[i]
  }
  mx /= n
  my /= n
  let beta: number
  if (fixedBeta !== undefined) {
    beta = fixedBeta
  } else {
    let sxx = 0
    let sxy = 0
    for (let i = 0; i < n; i++) {
      sxx += (x[i] - mx) * (x[i] - mx)
      sxy += (x[i] - mx) * (sample.logV[i] - my)
    }
    beta = sxx > 0 ? sxy / sxx : 0
  }
  const logM0 = my - beta * mx
  let ssr = 0
  for (let i = 0; i < n; i++) {
    const r = sample.logV[i] - logM0 - beta * x[i]
    ssr += r * r
  }
  return { ssr, logM0, beta }
}

/** Start values: logarithmic scan of Tc − T_last, then golden-section refinement of the best bracket. */
function scanTc(sample: Sample, tLast: number, span: number, fixedBeta: number | undefined): number {
  const steps = 141
  const gMin = -6
  const gMax = 1
  const tcAt = (g: number) => tLast + span * Math.pow(10, g)
  let bestK = 0
  let bestSsr = Infinity
  for (let k = 0; k < steps; k++) {
    const ssr = logFit(sample, tcAt(gMin + ((gMax - gMin) * k) / (steps - 1)), fixedBeta).ssr
    if (ssr < bestSsr) {
      bestSsr = ssr
      bestK = k
    }
  }
  let lo = gMin + ((gMax - gMin) * Math.max(0, bestK - 1)) / (steps - 1)
  let hi = gMin + ((gMax - gMin) * Math.min(steps - 1, bestK + 1)) / (steps - 1)
  const ratio = (Math.sqrt(5) - 1) / 2
  for (let i = 0; i < 60; i++) {
    const c = hi - ratio * (hi - lo)
    const d = lo + ratio * (hi - lo)
    if (logFit(sample, tcAt(c), fixedBeta).ssr <= logFit(sample, tcAt(d), fixedBeta).ssr) hi = d
    else lo = c
  }
  return tcAt((lo + hi) / 2)
}

/** A·x = b for the fit's normal equations; null if singular or if x is not finite. */
function solve(a: number[][], b: ArrayLike<number>): Float64Array | null {
  const x = solveLinearSystem(a.flat(), b)
  return x !== null && x.every(Number.isFinite) ? x : null
}

/** Inverse of a small matrix column by column; null if singular. */
function invert(a: number[][]): number[][] | null {
  const n = a.length
  const columns: Float64Array[] = []
  for (let j = 0; j < n; j++) {
    const e = new Array<number>(n).fill(0)
    e[j] = 1
    const col = solve(a, e)
    if (!col) return null
    columns.push(col)
  }
  return a.map((_, i) => columns.map((col) => col[i]))
}

/** Parameters [M0, Tc, β] (β dropped when fixed) → residuals and Jacobian of the model. */
function evaluate(
  sample: Sample,
  params: number[],
  fixedBeta: number | undefined,
): { ssr: number; residuals: Float64Array; jacobian: number[][] } {
  const [m0, tc] = params
  const beta = fixedBeta ?? params[2]
  const n = sample.t.length
  const residuals = new Float64Array(n)
  const jacobian: number[][] = []
  let ssr = 0
  for (let i = 0; i < n; i++) {
    const t = sample.t[i]
    const u = 1 - t / tc
    const power = Math.pow(u, beta)
    const model = m0 * power
    residuals[i] = sample.v[i] - model
    ssr += residuals[i] * residuals[i]
    const row = [power, (m0 * beta * power * t) / (u * tc * tc)]
    if (fixedBeta === undefined) row.push(model * Math.log(u))
    jacobian.push(row)
  }
  return { ssr, residuals, jacobian }
}

function normalEquations(jacobian: number[][], residuals: Float64Array): { jtj: number[][]; jtr: number[] } {
  const p = jacobian[0].length
  const jtj = Array.from({ length: p }, () => new Array<number>(p).fill(0))
  const jtr = new Array<number>(p).fill(0)
  jacobian.forEach((row, i) => {
    for (let a = 0; a < p; a++) {
      jtr[a] += row[a] * residuals[i]
      for (let b = 0; b < p; b++) jtj[a][b] += row[a] * row[b]
    }
  })
  return { jtj, jtr }
}

/** Levenberg–Marquardt with Marquardt's scaling; Tc is kept above `tLast`. */
function levenbergMarquardt(
  sample: Sample,
  start: number[],
  tLast: number,
  fixedBeta: number | undefined,
): { params: number[]; converged: boolean } {
  let params = start
  let current = evaluate(sample, params, fixedBeta)
  let lambda = 1e-3
  for (let iteration = 0; iteration < 500; iteration++) {
    const { jtj, jtr } = normalEquations(current.jacobian, current.residuals)
    const damped = jtj.map((row, a) => row.map((value, b) => (a === b ? value * (1 + lambda) : value)))
    const step = solve(damped, jtr)
    if (!step) return { params, converged: false }
    const trial = params.map((value, k) => value + step[k])
    if (trial[1] > tLast && trial.every(Number.isFinite)) {
      const next = evaluate(sample, trial, fixedBeta)
      if (next.ssr <= current.ssr) {
        const decrease = current.ssr - next.ssr
        const relativeStep = Math.max(...step.map((s, k) => Math.abs(s) / (Math.abs(params[k]) + 1e-300)))
        params = trial
        current = next
        lambda = Math.max(lambda / 10, 1e-12)
        if (relativeStep < 1e-12 || decrease <= 1e-15 * current.ssr) return { params, converged: true }
        continue
      }
    }
    lambda *= 10
    // No damped step lowers the SSR any more: a minimum to machine precision.
    if (lambda > 1e20) return { params, converged: true }
  }
  return { params, converged: false }
}

function emptyFit(zeroLevel: number, usedPoints: number, warning: string): CriticalLawFit {
  return {
    tc: null,
    tcStdErr: null,
    beta: null,
    betaStdErr: null,
    amplitude: null,
    amplitudeStdErr: null,
    covarianceTcBeta: null,
    residualRms: null,
    usedPoints,
    converged: false,
    zeroLevel,
    tcLowerBound: null,
    reducedTemperatureRange: null,
    warning,
  }
}

/**
 * Fit M(T) = M0·(1 − T/Tc)^β to a temperature series (METHODS §6).
 * @param points temperatures and values (M, M/Ms or domain contrast); order does not matter.
 * @param options.fixedBeta fix β and fit M0 and Tc only.
 * @returns Tc, β, M0 with standard errors, Cov(Tc, β) and fit diagnostics. Fewer than 3 usable points (2 with β
 *   fixed) or a single temperature return nulls with a warning.
 * @example fitCriticalLaw(series).tc
 */
export function fitCriticalLaw(points: CriticalPoint[], options: CriticalLawFitOptions = {}): CriticalLawFit {
  const { fixedBeta, temperatureRange } = options
  const inRange = points.filter(
    (p) =>
      Number.isFinite(p.temperature) &&
      Number.isFinite(p.value) &&
      (!temperatureRange || (p.temperature >= temperatureRange[0] && p.temperature <= temperatureRange[1])),
  )
  let zeroLevel = options.zeroLevel ?? 0
  if (options.zeroLevel === undefined) {
    const nonPositive = inRange.filter((p) => p.value <= 0)
    if (nonPositive.length > 0) {
      zeroLevel = 3 * Math.sqrt(nonPositive.reduce((s, p) => s + p.value * p.value, 0) / nonPositive.length)
    }
  }
  const used: CriticalPoint[] = []
  let zeroRun = 0
  for (const p of [...inRange].sort((a, b) => a.temperature - b.temperature)) {
    if (p.value > zeroLevel && p.value > 0) {
      used.push(p)
      zeroRun = 0
    } else if (++zeroRun >= 2) {
      // Two consecutive zero-level points: the series is above Tc from here; later excursions are noise.
      break
    }
  }
  const parameterCount = fixedBeta === undefined ? 3 : 2
  if (used.length < parameterCount) {
    return emptyFit(zeroLevel, used.length, `Need at least ${parameterCount} points above the zero level.`)
  }
  const sample: Sample = {
    t: Float64Array.from(used, (p) => p.temperature),
    v: Float64Array.from(used, (p) => p.value),
    logV: Float64Array.from(used, (p) => Math.log(p.value)),
  }
  let tFirst = Infinity
  let tLast = -Infinity
  for (const t of sample.t) {
    tFirst = Math.min(tFirst, t)
    tLast = Math.max(tLast, t)
  }
  // All points at one temperature (or all at T ≤ 0, where 1 − T/Tc cannot vanish): Tc is not identifiable.
  if (!(tLast > tFirst) || !(tLast > 0)) {
    return { ...emptyFit(zeroLevel, used.length, 'Tc is not identifiable: the points span no temperature range.'), tcLowerBound: tLast }
  }

  const tcStart = scanTc(sample, tLast, tLast - tFirst, fixedBeta)
  const start = logFit(sample, tcStart, fixedBeta)
  const initial = [Math.exp(start.logM0), tcStart]
  if (fixedBeta === undefined) initial.push(start.beta > 0 ? start.beta : 0.3)
  const { params, converged } = levenbergMarquardt(sample, initial, tLast, fixedBeta)
  const final = evaluate(sample, params, fixedBeta)
  const n = used.length
  const dof = n - parameterCount
  const covariance = dof > 0 ? invert(normalEquations(final.jacobian, final.residuals).jtj) : null
  const s2 = dof > 0 ? final.ssr / dof : 0
  const se = (k: number) => (covariance && covariance[k][k] >= 0 ? Math.sqrt(s2 * covariance[k][k]) : null)
  const [m0, tc] = params
  const warnings: string[] = []
  if (!converged) warnings.push('The least-squares fit did not converge.')
  if (n < 5) warnings.push(`Only ${n} points: standard errors are rough.`)
  return {
    tc,
    tcStdErr: se(1),
    beta: fixedBeta ?? params[2],
    betaStdErr: fixedBeta === undefined ? se(2) : null,
    amplitude: m0,
    amplitudeStdErr: se(0),
    covarianceTcBeta: fixedBeta === undefined && covariance ? s2 * covariance[1][2] : null,
    residualRms: Math.sqrt(final.ssr / n),
    usedPoints: n,
    converged,
    zeroLevel,
    tcLowerBound: tLast,
    reducedTemperatureRange: [1 - tLast / tc, 1 - tFirst / tc],
    ...(warnings.length ? { warning: warnings.join(' ') } : {}),
  }
}
