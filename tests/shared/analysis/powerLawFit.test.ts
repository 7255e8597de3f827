import { describe, expect, it } from 'vitest'
import { fitPowerLaw, hurwitzZeta, hurwitzZetaWithDerivatives, MIN_SCAN_TAIL } from '@shared/analysis/powerLawFit'
import { createRandom } from '@shared/analysis/seededRandom'

/** Continuous power law above xMin by the inverse CDF x = xMin·(1 − u)^(−1/(α−1)) (METHODS §5.4 [D]). */
function continuousPowerLaw(n: number, alpha: number, xMin: number, random: () => number): number[] {
  return Array.from({ length: n }, () => xMin * Math.pow(1 - random(), -1 / (alpha - 1)))
}

/** Exact discrete power law above xMin: walk the CCDF P(X ≥ x) = ζ(α, x)/ζ(α, xMin) until it drops below u. */
function discretePowerLaw(n: number, alpha: number, xMin: number, random: () => number): number[] {
  const z = hurwitzZeta(alpha, xMin)
  return Array.from({ length: n }, () => {
    const u = 1 - random()
    let x = xMin
    let ccdfNext = 1 - Math.pow(x, -alpha) / z
    while (ccdfNext >= u) {
      x++
      ccdfNext -= Math.pow(x, -alpha) / z
    }
    return x
  })
}

describe('hurwitzZeta', () => {
  it('When s and q have closed forms, then ζ(2) = π²/6, ζ(4) = π⁴/90, ζ(3) = Apéry and ζ(2, 2) = π²/6 − 1', () => {
    // Euler's values and Apéry's constant [R, standard]; the shift identity ζ(s, q) = ζ(s, q + 1) + q^(−s) [D].
    expect(hurwitzZeta(2, 1)).toBeCloseTo(Math.PI ** 2 / 6, 14)
    expect(hurwitzZeta(4, 1)).toBeCloseTo(Math.PI ** 4 / 90, 14)
    expect(hurwitzZeta(3, 1)).toBeCloseTo(1.2020569031595942, 14)
    expect(hurwitzZeta(2, 2)).toBeCloseTo(Math.PI ** 2 / 6 - 1, 14)
    expect(hurwitzZeta(2.5, 3) - hurwitzZeta(2.5, 4)).toBeCloseTo(3 ** -2.5, 15)
  })

  it('When compared with scipy 1.10.1 special.zeta, then non-integer arguments agree to 1e-13', () => {
    // scipy.special.zeta(2.5, 3.7) = 0.11475814214741724, zeta(1.3, 0.4) = 6.674437097089328 [D].
    expect(hurwitzZeta(2.5, 3.7) / 0.11475814214741724 - 1).toBeLessThan(1e-13)
    expect(Math.abs(hurwitzZeta(1.3, 0.4) / 6.674437097089328 - 1)).toBeLessThan(1e-13)
  })

  it('When ζ is differentiated in s, then ζ′(2) is the known constant and the shift identity holds for both derivatives', () => {
    // ζ′(2) = (π²/6)(γ + ln 2π − 12 ln A), Euler's γ = 0.5772156649015329 and the Glaisher–Kinkelin constant
    // A = 1.2824271291006226 [from memory]; it is −0.93754825431584… .
    const gamma = 0.5772156649015329
    const glaisher = 1.2824271291006226
    const zetaPrime2 = (Math.PI ** 2 / 6) * (gamma + Math.log(2 * Math.PI) - 12 * Math.log(glaisher))
    expect(hurwitzZetaWithDerivatives(2, 1).first).toBeCloseTo(zetaPrime2, 13)
    expect(hurwitzZetaWithDerivatives(2, 1).first).toBeCloseTo(-0.9375482543158437, 13)
    for (const [s, q] of [[2.5, 3], [1.3, 0.4], [6, 14.5], [1.05, 9]]) {
      // [D]: ζ(s, q) − ζ(s, q + 1) = q^(−s), so its s-derivatives are −ln q·q^(−s) and (ln q)²·q^(−s) exactly.
      const here = hurwitzZetaWithDerivatives(s, q)
      const next = hurwitzZetaWithDerivatives(s, q + 1)
      expect(here.value).toBe(hurwitzZeta(s, q))
      expect((here.first - next.first) / (-Math.log(q) * q ** -s)).toBeCloseTo(1, 11)
      expect((here.second - next.second) / (Math.log(q) ** 2 * q ** -s)).toBeCloseTo(1, 11)
      // And both agree with fourth-order central differences of ζ itself (step 1e-3; near the pole at s = 1 those are
      // only good to a few digits) [D].
      const h = 1e-3
      const f = (x: number) => hurwitzZeta(x, q)
      const slope = (-f(s + 2 * h) + 8 * f(s + h) - 8 * f(s - h) + f(s - 2 * h)) / (12 * h)
      const curvature = (-f(s + 2 * h) + 16 * f(s + h) - 30 * f(s) + 16 * f(s - h) - f(s - 2 * h)) / (12 * h * h)
      expect(here.first / slope).toBeCloseTo(1, 5)
      expect(here.second / curvature).toBeCloseTo(1, 4)
    }
  })

  it('When ζ comes with its derivatives, then its value is hurwitzZeta\'s to the last bit, for any s and q', () => {
    // [D]: both sum the same terms in the same order; the MLE and the KS distances must see one ζ.
    const random = createRandom(26)
    for (let i = 0; i < 5000; i++) {
      const s = 1 + 1e-6 + 9 * random()
      const q = random() < 0.5 ? 0.05 + 30 * random() : Math.floor(1 + 2000 * random())
      expect(hurwitzZetaWithDerivatives(s, q).value).toBe(hurwitzZeta(s, q))
    }
  })

  it('When s ≤ 1 or q ≤ 0, then the divergent series returns Infinity', () => {
    expect(hurwitzZeta(1, 1)).toBe(Infinity)
    expect(hurwitzZeta(2, 0)).toBe(Infinity)
  })
})

