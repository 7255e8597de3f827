/**
 * Roughness exponent ζ of a closed wall (a bubble domain) from its periodic profile, with the domain's shape modes
 * removed and a white-noise floor fitted alongside.
 *
 * Why not a straight power-law fit of B(r) (./wallRoughness): on a closed wall unrolled as r(θ) (./radialWallProfile)
 * the lowest Fourier modes are not roughness (size, centroid offset, elongation) and must be removed, and without them
 * B(r) bends below r^(2ζ) well inside the usual fit range (a periodic ζ = 2/3 line of 565 samples without modes
 * n ≤ 2 gives ζ̂ = 0.52 on [2, L/8] [D, computed here]); and the pixel grid adds a white noise of about 0.2 px²
 * to B at every lag, which flattens B at small r (ζ̂ ≈ 0.4 for a 2-px-rms wall) [D, computed here].
 * Method: B(r) = ⟨[u(s + r) − u(s)]²⟩ over all N samples of the periodic profile (pairs wrap around), r = 1 … ⌊N/2⌋.
 * For a random-phase Fourier series u(s) = Σ_n a_n cos(2πns/N + φ_n) the periodic average is exactly
 * B(r) = Σ_n a_n²·(1 − cos(2πnr/N)) [D: cross terms average to zero over a period], and a self-affine wall has
 * ⟨a_n²⟩ ∝ n^(−(1 + 2ζ)) (the spectral form of B ∝ r^(2ζ), e.g. A.-L. Barabási & H. E. Stanley 1995, *Fractal
 * Concepts in Surface Growth* [from memory]). The model B(r) = A·M_ζ(r) + c, M_ζ(r) = Σ_{n=n₀}^{⌊N/2⌋}
 * n^(−(1+2ζ))·(1 − cos(2πnr/N)), keeps exactly the modes the profile has (n₀ = removed modes + 1), and c ≥ 0 is a
 * white-noise floor (2σ² of the digitisation and segmentation noise) [P]. For each ζ, A and c follow by weighted
 * linear least squares with relative weights 1/B²; ζ minimises the weighted SSR (scan of [0, 1.5], then golden
 * section) on about 10 logarithmically spaced lags per decade in [3, N/4]: lags under 3 px are smoothed by the
 * optics' blur, the recipe's smoothing and the 3 × 3 clean-up, which steepens B there (rendered bubbles of ζ = 2/3:
 * ζ̂ 0.70–0.77 from r ≥ 1, 0.67–0.74 from r ≥ 3, over seeds 8–10) [D, computed here]. Its standard error comes from the
 * curvature of the profile SSR(ζ), s²·2/SSR''(ζ̂) with s² = SSR/(m − 3): B at different lags is correlated, so it is a
 * lower bound.
 * Theory beside it: ζ = 2/3 for an elastic line in a random-bond medium (./wallRoughness ROUGHNESS_THEORY, with its
 * sources); measured 0.69 ± 0.07 by S. Lemerle et al. 1998, Phys. Rev. Lett. 80:849 [from memory].
 * Checked against: rendered digital bubbles with self-affine walls of known ζ (0.5 and 2/3, 1–4 px rms) (ζ̂ within
 * 0.05 over seeds; the plain power-law fit is 0.15–0.3 low on the same walls) (tests).
 * Input: u (px, NaN = unknown sample: its pairs are skipped) sampled at equal steps along the closed wall, and the
 * highest removed mode (2 for ./radialWallProfile's default). Output: r in samples (≈ px of arc), B and c in px²,
 * ζ dimensionless.
 */
import { ROUGHNESS_THEORY, displacementCorrelation } from './wallRoughness'

export interface ClosedWallRoughnessOptions {
  /** Highest Fourier mode removed from the profile (default 2, as ./radialWallProfile). */
  removedModes?: number
  /** Lags [rMin, rMax] of the fit; default [3, N/4]. */
  fitRange?: [number, number]
}

export interface ClosedWallRoughnessResult {
  /** Lags with at least one pair, samples (≈ px of arc). */
  r: number[]
  /** B(r), px². */
  B: number[]
  zeta: number | null
  zetaStdErr: number | null
  /** A in B = A·M_ζ(r) + c, px². */
  amplitude: number | null
  /** White-noise floor c, px² (≥ 0). */
  noiseFloor: number | null
  fitRange: [number, number]
  fitPoints: number
  /** The fitted model at every lag of `r` (null without a fit), for plotting beside B. */
  model: number[] | null
  theory: { zeta: number; source: string }
  warning?: string
}

const ZETA_MIN = 0
const ZETA_MAX = 1.5

interface LinearFit {
  amplitude: number
  floor: number
  ssr: number
}

/** M_ζ(r) at each lag, for modes n₀ … ⌊N/2⌋. */
function spectralModel(lags: number[], n: number, n0: number, zeta: number): number[] {
  const top = Math.floor(n / 2)
  return lags.map((r) => {
    let sum = 0
    for (let mode = n0; mode <= top; mode++) sum += Math.pow(mode, -(1 + 2 * zeta)) * (1 - Math.cos((2 * Math.PI * mode * r) / n))
    return sum
  })
}

