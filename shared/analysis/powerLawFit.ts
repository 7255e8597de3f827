/**
 * Power-law exponent of a size distribution (e.g. jump/avalanche sizes) by maximum likelihood, with x_min chosen by
 * the Kolmogorov–Smirnov distance and a bootstrap goodness-of-fit p-value.
 *
 * Method: A. Clauset, C. R. Shalizi, M. E. J. Newman (2009), "Power-law distributions in empirical data", SIAM Rev.
 * 51(4):661–703, DOI 10.1137/070710111 [R for the formulas, METHODS §5.4]:
 * - continuous MLE α̂ = 1 + n·[Σ ln(x_i/x_min)]⁻¹, standard error (α̂ − 1)/√n;
 * - discrete, exact: maximise ℓ(α) = −n·ln ζ(α, x_min) − α·Σ ln x_i (ℓ is concave in α because ln ζ is a
 *   log-partition function): Newton's method on ℓ′ = 0 with ∂ζ/∂α and ∂²ζ/∂α² from the same Euler–Maclaurin sum,
 *   kept inside a bracket that it bisects whenever a step leaves it; standard error 1/√(n·∂²ln ζ/∂α²) by a central
 *   difference;
 * - discrete, approximate: α̂ ≈ 1 + n·[Σ ln(x_i/(x_min − ½))]⁻¹, adequate for x_min ≳ 6 [M for the "≳ 6"];
 * - x_min: every distinct value except the largest is a candidate (those leaving a tail of ≥ MIN_SCAN_TAIL = 50 values,
 *   when there are any: tiny tails fit themselves); the one with the smallest KS distance
 *   D = max |S(x) − P(x)| over the tail wins (continuous: supremum over both sides of each ECDF step; discrete: at the
 *   distinct values, as in the authors' code [from memory]); ties keep the smaller x_min;
 * - goodness of fit: semi-parametric bootstrap (their §4.1): each synthetic set has the original size, every value
 *   drawn with probability n_tail/n from the fitted power law, otherwise uniformly from the observed values below
 *   x_min, then is fitted by the same procedure; p = fraction of synthetic D ≥ observed D. ≥ 1000 resamples give p to
 *   ±0.01; p ≤ 0.1 rules the power law out [M for the numeric rules].
 * Hurwitz ζ(s, q) = Σ_{k≥0} (q + k)^(−s) is computed here by the Euler–Maclaurin formula (direct sum until q + k ≥ 15,
 * integral and half-term, 8 Bernoulli corrections; relative error < 1e-13 for 1 < s ≤ 10), checked against
 * ζ(2) = π²/6, ζ(4) = π⁴/90, ζ(3) = 1.2020569031595942 and the shift ζ(s, q) = ζ(s, q + 1) + q^(−s); its derivatives
 * in s term by term (each term is c·e^(g(s)), so its derivatives are g′·term and (g′² + g″)·term), checked against
 * ζ′(2) = −0.9375482543158437 [from memory] and central differences.
 * Discrete synthetic draws use the exact inverse CCDF over a 10⁴-value table, then CSN's continuous-rounding
 * approximation beyond it (their Appendix D [from memory]).
 * Checked against: METHODS checks #37 (x = [1,2,4,8] → α̂ = 1.961797, SE 0.480898), #38 and #39 (synthetic sets).
 * Input: sizes (any positive values; discrete = integers ≥ 1). Non-finite and non-positive values are dropped.
 * Output: α dimensionless; x_min in the units of the input. Never fit a straight line to a log-log histogram [R].
 * Cost: the x_min scan is O(n·candidates) with early exit; the bootstrap repeats it per resample.
 */
import { createRandom } from './seededRandom'

/** Options of {@link fitPowerLaw}. */
export interface PowerLawFitOptions {
  /** Treat values as integers (pixel counts) and use the discrete power law (default false). */
  discrete?: boolean
  /** Discrete estimator: 'exact' Hurwitz-ζ MLE (default) or the (x_min − ½) approximation. */
  discreteMethod?: 'exact' | 'approximate'
  /** Fix x_min instead of choosing it by the KS distance. */
  xMin?: number
  /** Bootstrap resamples for the goodness-of-fit p-value (default 200; 1000 for ±0.01; 0 = no p-value). */
  bootstrap?: number
  /** PRNG seed for the bootstrap (default 1); the same input and seed give the same p. */
  seed?: number
}

