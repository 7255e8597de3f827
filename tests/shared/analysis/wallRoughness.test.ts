import { describe, expect, it } from 'vitest'
import { ifft2d } from '@shared/analysis/fft2d'
import { createRandom } from '@shared/analysis/seededRandom'
import type { BinaryMask } from '@shared/analysis/types'
import { wallProfileFromMask, wallProfileFromPolyline, wallRoughness } from '@shared/analysis/wallRoughness'

/**
 * Self-affine line of length L (power of two) by Fourier filtering: |û(q)| ∝ q^(−(½ + ζ)), uniform random phases,
 * Hermitian spectrum so u is real; then B(r) ∝ r^(2ζ) for 0 < ζ < 1 (spectral method, Barabási & Stanley 1995 [M]).
 */
function selfAffineLine(length: number, zeta: number, seed: number): Float64Array {
  const random = createRandom(seed)
  const re = new Float64Array(length)
  const im = new Float64Array(length)
  for (let k = 1; k <= length / 2; k++) {
    const amplitude = Math.pow(k, -(0.5 + zeta))
    const phase = 2 * Math.PI * random()
    re[k] = amplitude * Math.cos(phase)
    im[k] = k < length / 2 ? amplitude * Math.sin(phase) : 0
    if (k < length / 2) {
      re[length - k] = re[k]
      im[length - k] = -im[k]
    }
  }
  return Float64Array.from(ifft2d(re, im, length, 1).re, (v) => v * length)
}

