import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics'
import { createRandom } from '@shared/analysis/seededRandom'
import {
  bootstrapMeanCI,
  cohensD,
  hedgesG,
  lnGamma,
  mannWhitneyU,
  mean,
  median,
  normalCdf,
  quantile,
  rankBiserial,
  regularizedIncompleteBeta,
  standardDeviation,
  standardError,
  studentTTwoSidedP,
  welchTTest,
} from '@shared/analysis/statistics'

// R's `sleep` data (Cushny & Peebles 1905 as analysed by Student 1908): extra hours of sleep, drug 1 vs drug 2.
const sleep1 = [0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0]
const sleep2 = [1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4]

describe('descriptive statistics', () => {
  // Fixed seed 11 for a reproducible sample compared with simple-statistics 7.12.1.
  const random = createRandom(11)
  const sample = Array.from({ length: 37 }, () => random.normal(5, 2))

  it('When a sample is summarised, then mean, SD, median and quantiles match simple-statistics 7.12.1', () => {
    expect(mean(sample)).toBeCloseTo(ss.mean(sample), 12)
    expect(standardDeviation(sample)).toBeCloseTo(ss.sampleStandardDeviation(sample), 12)
    expect(standardError(sample)).toBeCloseTo(ss.sampleStandardDeviation(sample) / Math.sqrt(37), 12)
    expect(median(sample)).toBeCloseTo(ss.median(sample), 12)
    // simple-statistics 7.12.1 quantileSorted uses position (n − 1)·p with linear interpolation (type 7), as we do.
    for (const p of [0, 0.025, 0.1, 0.33, 0.9, 0.975, 1]) expect(quantile(sample, p)).toBeCloseTo(ss.quantile(sample, p), 12)
  })

  it('When the values are tiny hand examples, then type-7 quantiles are the hand-computed ones', () => {
    // Hyndman & Fan 1996 type 7 [D]: [1, 2, 3, 4], p = 0.25 → position 0.75 → 1.75.
    expect(quantile([4, 1, 3, 2], 0.25)).toBe(1.75)
    expect(median([3, 1, 2])).toBe(2)
    expect(median([4, 1, 3, 2])).toBe(2.5)
  })

  it('When inputs are empty, single or non-finite, then null (not NaN) is returned where undefined', () => {
    expect(mean([])).toBeNull()
    expect(median([])).toBeNull()
    expect(quantile([], 0.5)).toBeNull()
    expect(standardDeviation([1])).toBeNull()
    expect(standardError([1])).toBeNull()
    expect(mean([1, Number.NaN, 3])).toBe(2)
    expect(standardDeviation([2, 2, 2])).toBe(0)
  })
})