describe('fitPowerLaw, continuous', () => {
  it('When x = [1, 2, 4, 8] with x_min = 1, then α̂ = 1.961797 and SE = 0.480898', () => {
    // METHODS.md check #37 [D]: α̂ = 1 + 4/(6 ln 2), SE = (α̂ − 1)/√4 (CSN 2009 eq. 3.1 and 3.2 [R]).
    const fit = fitPowerLaw([1, 2, 4, 8], { xMin: 1, bootstrap: 0 })
    expect(fit.alpha).toBeCloseTo(1 + 4 / (6 * Math.LN2), 12)
    expect(fit.alpha).toBeCloseTo(1.961797, 6)
    expect(fit.alphaStdErr).toBeCloseTo(0.480898, 6)
    expect(fit.nTail).toBe(4)
    expect(fit.pValue).toBeNull()
    expect(fit.warning).toMatch(/< 50/)
  })

  it('When the KS distance of that fit is computed by hand, then D = 0.25 (first ECDF step)', () => {
    // [D]: P(x) = 1 − x^(1−α̂); the supremum is at x = 1, where the ECDF jumps from 0 to 1/4 and P(1) = 0.
    expect(fitPowerLaw([1, 2, 4, 8], { xMin: 1, bootstrap: 0 }).ks).toBeCloseTo(0.25, 12)
  })

  it('When 10⁴ values come from α = 2.5, x_min = 1, then α̂ is within 0.045 (3 SE) of 2.5', () => {
    // METHODS.md check #38 [D]: inverse CDF x = (1 − u)^(−1/1.5); fixed seed 38.
    const values = continuousPowerLaw(10_000, 2.5, 1, createRandom(38))
    const fit = fitPowerLaw(values, { xMin: 1, bootstrap: 0 })
    expect(Math.abs(fit.alpha! - 2.5)).toBeLessThan(0.045)
    expect(fit.alphaStdErr).toBeCloseTo((fit.alpha! - 1) / 100, 12)
    expect(fit.warning).toBeUndefined()
  })

  it('When a uniform body sits below a power-law tail, then the KS scan finds x_min ≈ 10 and α ≈ 2.5', () => {
    // METHODS.md check #39 [D]: 20 sets of {3000 U[1,10)} ∪ {3000 power law, x_min 10, α 2.5}; medians of x̂_min in
    // [8, 14] and of α̂ in [2.45, 2.58] (reference run: 10.5 and 2.513). Full check, 20 sets (≈ 2–3 s); seeds 100…119.
    const xMins: number[] = []
    const alphas: number[] = []
    for (let set = 0; set < 20; set++) {
      const random = createRandom(100 + set)
      const body = Array.from({ length: 3000 }, () => 1 + 9 * random())
      const fit = fitPowerLaw(body.concat(continuousPowerLaw(3000, 2.5, 10, random)), { bootstrap: 0 })
      xMins.push(fit.xMin!)
      alphas.push(fit.alpha!)
    }
    const medianOf = (v: number[]) => {
      const s = [...v].sort((a, b) => a - b)
      return (s[9] + s[10]) / 2
    }
    expect(medianOf(xMins)).toBeGreaterThanOrEqual(8)
    expect(medianOf(xMins)).toBeLessThanOrEqual(14)
    expect(medianOf(alphas)).toBeGreaterThanOrEqual(2.45)
    expect(medianOf(alphas)).toBeLessThanOrEqual(2.58)
  })
})