describe('wallRoughness', () => {
  it.each([
    [0.5, 21],
    [0.66, 22],
  ])('When a self-affine line of ζ = %f (L = 4096, seed %i) is analysed, then ζ comes back within 0.05', (zeta, seed) => {
    // Constructed (spectral method); over seeds 1…10 the estimates were 0.495…0.504 (ζ = 0.5) and 0.635…0.646
    // (ζ = 0.66, the lattice cut-off lowers B at small r).
    const result = wallRoughness(selfAffineLine(4096, zeta, seed))
    expect(Math.abs(result.zeta! - zeta)).toBeLessThan(0.05)
    expect(result.zetaStdErr!).toBeGreaterThan(0)
    expect(result.fitRange).toEqual([2, 512])
    expect(result.r).toHaveLength(1024)
    expect(result.B).toHaveLength(1024)
    expect(result.theory.zeta).toBeCloseTo(2 / 3, 15)
    expect(result.theory.source).toMatch(/Huse & Henley 1985/)
  })

  it('When the wall is a random walk, then ζ = 1/2 within 0.05', () => {
    // [D]: independent Gaussian steps give B(r) = r·σ² exactly in expectation (seed 23, L = 8192). One walk has
    // random amplitudes at every scale: over seeds 1…200 ζ̂ had sd 0.028 with the default range [2, L/8] and 0.020
    // with [2, L/32], used here.
    const random = createRandom(23)
    const u = new Float64Array(8192)
    for (let x = 1; x < u.length; x++) u[x] = u[x - 1] + random.normal()
    const result = wallRoughness(u, { fitRange: [2, 256] })
    expect(Math.abs(result.zeta! - 0.5)).toBeLessThan(0.05)
    // [D]: amplitude A in B ≈ A·r^(2ζ) ≈ σ² = 1.
    expect(result.amplitude!).toBeGreaterThan(0.7)
    expect(result.amplitude!).toBeLessThan(1.4)
  })

  it('When the wall is straight but tilted, then B(r) = (slope·r)² exactly and ζ = 1', () => {
    // [D]: u = 0.3·x ⇒ B(r) = 0.09·r².
    const u = Float64Array.from({ length: 256 }, (_, x) => 0.3 * x)
    const result = wallRoughness(u)
    result.r.forEach((r, i) => expect(result.B[i]).toBeCloseTo(0.09 * r * r, 9))
    expect(result.zeta!).toBeCloseTo(1, 9)
    expect(result.amplitude!).toBeCloseTo(0.09, 9)
  })

  it('When B(r) is computed by hand on a short profile, then it matches', () => {
    // [D]: u = [0, 1, 0, 2, 1, 3, 2, 4, 3, 5, 4, 6, 5, 7, 6, 8]; B(1) = mean of squared steps.
    const u = Float64Array.from([0, 1, 0, 2, 1, 3, 2, 4, 3, 5, 4, 6, 5, 7, 6, 8])
    const result = wallRoughness(u)
    const byHand = (r: number) => {
      let s = 0
      for (let x = 0; x + r < u.length; x++) s += (u[x + r] - u[x]) ** 2
      return s / (u.length - r)
    }
    expect(result.r).toEqual([1, 2, 3, 4])
    result.r.forEach((r, i) => expect(result.B[i]).toBeCloseTo(byHand(r), 12))
  })

  it('When samples are missing (NaN), then only complete pairs count and nothing is NaN', () => {
    // Constructed: a tilted line with every 10th sample missing still gives B = (0.5·r)².
    const u = Float64Array.from({ length: 200 }, (_, x) => (x % 10 === 3 ? Number.NaN : 0.5 * x))
    const result = wallRoughness(u)
    expect(result.B.every(Number.isFinite)).toBe(true)
    result.r.forEach((r, i) => expect(result.B[i]).toBeCloseTo(0.25 * r * r, 9))
  })

  it('When a fit range is given, then it is used and clamped to [1, L/4]', () => {
    // Constructed: random walk, seed 24.
    const random = createRandom(24)
    const u = new Float64Array(1024)
    for (let x = 1; x < u.length; x++) u[x] = u[x - 1] + random.normal()
    expect(wallRoughness(u, { fitRange: [4, 64] }).fitRange).toEqual([4, 64])
    expect(wallRoughness(u, { fitRange: [0, 5000] }).fitRange).toEqual([1, 256])
  })

  it('When the profile is too short or flat, then ζ is null with a warning, never NaN', () => {
    // METHODS §0 [P]: degenerate input returns a defined result.
    const short = wallRoughness(new Float64Array(10))
    expect(short.zeta).toBeNull()
    expect(short.warning).toMatch(/at least 16/)
    const flat = wallRoughness(new Float64Array(64).fill(3))
    expect(flat.zeta).toBeNull()
    expect(flat.zetaStdErr).toBeNull()
    expect(flat.warning).toMatch(/flat wall/)
    expect(wallRoughness(new Float64Array(0)).r).toEqual([])
  })
})

