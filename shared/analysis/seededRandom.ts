/**
 * Small seeded pseudo-random number generator for reproducible bootstraps, synthetic test data and k-means seeding.
 *
 * Method: Mulberry32 (Tommy Ettinger, 2017, public domain; 32-bit state, period 2³², passes PractRand to 32 GB as
 * reported by its author [from memory]); standard normal deviates by the Box–Muller transform (G. E. P. Box and
 * M. E. Muller, 1958, "A note on the generation of random normal deviates", Ann. Math. Stat. 29:610–611,
 * DOI 10.1214/aoms/1177706645 [page numbers from memory]).
 * Checked against: the reference constants of the published Mulberry32 C/JS code [from memory]; tests check
 * determinism per seed and the first two moments of the uniform and normal streams.
 * Not cryptographic. The stream is fully determined by the seed, which is taken as an unsigned 32-bit integer
 * (non-integer seeds are truncated, non-finite seeds become 0).
 * Output: uniform numbers in [0, 1) with 2⁻³² resolution; normal deviates with the requested mean and sd.
 */

/** A seeded uniform generator with a few derived samplers. Calling it returns the next uniform number in [0, 1). */
export interface SeededRandom {
  (): number
  /** Next normal deviate (Box–Muller, second value of each pair cached). */
  normal(mean?: number, sd?: number): number
  /** Next integer uniform on 0 … maxExclusive − 1 (0 when maxExclusive < 1). */
  int(maxExclusive: number): number
}

/**
 * Create a deterministic generator from `seed`.
 * @example const random = createRandom(42); random(); random.normal(); random.int(10)
 */
export function createRandom(seed: number): SeededRandom {
  let state = Number.isFinite(seed) ? Math.trunc(seed) >>> 0 : 0
  let cachedNormal: number | null = null

  const uniform = (): number => {
    state = (state + 0x6d2b79f5) | 0
    let t = Math.imul(state ^ (state >>> 15), 1 | state)
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }

  const normal = (mean = 0, sd = 1): number => {
    if (cachedNormal !== null) {
      const z = cachedNormal
      cachedNormal = null
      return mean + sd * z
    }
    // 1 − u lies in (0, 1], so the logarithm is always finite.
    const radius = Math.sqrt(-2 * Math.log(1 - uniform()))
    const angle = 2 * Math.PI * uniform()
    cachedNormal = radius * Math.sin(angle)
    return mean + sd * radius * Math.cos(angle)
  }

  const int = (maxExclusive: number): number => {
    const n = Math.floor(maxExclusive)
    return n < 1 ? 0 : Math.floor(uniform() * n)
  }

  return Object.assign(uniform, { normal, int })
}
