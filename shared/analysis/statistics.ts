/**
 * Descriptive statistics, bootstrap confidence intervals, two-sample tests and effect sizes for comparing samples.
 *
 * Methods: quantiles by linear interpolation between order statistics (Hyndman & Fan 1996, Am. Stat. 50:361, type 7,
 * the numpy/R default [from memory]); percentile bootstrap (Efron & Tibshirani 1993, *An Introduction to the
 * Bootstrap* [from memory]); Welch's t test with Welch–Satterthwaite degrees of freedom (Welch 1947, Biometrika
 * 34:28–35 [from memory]), two-sided p from the regularised incomplete beta function I_x(a, b) by the continued
 * fraction of Numerical Recipes (Press et al., 2nd ed. 1992, §6.4 `betai`/`betacf`; Abramowitz & Stegun 26.5.8
 * [from memory]); ln Γ by the Lanczos approximation (g = 7, 9 coefficients, Godfrey's set [from memory]); the normal
 * tail from the regularised incomplete gamma Q(½, z²/2) (Numerical Recipes §6.2 `gser`/`gcf`); Mann–Whitney U
 * with mid-ranks, tie-corrected normal approximation and continuity correction (as R `wilcox.test` and scipy
 * `mannwhitneyu(method='asymptotic')`); Cohen's d with pooled SD, Hedges' g with the exact small-sample factor
 * J = Γ(ν/2)/(√(ν/2)·Γ((ν−1)/2)) (Hedges & Olkin 1985 [from memory]); rank-biserial r = 2U/(n₁n₂) − 1 (Kerby 2014,
 * Compr. Psychol. 3:11.IT.3.1 [from memory]).
 * Checked against: simple-statistics 7.12.1 (mean, median, quantile, sample SD, tTestTwoSample, wilcoxonRankSum,
 * gammaln) and R's `sleep` example (Welch t = −1.8608, df = 17.776, p = 0.07939; W = 25.5, p = 0.06933 [from memory],
 * reproduced by scipy 1.10.1).
 * Input: plain number arrays; non-finite values are ignored everywhere. Output: numbers in the units of the input
 * (p-values and effect sizes dimensionless). Statistics that are undefined for the input (empty sample, n < 2,
 * zero spread) are null, never NaN.
 */
import { createRandom } from './seededRandom'

function finiteValues(values: ArrayLike<number>): number[] {
  const out: number[] = []
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) out.push(values[i])
  return out
}

function sumOf(values: number[]): number {
  let s = 0
  for (const v of values) s += v
  return s
}

/** Sum of squared deviations from the mean (two-pass, stable). */
function sumSquaredDeviations(values: number[], centre: number): number {
  let s = 0
  for (const v of values) s += (v - centre) * (v - centre)
  return s
}

/** Arithmetic mean; null for no finite value. */
export function mean(values: ArrayLike<number>): number | null {
  const x = finiteValues(values)
  return x.length === 0 ? null : sumOf(x) / x.length
}

/** Sample standard deviation (n − 1 denominator); null for fewer than two finite values. */
export function standardDeviation(values: ArrayLike<number>): number | null {
  const x = finiteValues(values)
  if (x.length < 2) return null
  return Math.sqrt(sumSquaredDeviations(x, sumOf(x) / x.length) / (x.length - 1))
}

/** Standard error of the mean, s/√n; null for fewer than two finite values. */
export function standardError(values: ArrayLike<number>): number | null {
  const x = finiteValues(values)
  const sd = standardDeviation(x)
  return sd === null ? null : sd / Math.sqrt(x.length)
}

function quantileSorted(sorted: number[], p: number): number {
  const position = (sorted.length - 1) * p
  const lower = Math.floor(position)
  const upper = Math.min(lower + 1, sorted.length - 1)
  return sorted[lower] + (position - lower) * (sorted[upper] - sorted[lower])
}

/**
 * Quantile by linear interpolation between order statistics (type 7: position (n − 1)·p).
 * @param p probability, clamped to [0, 1].
 * @returns null for no finite value or a non-finite p.
 */
export function quantile(values: ArrayLike<number>, p: number): number | null {
  const x = finiteValues(values)
  if (x.length === 0 || !Number.isFinite(p)) return null
  x.sort((a, b) => a - b)
  return quantileSorted(x, Math.min(1, Math.max(0, p)))
}