/** Weighted least squares of b = A·m + c (c ≥ 0) with weights 1/b²; null when singular. */
function linearFit(b: number[], m: number[]): LinearFit | null {
  let sw = 0
  let sm = 0
  let sb = 0
  let smm = 0
  let smb = 0
  for (let i = 0; i < b.length; i++) {
    const w = 1 / (b[i] * b[i])
    sw += w
    sm += w * m[i]
    sb += w * b[i]
    smm += w * m[i] * m[i]
    smb += w * m[i] * b[i]
  }
  const det = smm * sw - sm * sm
  let amplitude = det > 0 ? (smb * sw - sm * sb) / det : Number.NaN
  let floor = det > 0 ? (smm * sb - sm * smb) / det : Number.NaN
  // A negative floor is not a noise variance: fit the amplitude alone.
  if (!(floor >= 0)) {
    floor = 0
    amplitude = smm > 0 ? smb / smm : Number.NaN
  }
  if (!Number.isFinite(amplitude)) return null
  let ssr = 0
  for (let i = 0; i < b.length; i++) ssr += ((b[i] - amplitude * m[i] - floor) / b[i]) ** 2
  return { amplitude, floor, ssr }
}

/** About 10 logarithmically spaced distinct integers per decade in [lo, hi]. */
function logSpacedLags(lo: number, hi: number): number[] {
  const steps = Math.max(1, Math.ceil(10 * Math.log10(hi / lo)))
  const lags = new Set<number>()
  for (let k = 0; k <= steps; k++) lags.add(Math.round(lo * Math.pow(hi / lo, k / steps)))
  return [...lags].sort((a, b) => a - b)
}

/**
 * B(r) and the roughness exponent of a closed wall's periodic profile (see the file header).
 * @returns ζ null with a warning for a profile under 32 samples, a flat one, or fewer than 4 usable lags; never NaN.
 * @example closedWallRoughness(radialWallProfile(bubble).u).zeta
 */
export function closedWallRoughness(u: Float64Array, options: ClosedWallRoughnessOptions = {}): ClosedWallRoughnessResult {
  const n = u.length
  const n0 = Math.max(0, Math.floor(options.removedModes ?? 2)) + 1
  const half = Math.floor(n / 2)
  const { r, B } = displacementCorrelation(u, half, true)
  const requested = options.fitRange ?? [3, Math.floor(n / 4)]
  const lo = Math.max(1, Math.min(half, Math.round(requested[0])))
  const hi = Math.max(lo, Math.min(half, Math.round(requested[1])))
  const fitRange: [number, number] = [lo, hi]
  const none = (warning: string): ClosedWallRoughnessResult => ({
    r,
    B,
    zeta: null,
    zetaStdErr: null,
    amplitude: null,
    noiseFloor: null,
    fitRange,
    fitPoints: 0,
    model: null,
    theory: ROUGHNESS_THEORY,
    warning,
  })
  // Degenerate: a short profile (a domain of radius ≲ 5 px) leaves too few lags beyond the removed modes.
  if (n < 32) return none(`The wall profile has ${n} samples; at least 32 (a domain radius of about 5 px) are needed for a roughness exponent.`)

  const byLag = new Map<number, number>()
  r.forEach((lag, i) => byLag.set(lag, B[i]))
  const lags = logSpacedLags(lo, hi).filter((lag) => (byLag.get(lag) ?? 0) > 0)
  // Degenerate: a flat wall (B = 0) or a fit range with too few lags for three parameters.
  if (lags.length < 4) return none('B(r) is zero or missing over the fit range (flat wall or too few lags): no exponent.')
  const b = lags.map((lag) => byLag.get(lag)!)
  const ssrAt = (zeta: number) => linearFit(b, spectralModel(lags, n, n0, zeta))?.ssr ?? Infinity

  // Coarse scan first (the profile SSR can have a shallow second minimum), then golden section around the best.
  const scan = 31
  let best = 0
  let bestSsr = Infinity
  for (let k = 0; k < scan; k++) {
    const ssr = ssrAt(ZETA_MIN + ((ZETA_MAX - ZETA_MIN) * k) / (scan - 1))
    if (ssr < bestSsr) {
      bestSsr = ssr
      best = k
    }
  }
  const step = (ZETA_MAX - ZETA_MIN) / (scan - 1)
  let a = Math.max(ZETA_MIN, ZETA_MIN + (best - 1) * step)
  let c = Math.min(ZETA_MAX, ZETA_MIN + (best + 1) * step)
  const ratio = (Math.sqrt(5) - 1) / 2
  for (let i = 0; i < 60; i++) {
    const x1 = c - ratio * (c - a)
    const x2 = a + ratio * (c - a)
    if (ssrAt(x1) <= ssrAt(x2)) c = x2
    else a = x1
  }
  const zeta = (a + c) / 2
  const fit = linearFit(b, spectralModel(lags, n, n0, zeta))
  if (fit === null || !(fit.amplitude > 0)) return none('B(r) does not rise with r over the fit range: no exponent.')

  // SE from the curvature of the profile SSR (central second difference), scaled by the residual variance.
  const h = 1e-3
  const curvature = (ssrAt(zeta + h) - 2 * fit.ssr + ssrAt(zeta - h)) / (h * h)
  const dof = lags.length - 3
  const zetaStdErr = dof > 0 && curvature > 0 ? Math.sqrt(((fit.ssr / dof) * 2) / curvature) : null
  const atEdge = zeta < ZETA_MIN + 0.01 || zeta > ZETA_MAX - 0.01
  const model = spectralModel(r, n, n0, zeta).map((m) => fit.amplitude * m + fit.floor)
  const warnings = [
    atEdge ? `ζ is at the edge of the scanned range [${ZETA_MIN}, ${ZETA_MAX}]: the wall is not self-affine over the fit range.` : null,
    lags.length < 8 ? `Only ${lags.length} lags in the fit range: the exponent is rough.` : null,
  ].filter((w): w is string => w !== null)
  return {
    r,
    B,
    zeta,
    zetaStdErr,
    amplitude: fit.amplitude,
    noiseFloor: fit.floor,
    fitRange,
    fitPoints: lags.length,
    model,
    theory: ROUGHNESS_THEORY,
    ...(warnings.length ? { warning: warnings.join(' ') } : {}),
  }
}
