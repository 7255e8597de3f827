import { describe, expect, it } from 'vitest'
import {
  flattenField,
  normalizeWithSaturatedReferences,
  subtractReference,
} from '@shared/analysis/backgroundCorrection'
import { gaussianBlur } from '@shared/analysis/gaussianBlur'
import { otsuThreshold } from '@shared/analysis/otsuThreshold'
import { createRandom } from '@shared/analysis/seededRandom'
import type { FloatImage } from '@shared/analysis/types'

const mean = (data: ArrayLike<number>): number => Array.from(data).reduce((a, b) => a + b, 0) / data.length

describe('subtractReference', () => {
  // Synthetic Kerr frame: fixed-pattern background (topography) plus ±10 domain contrast on a left/right split.
  const width = 16
  const height = 8
  const random = createRandom(3) // fixed seed 3 for the background pattern
  const background = Float32Array.from({ length: width * height }, () => 100 + 30 * random())
  const domains = Float32Array.from({ length: width * height }, (_, i) => (i % width < 6 ? -10 : 10))
  const frame: FloatImage = { width, height, data: background.map((b, i) => b + domains[i]) }
  const reference: FloatImage = { width, height, data: background }

  it('When the saturated reference is subtracted, then only the domain contrast is left', () => {
    // METHODS.md §8.1 [R, secondary: Soldatov & Schäfer]: I − I_ref removes topography.
    const out = subtractReference(frame, reference, 'difference')
    for (let i = 0; i < out.data.length; i++) expect(out.data[i]).toBeCloseTo(domains[i], 4)
  })

  it('When the ratio mode is used, then I/I_ref − 1 is returned and a zero reference gives 0', () => {
    const out = subtractReference(frame, reference, 'ratio')
    for (let i = 0; i < out.data.length; i++) expect(out.data[i]).toBeCloseTo(frame.data[i] / background[i] - 1, 6)
    const zero = subtractReference(
      { width: 2, height: 1, data: new Float32Array([5, 5]) },
      { width: 2, height: 1, data: new Uint8Array([0, 10]) },
      'ratio',
    )
    expect(Array.from(zero.data)).toEqual([0, -0.5])
  })

  it('When the sizes differ, then a clear Error names both sizes', () => {
    const small: FloatImage = { width: 4, height: 4, data: new Float32Array(16) }
    expect(() => subtractReference(frame, small, 'difference')).toThrow(/16×8 px .* 4×4 px/)
  })
})

describe('flattenField', () => {
  it('When stripes sit on a strong illumination ramp, then flattening makes Otsu recover the stripes', () => {
    // Ground truth: stripes of width 8 with contrast 40, plus a ramp of 120 grey levels across x and noise σ 4.
    const width = 256
    const height = 128
    const random = createRandom(17) // fixed seed 17 for the noise
    const truth = new Uint8Array(width * height)
    const data = new Float32Array(width * height)
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const i = y * width + x
        truth[i] = Math.floor(x / 8) % 2
        data[i] = 60 + 40 * truth[i] + (120 * x) / width + random.normal(0, 4)
      }
    }
    const agreement = (image: FloatImage): number => {
      const { threshold } = otsuThreshold(image)
      let same = 0
      for (let i = 0; i < truth.length; i++) if ((image.data[i] > threshold ? 1 : 0) === truth[i]) same++
      return same / truth.length
    }
    const raw: FloatImage = { width, height, data }
    const flat = flattenField(raw, 24)
    expect(agreement(raw)).toBeLessThan(0.85)
    expect(agreement(flat)).toBeGreaterThan(0.99)
    // The mean grey level is kept.
    expect(mean(flat.data)).toBeCloseTo(mean(data), 2)
  })

  it('When σ is large, then the decimated low-pass matches the full-resolution Gaussian away from the borders', () => {
    // Reference: I − gaussianBlur(I, σ) + mean, computed at full resolution. Stripes of period 7 px, contrast 40,
    // noise σ 4 (fixed seed 23); the two may differ within 2σ of the border, where edge replication is a guess anyway.
    const width = 320
    const height = 160
    const sigma = 16
    const random = createRandom(23)
    const data = new Float32Array(width * height)
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const illumination = (120 * x) / width + 30 * Math.sin(y / 40)
        data[y * width + x] = 80 + 40 * (Math.floor(x / 3.5) % 2) + illumination + random.normal(0, 4)
      }
    }
    const image: FloatImage = { width, height, data }
    const fast = flattenField(image, sigma).data
    const background = gaussianBlur(image, sigma).data
    const level = mean(background)
    let worst = 0
    for (let y = 2 * sigma; y < height - 2 * sigma; y++) {
      for (let x = 2 * sigma; x < width - 2 * sigma; x++) {
        const i = y * width + x
        worst = Math.max(worst, Math.abs(fast[i] - (data[i] - background[i] + level)))
      }
    }
    expect(worst).toBeLessThan(0.4) // 1 % of the domain contrast
  })

  it.each([
    ['constant', { width: 6, height: 5, data: new Float32Array(30).fill(42) }, 10],
    ['constant 64×64 (decimated path)', { width: 64, height: 64, data: new Float32Array(4096).fill(42) }, 20],
    ['1×1', { width: 1, height: 1, data: new Float32Array([7]) }, 3],
    ['σ = 0', { width: 3, height: 1, data: new Float32Array([1, 5, 2]) }, 0],
  ])('When the image is %s, then it is returned unchanged', (_name, image: FloatImage, sigma) => {
    const out = flattenField(image, sigma)
    for (let i = 0; i < out.data.length; i++) expect(out.data[i]).toBeCloseTo(image.data[i], 4)
  })
})

describe('normalizeWithSaturatedReferences', () => {
  it('When I+ = 120, I− = 80 and I = 110, then m = 0.50', () => {
    // METHODS.md check #32 [D]: m = (2I − I+ − I−)/(I+ − I−) = (220 − 200)/40 = 0.5.
    const out = normalizeWithSaturatedReferences({ width: 1, height: 1, data: new Uint8Array([110]) }, 120, 80)
    expect(out.data[0]).toBe(0.5)
  })

  it('When 70 % of the pixels are at I+ and 30 % at I−, then the mean m is 0.40 (binary limit)', () => {
    // METHODS.md check #31 [D]: A_A(up) = 0.70 → M/Ms = 2·0.70 − 1 = 0.40; the grey route reduces to it for two levels.
    const data = Uint8Array.from({ length: 100 }, (_, i) => (i < 70 ? 120 : 80))
    const out = normalizeWithSaturatedReferences({ width: 10, height: 10, data }, 120, 80)
    expect(mean(out.data)).toBeCloseTo(0.4, 12)
  })

  it('When reference frames are given, then m is pixelwise and clipped to [−1, 1]', () => {
    const image: FloatImage = { width: 4, height: 1, data: new Float32Array([200, 0, 15, 50]) }
    const up: FloatImage = { width: 4, height: 1, data: new Float32Array([100, 100, 20, 50]) }
    const down: FloatImage = { width: 4, height: 1, data: new Float32Array([50, 50, 10, 50]) }
    // Pixel 3 has I+ = I−: no magnetic contrast, m = 0.
    expect(Array.from(normalizeWithSaturatedReferences(image, up, down).data)).toEqual([1, -1, 0, 0])
  })

  it('When a reference frame has another size, then an Error is thrown', () => {
    const image: FloatImage = { width: 2, height: 2, data: new Float32Array(4) }
    const tiny: FloatImage = { width: 1, height: 1, data: new Float32Array(1) }
    expect(() => normalizeWithSaturatedReferences(image, tiny, 0)).toThrow(Error)
  })
})