describe('special functions', () => {
  it('When ln Γ is evaluated, then it matches factorials, √π and simple-statistics gammaln', () => {
    // Γ(n) = (n − 1)!, Γ(½) = √π [D].
    expect(lnGamma(5)).toBeCloseTo(Math.log(24), 13)
    expect(lnGamma(10)).toBeCloseTo(Math.log(362880), 12)
    expect(lnGamma(0.5)).toBeCloseTo(Math.log(Math.sqrt(Math.PI)), 13)
    // scipy 1.10.1 / Python math.lgamma(10.3) = 13.48203678613836 [D].
    expect(lnGamma(10.3)).toBeCloseTo(13.48203678613836, 12)
    expect(lnGamma(7.7)).toBeCloseTo(ss.gammaln(7.7), 9)
  })

  it('When I_x(a, b) has a closed form, then the continued fraction reproduces it', () => {
    // I_x(1, b) = 1 − (1 − x)^b and I_x(a, 1) = x^a [D]; symmetry I_x(a, b) = 1 − I_{1−x}(b, a).
    expect(regularizedIncompleteBeta(0.3, 1, 4)).toBeCloseTo(1 - 0.7 ** 4, 14)
    expect(regularizedIncompleteBeta(0.6, 3, 1)).toBeCloseTo(0.216, 14)
    expect(regularizedIncompleteBeta(0.37, 2.5, 7.1) + regularizedIncompleteBeta(0.63, 7.1, 2.5)).toBeCloseTo(1, 14)
    expect(regularizedIncompleteBeta(0, 2, 3)).toBe(0)
    expect(regularizedIncompleteBeta(1, 2, 3)).toBe(1)
  })

  it('When Φ and Student p are evaluated, then textbook values come out', () => {
    // Standard normal table [R, standard]: Φ(1.96) = 0.9750021; Φ(−3) = 0.0013499 [D: ½·erfc(3/√2)].
    expect(normalCdf(1.96)).toBeCloseTo(0.9750021, 7)
    expect(normalCdf(-3)).toBeCloseTo(0.0013498980, 10)
    expect(normalCdf(0)).toBe(0.5)
    // simple-statistics 7.12.1 errorFunction (Numerical Recipes erfc, ~1e-7): Φ(z) = ½(1 + erf(z/√2)).
    expect(normalCdf(0.7)).toBeCloseTo(0.5 * (1 + ss.errorFunction(0.7 / Math.SQRT2)), 6)
    // t distribution [D]: df = 1 is Cauchy, two-sided p(1) = ½; df = 2: p = 1 − t/√(t² + 2).
    expect(studentTTwoSidedP(1, 1)).toBeCloseTo(0.5, 13)
    expect(studentTTwoSidedP(2.5, 2)).toBeCloseTo(1 - 2.5 / Math.sqrt(8.25), 13)
  })
})

describe('welchTTest', () => {
  it("When R's sleep data are compared, then t = −1.8608, df = 17.776, p = 0.07939", () => {
    // R `t.test(extra ~ group, data = sleep)` (Welch) prints t = -1.8608, df = 17.776, p-value = 0.07939 [M];
    // scipy 1.10.1 ttest_ind(equal_var=False) gives t = -1.8608134674868526, p = 0.07939414018735823 [D].
    const result = welchTTest(sleep1, sleep2)
    expect(result.t).toBeCloseTo(-1.8608134674868526, 10)
    expect(result.df).toBeCloseTo(17.776473516178495, 10)
    expect(result.p).toBeCloseTo(0.07939414018735823, 10)
    expect(result.meanDifference).toBeCloseTo(0.75 - 2.33, 12)
  })

  it('When sample sizes are equal, then t equals the pooled t of simple-statistics tTestTwoSample', () => {
    // With n_a = n_b the Welch and pooled statistics coincide [D].
    expect(welchTTest(sleep1, sleep2).t).toBeCloseTo(ss.tTestTwoSample(sleep1, sleep2, 0)!, 12)
  })

  it('When a sample has < 2 values or both have zero variance, then t, df and p are null', () => {
    expect(welchTTest([1], [1, 2, 3])).toMatchObject({ t: null, df: null, p: null, meanDifference: -1 })
    expect(welchTTest([], [])).toMatchObject({ t: null, p: null, meanDifference: null })
    expect(welchTTest([2, 2, 2], [5, 5])).toMatchObject({ t: null, p: null, meanDifference: -3 })
  })
})

describe('mannWhitneyU', () => {
  it("When R's sleep data are compared, then W = 25.5 and p = 0.06933 (ties, continuity correction)", () => {
    // R `wilcox.test(extra ~ group, data = sleep)` prints W = 25.5, p-value = 0.06933 [M]; scipy 1.10.1
    // mannwhitneyu(use_continuity=True, method='asymptotic') gives 25.5, 0.06932757543362658 [D].
    const result = mannWhitneyU(sleep1, sleep2)
    expect(result.u).toBe(25.5)
    expect(result.uB).toBe(74.5)
    expect(result.p).toBeCloseTo(0.06932757543362658, 10)
    expect(result.z!).toBeLessThan(0)
  })

  it('When U is compared with simple-statistics wilcoxonRankSum, then U = R₁ − n₁(n₁+1)/2', () => {
    // simple-statistics 7.12.1 returns the rank sum of the first sample with mid-ranks for ties.
    const random = createRandom(5) // fixed seed 5
    const a = Array.from({ length: 12 }, () => Math.round(random.normal(3, 2)))
    const b = Array.from({ length: 9 }, () => Math.round(random.normal(4, 2)))
    expect(mannWhitneyU(a, b).u).toBeCloseTo(ss.wilcoxonRankSum(a, b) - (12 * 13) / 2, 12)
  })

  it('When every value is tied or a sample is empty, then p = 1 or nulls', () => {
    expect(mannWhitneyU([1, 1], [1, 1, 1])).toMatchObject({ u: 3, z: 0, p: 1 })
    expect(mannWhitneyU([], [1])).toMatchObject({ u: null, p: null })
  })
})