/** Result of {@link fitPowerLaw}. Null fields mean the fit is undefined for the input (see `warning`). */
export interface PowerLawFit {
  alpha: number | null
  alphaStdErr: number | null
  xMin: number | null
  /** Values ≥ x_min used in the fit. */
  nTail: number
  /** Positive finite values received. */
  n: number
  /** KS distance between the tail's empirical CDF and the fitted power law. */
  ks: number | null
  /** Bootstrap goodness-of-fit p-value; null when bootstrap = 0 or no fit. */
  pValue: number | null
  /** Resamples used for pValue. */
  bootstrap: number
  method: 'continuous' | 'discrete-exact' | 'discrete-approximate'
  /** Small tail (< 50 values), a ruled-out power law (p ≤ 0.1) or why no fit exists. */
  warning?: string
}

const BERNOULLI_OVER_FACTORIAL = [
  1 / 12,
  -1 / 720,
  1 / 30240,
  -1 / 1209600,
  1 / 47900160,
  -691 / 1307674368000,
  1 / 74724249600,
  -3617 / 10670622842880000,
]

/**
 * Hurwitz zeta ζ(s, q) = Σ_{k≥0} (q + k)^(−s) for s > 1, q > 0 (Euler–Maclaurin; see the file header).
 * @returns Infinity for s ≤ 1 (the series diverges) and for q ≤ 0.
 */
export function hurwitzZeta(s: number, q: number): number {
  if (!(s > 1) || !(q > 0)) return Infinity
  let sum = 0
  let a = q
  while (a < 15) {
    sum += Math.pow(a, -s)
    a += 1
  }
  const aPowMinusS = Math.pow(a, -s)
  sum += (a * aPowMinusS) / (s - 1) + 0.5 * aPowMinusS
  let rising = s
  let power = aPowMinusS / a
  const inverseSquare = 1 / (a * a)
  for (let j = 0; j < BERNOULLI_OVER_FACTORIAL.length; j++) {
    sum += BERNOULLI_OVER_FACTORIAL[j] * rising * power
    rising *= (s + 2 * j + 1) * (s + 2 * j + 2)
    power *= inverseSquare
  }
  return sum
}

/** ζ(s, q) with its first and second derivatives in s (see {@link hurwitzZetaWithDerivatives}). */
export interface ZetaWithDerivatives {
  value: number
  first: number
  second: number
}

/**
 * ζ(s, q), ∂ζ/∂s and ∂²ζ/∂s² by the Euler–Maclaurin sum of {@link hurwitzZeta}, differentiated term by term: a direct
 * term (q + k)^(−s) has log-derivative −ln(q + k); the integral a^(1−s)/(s − 1), −ln a − 1/(s − 1); the half term,
 * −ln a; the j-th Bernoulli term, Σ_{m<2j−1} 1/(s + m) − ln a. For s > 1, q > 0 (Infinity otherwise, as hurwitzZeta).
 * hurwitzZeta keeps its own value-only sum: it is the hot path of the KS distances, and sharing one function with
 * the derivatives made the bootstrap 7–15 % slower.
 */