describe('fitPowerLaw, discrete', () => {
  it('When the exact discrete MLE is compared with scipy 1.10.1, then α̂ and SE agree', () => {
    // [D]: scipy minimize_scalar of n·ln ζ(α, 1) + α·Σ ln x (scipy.special.zeta) → α̂ = 1.5958001479,
    // SE = 1/√(n·∂²ln ζ/∂α²) = 0.1842288344; for x_min = 2: 1.8352230397 and 0.2983808870.
    const x = [1, 1, 1, 2, 2, 3, 4, 5, 8, 13, 21]
    const fit1 = fitPowerLaw(x, { discrete: true, xMin: 1, bootstrap: 0 })
    expect(fit1.method).toBe('discrete-exact')
    expect(fit1.alpha).toBeCloseTo(1.5958001479, 7)
    expect(fit1.alphaStdErr).toBeCloseTo(0.1842288344, 6)
    const fit2 = fitPowerLaw(x, { discrete: true, xMin: 2, bootstrap: 0 })
    expect(fit2.alpha).toBeCloseTo(1.8352230397, 7)
    expect(fit2.alphaStdErr).toBeCloseTo(0.298380887, 6)
  })

  it('When the exact discrete MLE returns α̂, then the likelihood equation ζ′(α̂, x_min)/ζ(α̂, x_min) = −mean ln x holds', () => {
    // The first-order condition of ℓ(α) = −n ln ζ(α, x_min) − α Σ ln x [D]; a search on ℓ itself only finds the flat
    // maximum to about 1e-8 in α, which leaves a residual near 1e-8·ℓ″.
    const random = createRandom(12)
    const sizes = discretePowerLaw(400, 2.2, 3, random).concat([1, 2, 2])
    for (const xMin of [1, 3, 7]) {
      const fit = fitPowerLaw(sizes, { discrete: true, xMin, bootstrap: 0 })
      const tail = sizes.filter((v) => v >= xMin)
      const meanLog = tail.reduce((sum, v) => sum + Math.log(v), 0) / tail.length
      const z = hurwitzZetaWithDerivatives(fit.alpha as number, xMin)
      expect(Math.abs(z.first / z.value + meanLog)).toBeLessThan(1e-12)
    }
  })

  it('When integer sizes follow an exact discrete power law from x_min = 1, then the exact MLE recovers α', () => {
    // Synthetic [D]: α = 2.5, x_min = 1, n = 5000 drawn by the exact inverse CCDF; fixed seed 7.
    const values = discretePowerLaw(5000, 2.5, 1, createRandom(7))
    const exact = fitPowerLaw(values, { discrete: true, xMin: 1, bootstrap: 0 })
    expect(Math.abs(exact.alpha! - 2.5)).toBeLessThan(3 * exact.alphaStdErr!)
    // The (x_min − ½) approximation is biased at x_min = 1 (CSN: adequate only for x_min ≳ 6 [M]).
    const approximate = fitPowerLaw(values, { discrete: true, discreteMethod: 'approximate', xMin: 1, bootstrap: 0 })
    expect(Math.abs(approximate.alpha! - exact.alpha!)).toBeGreaterThan(0.05)
  })

  it('When x_min = 10, then the approximate and exact discrete estimates agree within their SE', () => {
    // CSN 2009 §3 [R, via public implementations]: the approximation is adequate for larger x_min; fixed seed 8.
    const values = discretePowerLaw(3000, 2.2, 10, createRandom(8))
    const exact = fitPowerLaw(values, { discrete: true, xMin: 10, bootstrap: 0 })
    const approximate = fitPowerLaw(values, { discrete: true, discreteMethod: 'approximate', xMin: 10, bootstrap: 0 })
    expect(Math.abs(exact.alpha! - 2.2)).toBeLessThan(3 * exact.alphaStdErr!)
    expect(Math.abs(approximate.alpha! - exact.alpha!)).toBeLessThan(exact.alphaStdErr!)
  })

  it('When small-size noise sits below a discrete tail, then the scan moves x_min above it', () => {
    // Synthetic [D]: 2000 uniform integers 1…5 plus 2000 exact power-law sizes from x_min 6 (α 2.3); fixed seed 9.
    const random = createRandom(9)
    const noise = Array.from({ length: 2000 }, () => 1 + random.int(5))
    const fit = fitPowerLaw(noise.concat(discretePowerLaw(2000, 2.3, 6, random)), { discrete: true, bootstrap: 0 })
    expect(fit.xMin).toBeGreaterThanOrEqual(6)
    expect(fit.xMin).toBeLessThanOrEqual(12)
    expect(Math.abs(fit.alpha! - 2.3)).toBeLessThan(3 * fit.alphaStdErr! + 0.05)
  })
})