describe('wallProfileFromMask', () => {
  /** 1 above the wall, 0 below: column x has `heights[x]` up pixels from the top. */
  function stepMask(heights: number[], height: number): BinaryMask {
    const width = heights.length
    const data = new Uint8Array(width * height)
    heights.forEach((h, x) => {
      for (let y = 0; y < h; y++) data[y * width + x] = 1
    })
    return { width, height, data }
  }

  it('When a horizontal wall has known column heights, then u = height − ½ per column', () => {
    // Constructed: the wall lies between pixel centres h − 1 and h.
    const heights = [3, 4, 4, 5, 7, 6, 2]
    const u = wallProfileFromMask(stepMask(heights, 10), 'horizontal')
    expect(Array.from(u)).toEqual(heights.map((h) => h - 0.5))
  })

  it('When the phases are swapped or the wall is vertical, then the same positions come out', () => {
    // Constructed: the top phase is found from the first row; the vertical case is the transpose.
    const heights = [3, 4, 4, 5, 7, 6, 2]
    const mask = stepMask(heights, 10)
    const swapped = { ...mask, data: mask.data.map((v) => 1 - v) }
    expect(Array.from(wallProfileFromMask(swapped, 'horizontal'))).toEqual(heights.map((h) => h - 0.5))
    const transposed = new Uint8Array(mask.data.length)
    for (let y = 0; y < 10; y++) for (let x = 0; x < 7; x++) transposed[x * 10 + y] = mask.data[y * 7 + x]
    expect(Array.from(wallProfileFromMask({ width: 10, height: 7, data: transposed }, 'vertical'))).toEqual(heights.map((h) => h - 0.5))
  })

  it('When a column holds an ignored pixel, then its position is NaN', () => {
    // Constructed.
    const mask = stepMask([3, 3, 3], 6)
    const ignore = new Uint8Array(18)
    ignore[5 * 3 + 1] = 1
    const u = wallProfileFromMask({ ...mask, ignore }, 'horizontal')
    expect(u[0]).toBe(2.5)
    expect(Number.isNaN(u[1])).toBe(true)
  })

  it('When the mask is one phase, then the profile is empty; when it is a stripe, then a RangeError explains', () => {
    // METHODS §0 [P] (all one phase); constructed stripe: top and bottom rows both phase 0.
    expect(wallProfileFromMask({ width: 4, height: 4, data: new Uint8Array(16) }, 'horizontal')).toHaveLength(0)
    expect(wallProfileFromMask({ width: 0, height: 0, data: new Uint8Array(0) }, 'horizontal')).toHaveLength(0)
    const stripe = new Uint8Array(36)
    for (let x = 0; x < 6; x++) stripe[2 * 6 + x] = 1
    expect(() => wallProfileFromMask({ width: 6, height: 6, data: stripe }, 'horizontal')).toThrow(/crossed by one horizontal wall/)
  })

  it('When a digitised self-affine wall is analysed, then ζ is close to that of the line', () => {
    // Constructed: the ζ = 0.5 line (seed 25) scaled to ±~40 px and rounded into a 4096-wide mask loses only the
    // sub-pixel detail; ζ within 0.08 of 0.5 (quantisation flattens B at r ≲ 2).
    const line = selfAffineLine(4096, 0.5, 25)
    let lo = Infinity
    let hi = -Infinity
    for (const v of line) {
      lo = Math.min(lo, v)
      hi = Math.max(hi, v)
    }
    const scale = 80 / (hi - lo)
    const height = 100
    const heights = Array.from(line, (v) => Math.round(10 + (v - lo) * scale))
    const result = wallRoughness(wallProfileFromMask(stepMask(heights, height), 'horizontal'))
    expect(Math.abs(result.zeta! - 0.5)).toBeLessThan(0.08)
  })
})

describe('wallProfileFromPolyline', () => {
  it('When a polyline is resampled at 1 px, then u is linearly interpolated between its vertices', () => {
    // [D]: (0.5, 1) → (2.5, 3) → (4, 0): samples at x = 1…4.
    const u = wallProfileFromPolyline(
      [
        { x: 0.5, y: 1 },
        { x: 2.5, y: 3 },
        { x: 4, y: 0 },
      ],
      'horizontal',
    )
    expect(Array.from(u)).toEqual([1.5, 2.5, 2, 0])
  })

  it('When the polyline doubles back (an overhang), then the crossings are averaged', () => {
    // [D]: (0, 0) → (4, 0) → (2, 4): x = 2 is crossed at y = 0 and y = 4 → 2; x = 3 at 0 and 2 → 1.
    const u = wallProfileFromPolyline(
      [
        { x: 0, y: 0 },
        { x: 4, y: 0 },
        { x: 2, y: 4 },
      ],
      'horizontal',
    )
    expect(Array.from(u)).toEqual([0, 0, 2, 1, 0])
  })

  it('When the polyline is vertical or has fewer than two points, then the roles swap or the profile is empty', () => {
    // [D]: vertical wall x = 2 + y/2 for y = 0…4.
    expect(
      Array.from(
        wallProfileFromPolyline(
          [
            { x: 2, y: 0 },
            { x: 4, y: 4 },
          ],
          'vertical',
        ),
      ),
    ).toEqual([2, 2.5, 3, 3.5, 4])
    expect(wallProfileFromPolyline([{ x: 1, y: 1 }], 'horizontal')).toHaveLength(0)
  })
})