export function hurwitzZetaWithDerivatives(s: number, q: number): ZetaWithDerivatives {
  if (!(s > 1) || !(q > 0)) return { value: Infinity, first: -Infinity, second: Infinity }
  let value = 0
  let first = 0
  let second = 0
  let a = q
  while (a < 15) {
    const term = Math.pow(a, -s)
    const log = Math.log(a)
    value += term
    first -= log * term
    second += log * log * term
    a += 1
  }
  const logA = Math.log(a)
  const aPowMinusS = Math.pow(a, -s)
  // Integral term a^(1−s)/(s − 1): g′ = −ln a − 1/(s − 1), g″ = 1/(s − 1)². Half term ½a^(−s): g′ = −ln a, g″ = 0.
  // The value adds them as hurwitzZeta does, so the two functions give the same ζ to the last bit.
  const integral = (a * aPowMinusS) / (s - 1)
  const half = 0.5 * aPowMinusS
  const integralSlope = -logA - 1 / (s - 1)
  value += integral + half
  first += integralSlope * integral - logA * half
  second += (integralSlope * integralSlope + 1 / ((s - 1) * (s - 1))) * integral + logA * logA * half
  let rising = s
  let power = aPowMinusS / a
  // Σ 1/(s + m) and Σ 1/(s + m)² over the factors of the rising factorial s(s + 1)…(s + 2j).
  let inverseSum = 1 / s
  let inverseSquareSum = 1 / (s * s)
  const inverseSquare = 1 / (a * a)
  for (let j = 0; j < BERNOULLI_OVER_FACTORIAL.length; j++) {
    const term = BERNOULLI_OVER_FACTORIAL[j] * rising * power
    const slope = inverseSum - logA
    value += term
    first += slope * term
    second += (slope * slope - inverseSquareSum) * term
    const m1 = s + 2 * j + 1
    const m2 = s + 2 * j + 2
    rising *= m1 * m2
    power *= inverseSquare
    inverseSum += 1 / m1 + 1 / m2
    inverseSquareSum += 1 / (m1 * m1) + 1 / (m2 * m2)
  }
  return { value, first, second }
}

/** Sorted positive data with cached logarithms and suffix sums of the logarithms. */
interface PreparedData {
  x: Float64Array
  logs: Float64Array
  /** suffix[i] = Σ_{k ≥ i} ln x_k, length n + 1. */
  suffix: Float64Array
}

function prepare(values: ArrayLike<number>): PreparedData {
  const kept: number[] = []
  for (let i = 0; i < values.length; i++) {
    const v = values[i]
    if (v > 0 && Number.isFinite(v)) kept.push(v)
  }
  const x = Float64Array.from(kept).sort()
  const logs = x.map(Math.log)
  const suffix = new Float64Array(x.length + 1)
  for (let i = x.length - 1; i >= 0; i--) suffix[i] = suffix[i + 1] + logs[i]
  return { x, logs, suffix }
}

type Method = PowerLawFit['method']

/**
 * Exact discrete MLE for a tail with mean log `meanLog` above `xMin`, starting from the approximation `guess`: the root
 * of ℓ′(α) = −ζ′/ζ − meanLog, which falls from +∞ at α → 1 (ζ diverges) and crosses zero once (ℓ is concave). Newton
 * steps use ℓ″ = −(ζ″/ζ − (ζ′/ζ)²); a step that leaves the bracket [lo, hi] (ℓ′(lo) > 0 > ℓ′(hi)) is replaced by the
 * bracket's midpoint, so the iteration cannot diverge. Converges in a handful of steps to |Δα| < 1e-13·α.
 */
function exactDiscreteAlpha(xMin: number, meanLog: number, guess: number): number {
  const slopeAndCurvature = (alpha: number): [number, number] => {
    const z = hurwitzZetaWithDerivatives(alpha, xMin)
    const ratio = z.first / z.value
    return [-ratio - meanLog, -(z.second / z.value - ratio * ratio)]
  }
  let lo = 1 + 1e-9
  let hi = Math.max(guess * 2, guess + 2)
  // Widen the bracket until ℓ′ < 0 at its top (steep tails only).
  for (let i = 0; i < 60 && slopeAndCurvature(hi)[0] > 0; i++) {
    lo = hi
    hi *= 2
  }
  let alpha = Math.min(Math.max(guess, lo), hi)
  for (let i = 0; i < 200; i++) {
    const [slope, curvature] = slopeAndCurvature(alpha)
    if (slope === 0) return alpha
    if (slope > 0) lo = alpha
    else hi = alpha
    let next = curvature < 0 ? alpha - slope / curvature : NaN
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi)
    if (Math.abs(next - alpha) <= 1e-13 * alpha || hi - lo <= 1e-13 * alpha) return next
    alpha = next
  }
  return alpha
}

/** Standard error of the exact discrete MLE, 1/√(n·∂²ln ζ/∂α²). */
function exactDiscreteStdErr(alpha: number, xMin: number, nTail: number): number {
  const h = 1e-3 * Math.max(1, alpha - 1)
  const lower = Math.max(1 + 1e-9, alpha - h)
  const step = alpha - lower
  const f = (a: number) => Math.log(hurwitzZeta(a, xMin))
  const curvature = (f(alpha + step) - 2 * f(alpha) + f(lower)) / (step * step)
  return curvature > 0 ? 1 / Math.sqrt(nTail * curvature) : (alpha - 1) / Math.sqrt(nTail)
}