describe('fitPowerLaw, bootstrap goodness of fit', () => {
  it('When data are a true power law, then p is large; the same seed gives the same p', () => {
    // CSN 2009 §4.1 semi-parametric bootstrap [R]; fixed seeds 40 (data) and 3 (bootstrap); 100 resamples keep the
    // test under a second (p is then known to about ±0.05, enough to separate ≫ 0.1 from ≈ 0).
    const values = continuousPowerLaw(400, 2.5, 1, createRandom(40))
    const fit = fitPowerLaw(values, { bootstrap: 100, seed: 3 })
    expect(fit.bootstrap).toBe(100)
    expect(fit.pValue!).toBeGreaterThan(0.1)
    expect(fitPowerLaw(values, { bootstrap: 100, seed: 3 }).pValue).toBe(fit.pValue)
  })

  it('When data are exponential above a fixed x_min, then p ≈ 0 and the power law is ruled out', () => {
    // Synthetic [D]: x = 1 + Exp(1) has a light tail; with x_min fixed at 1 the KS distance is far beyond the
    // bootstrap's; fixed seeds 41 and 4.
    const random = createRandom(41)
    const values = Array.from({ length: 400 }, () => 1 - Math.log(1 - random()))
    const fit = fitPowerLaw(values, { xMin: 1, bootstrap: 100, seed: 4 })
    expect(fit.pValue!).toBeLessThanOrEqual(0.02)
    expect(fit.warning).toMatch(/ruled out/)
  })

  it('When discrete sizes are bootstrapped, then p is defined and large for a true discrete power law', () => {
    // Exact discrete draws (fixed seed 42); bootstrap through the CCDF table sampler, seed 5, 60 resamples for speed.
    const values = discretePowerLaw(300, 2.4, 1, createRandom(42))
    const fit = fitPowerLaw(values, { discrete: true, xMin: 1, bootstrap: 60, seed: 5 })
    expect(fit.pValue!).toBeGreaterThan(0.1)
  })
})