/** Median (type-7 quantile at ½); null for no finite value. */
export function median(values: ArrayLike<number>): number | null {
  return quantile(values, 0.5)
}

/** Percentile-bootstrap confidence interval of the mean. */
export interface BootstrapInterval {
  mean: number | null
  lower: number | null
  upper: number | null
  level: number
  resamples: number
}

/**
 * Percentile bootstrap CI of the mean: resample the values with replacement, take the (1 ∓ level)/2 quantiles of
 * the resampled means. Resample the independent units (images, samples), not correlated pixels (METHODS §5.5).
 * @param options.seed PRNG seed (default 1), so the same input gives the same interval.
 * @param options.resamples number of resamples (default 2000).
 * @param options.level confidence level (default 0.95).
 * @returns nulls for no finite value; a single value gives a zero-width interval at that value.
 */
export function bootstrapMeanCI(
  values: ArrayLike<number>,
  options: { seed?: number; resamples?: number; level?: number } = {},
): BootstrapInterval {
  const x = finiteValues(values)
  const level = Math.min(0.999999, Math.max(0, options.level ?? 0.95))
  const resamples = Math.max(1, Math.floor(options.resamples ?? 2000))
  if (x.length === 0) return { mean: null, lower: null, upper: null, level, resamples }
  const random = createRandom(options.seed ?? 1)
  const n = x.length
  const means = new Float64Array(resamples)
  for (let r = 0; r < resamples; r++) {
    let s = 0
    for (let i = 0; i < n; i++) s += x[random.int(n)]
    means[r] = s / n
  }
  const sorted = Array.from(means).sort((a, b) => a - b)
  return {
    mean: sumOf(x) / n,
    lower: quantileSorted(sorted, (1 - level) / 2),
    upper: quantileSorted(sorted, (1 + level) / 2),
    level,
    resamples,
  }
}

const LANCZOS_G = 7
const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
]

/** ln Γ(x) for x > 0 (Lanczos, relative error ≈ 1e-15); reflection for 0 < x < ½. */
export function lnGamma(x: number): number {
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - lnGamma(1 - x)
  const z = x - 1
  let a = LANCZOS[0]
  const t = z + LANCZOS_G + 0.5
  for (let i = 1; i < LANCZOS.length; i++) a += LANCZOS[i] / (z + i)
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a)
}

const EPS = 1e-15
const FPMIN = 1e-300
const MAX_ITERATIONS = 10_000

/** Continued fraction for I_x(a, b) by the modified Lentz method (Numerical Recipes `betacf`). */
function betaContinuedFraction(a: number, b: number, x: number): number {
  const qab = a + b
  const qap = a + 1
  const qam = a - 1
  let c = 1
  let d = 1 - (qab * x) / qap
  if (Math.abs(d) < FPMIN) d = FPMIN
  d = 1 / d
  let h = d
  for (let m = 1; m <= MAX_ITERATIONS; m++) {
    const m2 = 2 * m
    let aa = (m * (b - m) * x) / ((qam + m2) * (a + m2))
    d = 1 + aa * d
    if (Math.abs(d) < FPMIN) d = FPMIN
    c = 1 + aa / c
    if (Math.abs(c) < FPMIN) c = FPMIN
    d = 1 / d
    h *= d * c
    aa = (-(a + m) * (qab + m) * x) / ((a + m2) * (qap + m2))
    d = 1 + aa * d
    if (Math.abs(d) < FPMIN) d = FPMIN
    c = 1 + aa / c
    if (Math.abs(c) < FPMIN) c = FPMIN
    d = 1 / d
    const step = d * c
    h *= step
    if (Math.abs(step - 1) < EPS) break
  }
  return h
}

/** Regularised incomplete beta function I_x(a, b), a, b > 0, x clamped to [0, 1]. */
export function regularizedIncompleteBeta(x: number, a: number, b: number): number {
  if (x <= 0) return 0
  if (x >= 1) return 1
  const front = Math.exp(lnGamma(a + b) - lnGamma(a) - lnGamma(b) + a * Math.log(x) + b * Math.log(1 - x))
  // The continued fraction converges fast for x < (a+1)/(a+b+2); use the symmetry I_x(a,b) = 1 − I_{1−x}(b,a) otherwise.
  if (x < (a + 1) / (a + b + 2)) return (front * betaContinuedFraction(a, b, x)) / a
  return 1 - (front * betaContinuedFraction(b, a, 1 - x)) / b
}