/** α̂ for the tail starting at sorted index `start` with threshold `xMin`; null when undefined (no spread). */
function tailAlpha(data: PreparedData, start: number, xMin: number, method: Method): number | null {
  const nTail = data.x.length - start
  if (nTail < 1) return null
  if (method === 'continuous') {
    const sumLog = data.suffix[start] - nTail * Math.log(xMin)
    return sumLog > 0 ? 1 + nTail / sumLog : null
  }
  if (!(xMin > 0.5)) return null
  // Every tail value equal to x_min drives the likelihood to α → ∞: no finite estimate.
  if (data.x[data.x.length - 1] <= xMin) return null
  const approximate = 1 + nTail / (data.suffix[start] - nTail * Math.log(xMin - 0.5))
  if (method === 'discrete-approximate') return approximate
  return exactDiscreteAlpha(xMin, data.suffix[start] / nTail, approximate)
}

/**
 * KS distance of the tail starting at `start` to the fitted law; stops early (returning a value > bound) as soon as it
 * exceeds `bound`, because such a candidate cannot win the x_min scan.
 */
function ksDistance(data: PreparedData, start: number, xMin: number, alpha: number, method: Method, bound: number): number {
  const { x, logs } = data
  const n = x.length - start
  let d = 0
  if (method === 'continuous') {
    const logMin = Math.log(xMin)
    const exponent = 1 - alpha
    for (let i = 0; i < n; i++) {
      const p = 1 - Math.exp(exponent * (logs[start + i] - logMin))
      const below = p - i / n
      const above = (i + 1) / n - p
      if (below > d) d = below
      if (above > d) d = above
      if (d > bound) return d
    }
    return d
  }
  const zetaMin = hurwitzZeta(alpha, xMin)
  for (let i = start; i < x.length; ) {
    let end = i + 1
    while (end < x.length && x[end] === x[i]) end++
    const empirical = (end - start) / n
    const model = 1 - hurwitzZeta(alpha, x[i] + 1) / zetaMin
    const gap = Math.abs(empirical - model)
    if (gap > d) d = gap
    if (d > bound) return d
    i = end
  }
  return d
}

interface TailFit {
  alpha: number
  xMin: number
  start: number
  ks: number
}

/** Index of the first sorted value ≥ threshold. */
function firstIndexAtLeast(x: Float64Array, threshold: number): number {
  let lo = 0
  let hi = x.length
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (x[mid] < threshold) lo = mid + 1
    else hi = mid
  }
  return lo
}

function fitFixedXMin(data: PreparedData, xMin: number, method: Method): TailFit | null {
  const start = firstIndexAtLeast(data.x, xMin)
  const alpha = tailAlpha(data, start, xMin, method)
  if (alpha === null) return null
  return { alpha, xMin, start, ks: ksDistance(data, start, xMin, alpha, method, Infinity) }
}

/** Sorted start index of every distinct value except the largest (whose tail has no spread). */
function candidateStarts(x: Float64Array): number[] {
  const starts: number[] = []
  for (let start = 0; start < x.length; ) {
    let next = start + 1
    while (next < x.length && x[next] === x[start]) next++
    if (next >= x.length) break
    starts.push(start)
    start = next
  }
  return starts
}

/**
 * Shortest tail an x_min candidate may leave when the data allow one this long. A tail of a handful of values fits
 * itself (D → 0) and would win the KS scan with a meaningless α̂ (METHODS §5.4 pitfalls: n_tail < ~50 [P]).
 */
export const MIN_SCAN_TAIL = 50