describe('fitPowerLaw, degenerate input', () => {
  it.each([
    ['empty', []],
    ['one value', [3]],
    ['all the same', [5, 5, 5, 5]],
    ['no positive finite value', [0, -1, Number.NaN, Infinity]],
  ])('When the input is %s, then estimates are null with a warning, never NaN', (_name, values) => {
    const fit = fitPowerLaw(values, { bootstrap: 10 })
    expect(fit.alpha).toBeNull()
    expect(fit.alphaStdErr).toBeNull()
    expect(fit.ks).toBeNull()
    expect(fit.pValue).toBeNull()
    expect(fit.warning).toMatch(/No power-law fit/)
    expect(fitPowerLaw(values, { discrete: true, bootstrap: 0 }).alpha).toBeNull()
  })

  it('When x_min is above every value, then the tail is empty and nothing is fitted', () => {
    const fit = fitPowerLaw([1, 2, 3], { xMin: 10, bootstrap: 0 })
    expect(fit).toMatchObject({ alpha: null, nTail: 0, xMin: 10 })
  })

  it('When x_min is zero, negative or NaN, then nothing is fitted and x_min is null, not NaN', () => {
    for (const xMin of [0, -2, Number.NaN]) {
      expect(fitPowerLaw([1, 2, 4, 8], { xMin, bootstrap: 0 })).toMatchObject({ alpha: null, xMin: null, nTail: 0 })
    }
  })

  it('When non-positive and non-finite values are mixed in, then they are dropped before fitting', () => {
    const clean = fitPowerLaw([1, 2, 4, 8], { xMin: 1, bootstrap: 0 })
    const dirty = fitPowerLaw([1, 2, 0, -4, Number.NaN, 4, 8], { xMin: 1, bootstrap: 0 })
    expect(dirty.alpha).toBe(clean.alpha)
    expect(dirty.n).toBe(4)
  })
})

describe('fitPowerLaw x_min scan and tiny tails', () => {
  it('When two large values sit above a power-law body, then the scan does not pick their two-value tail', () => {
    // Constructed: 400 quantiles of a discrete-ish power law (x = ⌊10·(1−u)^(−1/1.5)⌋, u on a regular grid) plus two
    // outliers far above; a two-value tail fits itself (D → 0), which METHODS §5.4 warns makes α̂ meaningless [P].
    const body = Array.from({ length: 400 }, (_, k) => Math.floor(10 * Math.pow(1 - (k + 0.5) / 400, -1 / 1.5)))
    const fit = fitPowerLaw([...body, 50_000, 50_001], { discrete: true, bootstrap: 0 })
    expect(fit.nTail).toBeGreaterThanOrEqual(MIN_SCAN_TAIL)
    expect(fit.alpha).toBeGreaterThan(2)
    expect(fit.alpha).toBeLessThan(3.2)
  })

  it('When fewer values than the shortest allowed tail are given, then every candidate is still scanned', () => {
    const fit = fitPowerLaw([1, 2, 3, 5, 8, 13, 21, 34], { discrete: true, bootstrap: 0 })
    expect(fit.alpha).not.toBeNull()
    expect(fit.nTail).toBeLessThan(MIN_SCAN_TAIL)
  })
})