/** Regularised upper incomplete gamma Q(a, x) (Numerical Recipes `gammq`: series below a + 1, fraction above). */
export function regularizedUpperGamma(a: number, x: number): number {
  if (x <= 0) return 1
  const logPrefactor = -x + a * Math.log(x) - lnGamma(a)
  if (x < a + 1) {
    let ap = a
    let term = 1 / a
    let sum = term
    for (let i = 0; i < MAX_ITERATIONS; i++) {
      ap += 1
      term *= x / ap
      sum += term
      if (Math.abs(term) < Math.abs(sum) * EPS) break
    }
    return 1 - sum * Math.exp(logPrefactor)
  }
  let b = x + 1 - a
  let c = 1 / FPMIN
  let d = 1 / b
  let h = d
  for (let i = 1; i <= MAX_ITERATIONS; i++) {
    const an = -i * (i - a)
    b += 2
    d = an * d + b
    if (Math.abs(d) < FPMIN) d = FPMIN
    c = b + an / c
    if (Math.abs(c) < FPMIN) c = FPMIN
    d = 1 / d
    const step = d * c
    h *= step
    if (Math.abs(step - 1) < EPS) break
  }
  return Math.exp(logPrefactor) * h
}

/** Standard normal CDF Φ(z), accurate in both tails (Φ(z) = ½·Q(½, z²/2) for z < 0). */
export function normalCdf(z: number): number {
  if (Number.isNaN(z)) return 0.5
  const tail = 0.5 * regularizedUpperGamma(0.5, (z * z) / 2)
  return z < 0 ? tail : 1 - tail
}

/** Two-sided p-value of Student's t with `df` degrees of freedom: I_{df/(df+t²)}(df/2, ½). */
export function studentTTwoSidedP(t: number, df: number): number {
  if (!Number.isFinite(t)) return 0
  return regularizedIncompleteBeta(df / (df + t * t), df / 2, 0.5)
}

/** Result of {@link welchTTest}; null fields where the test is undefined. */
export interface WelchTTestResult {
  /** t = (mean a − mean b)/√(s_a²/n_a + s_b²/n_b). */
  t: number | null
  /** Welch–Satterthwaite degrees of freedom. */
  df: number | null
  /** Two-sided p-value. */
  p: number | null
  /** mean a − mean b. */
  meanDifference: number | null
}

/**
 * Welch's unequal-variance two-sample t test (two-sided).
 * @returns nulls when either sample has fewer than two finite values; t, df and p are null when both samples have
 *   zero variance (the statistic is 0/0 or ±∞), meanDifference is still given.
 * @example welchTTest(sleepGroup1, sleepGroup2) // t −1.8608, df 17.776, p 0.07939 (R sleep data)
 */
export function welchTTest(a: ArrayLike<number>, b: ArrayLike<number>): WelchTTestResult {
  const x = finiteValues(a)
  const y = finiteValues(b)
  if (x.length < 2 || y.length < 2) {
    return { t: null, df: null, p: null, meanDifference: x.length && y.length ? sumOf(x) / x.length - sumOf(y) / y.length : null }
  }
  const mx = sumOf(x) / x.length
  const my = sumOf(y) / y.length
  const vx = sumSquaredDeviations(x, mx) / (x.length - 1) / x.length
  const vy = sumSquaredDeviations(y, my) / (y.length - 1) / y.length
  const se2 = vx + vy
  if (!(se2 > 0)) return { t: null, df: null, p: null, meanDifference: mx - my }
  const t = (mx - my) / Math.sqrt(se2)
  const df = (se2 * se2) / ((vx * vx) / (x.length - 1) + (vy * vy) / (y.length - 1))
  return { t, df, p: studentTTwoSidedP(t, df), meanDifference: mx - my }
}

/** Result of {@link mannWhitneyU}. */
export interface MannWhitneyResult {
  /** U of sample a: number of pairs with a > b, ties counted ½ (R's W). */
  u: number | null
  /** U of sample b = n_a·n_b − U_a. */
  uB: number | null
  /** Normal deviate after tie and continuity correction, signed like U_a − n_a·n_b/2. */
  z: number | null
  /** Two-sided p-value (normal approximation). */
  p: number | null
}