function scanXMin(data: PreparedData, method: Method): TailFit | null {
  const all = candidateStarts(data.x)
  const long = all.filter((start) => data.x.length - start >= MIN_SCAN_TAIL)
  const starts = long.length > 0 ? long : all
  let best: TailFit | null = null
  const consider = (start: number) => {
    const xMin = data.x[start]
    const alpha = tailAlpha(data, start, xMin, method)
    if (alpha === null) return
    const ks = ksDistance(data, start, xMin, alpha, method, best ? best.ks : Infinity)
    if (!best || ks < best.ks || (ks === best.ks && xMin < best.xMin)) best = { alpha, xMin, start, ks }
  }
  // A coarse pass over ~64 candidates first gives a tight bound, so most candidates of the full pass exit early;
  // the result is the same as a plain full scan.
  const stride = Math.ceil(starts.length / 64)
  if (stride > 1) for (let k = 0; k < starts.length; k += stride) consider(starts[k])
  for (const start of starts) consider(start)
  return best
}

/** Draws from the fitted power law above x_min (continuous, or discrete by inverse CCDF). */
function powerLawSampler(alpha: number, xMin: number, method: Method, random: () => number): () => number {
  const shape = -1 / (alpha - 1)
  if (method === 'continuous') return () => xMin * Math.pow(1 - random(), shape)
  const tableSize = 10_000
  // ccdf[k] = P(X ≥ x_min + k), built downwards from a direct ζ so the additions never cancel.
  const ccdf = new Float64Array(tableSize + 1)
  const zetaMin = hurwitzZeta(alpha, xMin)
  let zeta = hurwitzZeta(alpha, xMin + tableSize)
  ccdf[tableSize] = zeta / zetaMin
  for (let k = tableSize - 1; k >= 0; k--) {
    zeta += Math.pow(xMin + k, -alpha)
    ccdf[k] = zeta / zetaMin
  }
  return () => {
    const u = 1 - random()
    if (u <= ccdf[tableSize]) {
      const start = xMin + tableSize
      return Math.floor((start - 0.5) * Math.pow(u / ccdf[tableSize], shape) + 0.5)
    }
    // Largest k with ccdf[k] ≥ u: then P(X ≥ x_min + k) ≥ u > P(X ≥ x_min + k + 1).
    let lo = 0
    let hi = tableSize
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1
      if (ccdf[mid] >= u) lo = mid
      else hi = mid - 1
    }
    return xMin + lo
  }
}

/** What a bootstrap refit is compared with: the data's KS distance, and how the data were fitted. */
export interface BootstrapReference {
  ks: number
  xMin: number
  method: PowerLawFit['method']
  /** x_min was given (each set is fitted at it) rather than chosen by the KS scan. */
  fixedXMin: boolean
}

/**
 * The synthetic sets of the semi-parametric bootstrap, drawn in order from one random stream (so the same seed gives
 * the same sets, whoever refits them and in whatever order).
 */
function syntheticSets(data: PreparedData, fit: TailFit, method: Method, resamples: number, seed: number, fixedXMin: boolean): Float64Array[] {
  const random = createRandom(seed)
  const draw = powerLawSampler(fit.alpha, fit.xMin, method, random)
  const n = fixedXMin ? data.x.length - fit.start : data.x.length
  const nBelow = fixedXMin ? 0 : fit.start
  const tailProbability = (data.x.length - fit.start) / data.x.length
  const sets: Float64Array[] = []
  for (let r = 0; r < resamples; r++) {
    const synthetic = new Float64Array(n)
    for (let i = 0; i < n; i++) {
      synthetic[i] = nBelow === 0 || random() < tailProbability ? draw() : data.x[random.int(nBelow)]
    }
    sets.push(synthetic)
  }
  return sets
}

/**
 * How many bootstrap sets lie at least as far from their own best power law as the data (KS distance ≥ the data's):
 * each set is fitted by the same procedure as the data. Sets are independent, so they can be counted in parts (e.g.
 * on several threads) and the counts added.
 */
export function countAtLeastAsFar(sets: readonly Float64Array[], reference: BootstrapReference): number {
  let atLeastAsFar = 0
  for (const set of sets) {
    const resampled = prepare(set)
    const refit = reference.fixedXMin ? fitFixedXMin(resampled, reference.xMin, reference.method) : scanXMin(resampled, reference.method)
    // A synthetic set without any finite fit is as far from a power law as it gets.
    if (!refit || refit.ks >= reference.ks) atLeastAsFar++
  }
  return atLeastAsFar
}

