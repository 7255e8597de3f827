import { describe, expect, it } from 'vitest'
import { createRandom } from '@shared/analysis/seededRandom'
import { fitTanhProfile, sampleLineProfile } from '@shared/analysis/wallProfileFit'

const positions = Float64Array.from({ length: 64 }, (_, i) => i)
const tanhProfile = (a: number, b: number, x0: number, w: number) =>
  Float64Array.from(positions, (x) => a + b * Math.tanh((x - x0) / w))

describe('fitTanhProfile', () => {
  it('When the METHODS profile (a 100, b 50, x0 32.3, w 3) is fitted noise-free, then the inputs come back', () => {
    // METHODS.md check #46 [D]: inputs to 1e-6; 10–90 % width ln9·3 = 6.592 px; tangent width 6 px; δ_L = 9.425 px
    // (1e-3).
    const fit = fitTanhProfile(positions, tanhProfile(100, 50, 32.3, 3))
    expect(fit.converged).toBe(true)
    expect(Math.abs(fit.a - 100)).toBeLessThan(1e-6)
    expect(Math.abs(fit.b - 50)).toBeLessThan(1e-6)
    expect(Math.abs(fit.x0 - 32.3)).toBeLessThan(1e-6)
    expect(Math.abs(fit.w - 3)).toBeLessThan(1e-6)
    expect(Math.abs(fit.rise10to90 - 6.592)).toBeLessThan(1e-3)
    expect(Math.abs(fit.tangentWidth - 6)).toBeLessThan(1e-3)
    expect(Math.abs(fit.lilleyWidth - 9.425)).toBeLessThan(1e-3)
    expect(fit.residualRms).toBeLessThan(1e-9)
  })

  it('When the profile falls (b < 0), then the sign is carried by b and w stays positive', () => {
    const fit = fitTanhProfile(positions, tanhProfile(80, -30, 20.7, 2.2))
    expect(fit.b).toBeCloseTo(-30, 6)
    expect(fit.w).toBeCloseTo(2.2, 6)
  })

  it('When Gaussian noise is added, then w is recovered within 3 standard errors and the error is realistic', () => {
    // Synthetic ground truth [D]; noise sd 2 (fixed seeds 41–60). The fit's stdErr must cover the scatter of w.
    const deviations: number[] = []
    const errors: number[] = []
    for (let seed = 41; seed <= 60; seed++) {
      const random = createRandom(seed)
      const values = Float64Array.from(tanhProfile(100, 50, 32.3, 3), (v) => v + random.normal(0, 2))
      const fit = fitTanhProfile(positions, values)
      expect(fit.converged).toBe(true)
      expect(Math.abs(fit.w - 3)).toBeLessThan(3 * (fit.wStdErr as number))
      deviations.push(fit.w - 3)
      errors.push(fit.wStdErr as number)
    }
    const rms = Math.sqrt(deviations.reduce((s, d) => s + d * d, 0) / deviations.length)
    const meanError = errors.reduce((s, e) => s + e, 0) / errors.length
    expect(rms / meanError).toBeGreaterThan(0.5)
    expect(rms / meanError).toBeLessThan(2)
  })

  it('When the profile is flat or too short, then no wall is reported and nothing is NaN', () => {
    // METHODS.md §0 [P]: degenerate input → defined result.
    const flat = fitTanhProfile(positions, new Float64Array(64).fill(7))
    expect(flat.converged).toBe(false)
    expect([flat.a, flat.b, flat.w, flat.wStdErr]).toEqual([7, 0, 0, null])
    const short = fitTanhProfile(new Float64Array([0, 1, 2]), new Float64Array([0, 1, 2]))
    expect(short.converged).toBe(false)
    expect(short.a).toBe(1)
    const empty = fitTanhProfile(new Float64Array(0), new Float64Array(0))
    expect([empty.a, empty.residualRms]).toEqual([0, 0])
  })
})

describe('sampleLineProfile', () => {
  it('When an oblique tanh wall is sampled across with parallel profiles, then the fit returns its width', () => {
    // Synthetic ground truth [D]: I = 100 + 50·tanh(n/3), n = signed distance from a wall through (64, 64) whose
    // normal is at 30°; the profile runs along the normal from −30 to +30 px, 5 parallel lines averaged.
    const size = 128
    const c = Math.cos(Math.PI / 6)
    const s = Math.sin(Math.PI / 6)
    const data = new Float32Array(size * size)
    for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = 100 + 50 * Math.tanh(((x - 64) * c + (y - 64) * s) / 3)
    const profile = sampleLineProfile({ width: size, height: size, data }, 64 - 30 * c, 64 - 30 * s, 64 + 30 * c, 64 + 30 * s, {
      halfWidth: 2,
    })
    expect(profile.positions.length).toBe(61)
    expect(profile.positions[60]).toBe(60)
    const fit = fitTanhProfile(profile.positions, profile.values)
    // Bilinear interpolation of a tanh sampled at 1 px blurs it slightly: within 2 %.
    expect(Math.abs(fit.w / 3 - 1)).toBeLessThan(0.02)
    expect(Math.abs(fit.x0 - 30)).toBeLessThan(0.05)
  })

  it('When the line is axis-aligned on pixel centres, then the samples are the pixel values', () => {
    const data = Float32Array.from({ length: 20 }, (_, i) => i * 2)
    const profile = sampleLineProfile({ width: 5, height: 4, data }, 0, 1, 4, 1)
    expect(Array.from(profile.values)).toEqual([10, 12, 14, 16, 18])
  })

  it('When the line has zero length or leaves the image, then samples are defined (edge values)', () => {
    const image = { width: 3, height: 3, data: new Float32Array([1, 2, 3, 4, 5, 6, 7, 8, 9]) }
    expect(Array.from(sampleLineProfile(image, 1, 1, 1, 1).values)).toEqual([5])
    expect(Array.from(sampleLineProfile(image, -5, 0, -3, 0).values)).toEqual([1, 1, 1])
    expect(sampleLineProfile({ width: 0, height: 0, data: new Float32Array(0) }, 0, 0, 1, 1).values.length).toBe(0)
  })
})