describe('effect sizes', () => {
  it('When two samples differ by one pooled SD, then d = 1 and g is slightly smaller', () => {
    // a = [1, 2, 3], b = [0, 1, 2]: pooled SD 1, difference 1 → d = 1 [D]; J(4) = Γ(2)/(√2·Γ(1.5)) = 0.797885 [D].
    expect(cohensD([1, 2, 3], [0, 1, 2])).toBeCloseTo(1, 14)
    expect(hedgesG([1, 2, 3], [0, 1, 2])).toBeCloseTo(1 / (Math.SQRT2 * (Math.sqrt(Math.PI) / 2)), 12)
    // Large-ν approximation J ≈ 1 − 3/(4ν − 1) (Hedges 1981 [M]) agrees to < 1e-3 at ν = 38.
    const g = hedgesG(sleep1.concat(sleep1), sleep2.concat(sleep2))!
    expect(g / cohensD(sleep1.concat(sleep1), sleep2.concat(sleep2))!).toBeCloseTo(1 - 3 / (4 * 38 - 1), 3)
  })

  it('When all values of a exceed those of b, then the rank-biserial r is 1 (−1 reversed)', () => {
    // r = 2U/(n_a n_b) − 1 (Kerby 2014 [M]); with no overlap U_a = n_a n_b.
    expect(rankBiserial([5, 6, 7], [1, 2])).toBe(1)
    expect(rankBiserial([1, 2], [5, 6, 7])).toBe(-1)
    expect(rankBiserial(sleep1, sleep2)).toBeCloseTo((2 * 25.5) / 100 - 1, 14)
  })

  it('When the pooled SD is zero or a sample is empty, then effect sizes are null', () => {
    expect(cohensD([1, 1], [1, 1])).toBeNull()
    expect(hedgesG([1], [2])).toBeNull()
    expect(rankBiserial([], [1])).toBeNull()
  })
})

describe('bootstrapMeanCI', () => {
  it('When the same seed is used, then the interval is reproducible and brackets the mean', () => {
    const first = bootstrapMeanCI(sleep2, { seed: 9, resamples: 2000 }) // fixed seed 9
    const second = bootstrapMeanCI(sleep2, { seed: 9, resamples: 2000 })
    expect(second).toEqual(first)
    expect(first.mean).toBeCloseTo(2.33, 12)
    expect(first.lower!).toBeLessThan(2.33)
    expect(first.upper!).toBeGreaterThan(2.33)
  })

  it('When the sample is normal, then the 95 % interval is close to mean ± 1.96·SE', () => {
    // Percentile bootstrap of a mean ≈ normal interval for n = 400 [D]; fixed seeds 21 and 22.
    const random = createRandom(21)
    const values = Array.from({ length: 400 }, () => random.normal(10, 3))
    const se = standardError(values)!
    const ci = bootstrapMeanCI(values, { seed: 22, resamples: 4000 })
    expect((ci.upper! - ci.lower!) / (2 * 1.96 * se)).toBeGreaterThan(0.9)
    expect((ci.upper! - ci.lower!) / (2 * 1.96 * se)).toBeLessThan(1.1)
  })

  it('When there is no value or one value, then nulls or a zero-width interval result', () => {
    expect(bootstrapMeanCI([])).toMatchObject({ mean: null, lower: null, upper: null })
    expect(bootstrapMeanCI([4.2], { resamples: 10 })).toMatchObject({ mean: 4.2, lower: 4.2, upper: 4.2 })
  })
})