/** A fit whose bootstrap p-value is still to be computed (see {@link preparePowerLawFit}). */
export interface PendingPowerLawFit {
  /** The synthetic sets to refit; empty when no p-value was asked for or no fit exists. */
  sets: Float64Array[]
  reference: BootstrapReference
  /** The complete fit, given {@link countAtLeastAsFar} of all the sets (ignored when there are none). */
  complete(atLeastAsFar: number): PowerLawFit
}

/**
 * Fit a power law p(x) ∝ x^(−α) for x ≥ x_min (Clauset, Shalizi & Newman 2009).
 * @param values sizes; non-finite and non-positive values are dropped.
 * @returns α̂ with its standard error, x_min, tail size, KS distance and (unless bootstrap = 0) the bootstrap p.
 *   Fewer than two distinct positive values, or a tail without spread, return null estimates and a warning.
 * @example fitPowerLaw([1, 2, 4, 8], { xMin: 1, bootstrap: 0 }).alpha // 1.961797
 */
export function fitPowerLaw(values: ArrayLike<number>, options: PowerLawFitOptions = {}): PowerLawFit {
  const pending = preparePowerLawFit(values, options)
  return pending.complete(countAtLeastAsFar(pending.sets, pending.reference))
}

/**
 * {@link fitPowerLaw} in two steps, for callers that refit the bootstrap sets elsewhere (on several threads): the fit
 * and the synthetic sets now, the p-value once their count is known. `complete(countAtLeastAsFar(sets, reference))`
 * is exactly fitPowerLaw's result.
 */
export function preparePowerLawFit(values: ArrayLike<number>, options: PowerLawFitOptions = {}): PendingPowerLawFit {
  const method: Method = options.discrete
    ? options.discreteMethod === 'approximate'
      ? 'discrete-approximate'
      : 'discrete-exact'
    : 'continuous'
  const resamples = Math.max(0, Math.floor(options.bootstrap ?? 200))
  const data = prepare(values)
  // A non-positive or non-finite x_min has no tail: treat it as "no x_min given" would hide the mistake, so no fit.
  const requestedXMin =
    options.xMin === undefined ? undefined : options.xMin > 0 && Number.isFinite(options.xMin) ? options.xMin : -1
  const fixedXMin = requestedXMin !== undefined
  const fit =
    requestedXMin === undefined ? scanXMin(data, method) : requestedXMin > 0 ? fitFixedXMin(data, requestedXMin, method) : null

  if (!fit) {
    const noFit: PowerLawFit = {
      alpha: null,
      alphaStdErr: null,
      xMin: requestedXMin !== undefined && requestedXMin > 0 ? requestedXMin : null,
      nTail: requestedXMin !== undefined && requestedXMin > 0 ? data.x.length - firstIndexAtLeast(data.x, requestedXMin) : 0,
      n: data.x.length,
      ks: null,
      pValue: null,
      bootstrap: 0,
      method,
      warning: 'No power-law fit: fewer than two distinct positive values at or above x_min.',
    }
    return { sets: [], reference: { ks: Infinity, xMin: 0, method, fixedXMin }, complete: () => noFit }
  }

  const nTail = data.x.length - fit.start
  const alphaStdErr =
    method === 'discrete-exact' ? exactDiscreteStdErr(fit.alpha, fit.xMin, nTail) : (fit.alpha - 1) / Math.sqrt(nTail)
  const sets = resamples > 0 ? syntheticSets(data, fit, method, resamples, options.seed ?? 1, fixedXMin) : []
  const complete = (atLeastAsFar: number): PowerLawFit => {
    const pValue = resamples > 0 ? atLeastAsFar / resamples : null
    const warnings: string[] = []
    if (nTail < 50) warnings.push(`Only ${nTail} values in the tail (< 50): α̂ is unreliable.`)
    if (pValue !== null && pValue <= 0.1) warnings.push(`Bootstrap p = ${pValue.toFixed(3)} ≤ 0.1: a power law is ruled out.`)
    return {
      alpha: fit.alpha,
      alphaStdErr,
      xMin: fit.xMin,
      nTail,
      n: data.x.length,
      ks: fit.ks,
      pValue,
      bootstrap: pValue === null ? 0 : resamples,
      method,
      ...(warnings.length ? { warning: warnings.join(' ') } : {}),
    }
  }
  return { sets, reference: { ks: fit.ks, xMin: fit.xMin, method, fixedXMin }, complete }
}