/** Mid-ranks of the pooled samples (1-based) and the tie term Σ(t³ − t). */
function pooledRanks(x: number[], y: number[]): { rankSumX: number; tieTerm: number } {
  const n = x.length + y.length
  const values = new Float64Array(n)
  const fromX = new Uint8Array(n)
  for (let i = 0; i < x.length; i++) {
    values[i] = x[i]
    fromX[i] = 1
  }
  for (let j = 0; j < y.length; j++) values[x.length + j] = y[j]
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => values[i] - values[j])
  let rankSumX = 0
  let tieTerm = 0
  for (let start = 0; start < n; ) {
    let end = start + 1
    while (end < n && values[order[end]] === values[order[start]]) end++
    const ties = end - start
    const midRank = (start + 1 + end) / 2
    for (let k = start; k < end; k++) if (fromX[order[k]]) rankSumX += midRank
    tieTerm += ties * ties * ties - ties
    start = end
  }
  return { rankSumX, tieTerm }
}

/**
 * Mann–Whitney U (Wilcoxon rank-sum) test, two-sided, normal approximation with tie and continuity correction.
 * The normal approximation is adequate for n_a, n_b ≳ 8; for smaller samples treat p as indicative.
 * @returns nulls when either sample is empty; when every value is tied, z = 0 and p = 1 (every permutation gives the
 *   same U).
 */
export function mannWhitneyU(a: ArrayLike<number>, b: ArrayLike<number>): MannWhitneyResult {
  const x = finiteValues(a)
  const y = finiteValues(b)
  const nx = x.length
  const ny = y.length
  if (nx === 0 || ny === 0) return { u: null, uB: null, z: null, p: null }
  const { rankSumX, tieTerm } = pooledRanks(x, y)
  const n = nx + ny
  const u = rankSumX - (nx * (nx + 1)) / 2
  const centre = (nx * ny) / 2
  const variance = ((nx * ny) / 12) * (n + 1 - tieTerm / (n * (n - 1)))
  if (!(variance > 0)) return { u, uB: nx * ny - u, z: 0, p: 1 }
  const excess = Math.max(0, Math.abs(u - centre) - 0.5)
  const z = (Math.sign(u - centre) * excess) / Math.sqrt(variance)
  return { u, uB: nx * ny - u, z, p: Math.min(1, regularizedUpperGamma(0.5, (z * z) / 2)) }
}

/**
 * Cohen's d = (mean a − mean b)/s_pooled, s_pooled² = ((n_a−1)s_a² + (n_b−1)s_b²)/(n_a+n_b−2).
 * @returns null when n_a + n_b < 3, either sample is empty, or the pooled SD is 0.
 */
export function cohensD(a: ArrayLike<number>, b: ArrayLike<number>): number | null {
  const x = finiteValues(a)
  const y = finiteValues(b)
  const df = x.length + y.length - 2
  if (x.length === 0 || y.length === 0 || df < 1) return null
  const mx = sumOf(x) / x.length
  const my = sumOf(y) / y.length
  const pooled = Math.sqrt((sumSquaredDeviations(x, mx) + sumSquaredDeviations(y, my)) / df)
  return pooled > 0 ? (mx - my) / pooled : null
}

/**
 * Hedges' g = J(ν)·d with the exact bias factor J(ν) = Γ(ν/2)/(√(ν/2)·Γ((ν−1)/2)), ν = n_a + n_b − 2.
 * @returns null where Cohen's d is null or ν < 2.
 */
export function hedgesG(a: ArrayLike<number>, b: ArrayLike<number>): number | null {
  const d = cohensD(a, b)
  const df = finiteValues(a).length + finiteValues(b).length - 2
  if (d === null || df < 2) return null
  const j = Math.exp(lnGamma(df / 2) - lnGamma((df - 1) / 2)) / Math.sqrt(df / 2)
  return j * d
}

/**
 * Rank-biserial correlation r = 2·U_a/(n_a·n_b) − 1 ∈ [−1, 1]; positive when values of a tend to exceed those of b.
 * @returns null when either sample is empty.
 */
export function rankBiserial(a: ArrayLike<number>, b: ArrayLike<number>): number | null {
  const { u } = mannWhitneyU(a, b)
  if (u === null) return null
  return (2 * u) / (finiteValues(a).length * finiteValues(b).length) - 1
}
