import { describe, expect, it } from 'vitest'
import { computeThreshold, Image } from 'image-js'
import { intensityHistogram, otsuFromHistogram, otsuThreshold } from '@shared/analysis/otsuThreshold'
import { createRandom } from '@shared/analysis/seededRandom'
import type { FloatImage, GrayImage } from '@shared/analysis/types'

/** Noisy bimodal 8-bit image: left half N(80, 20²), right half N(170, 25²), rounded and clipped to 0..255. */
function bimodal8bit(width: number, height: number, seed: number): GrayImage & { data: Uint8Array } {
  const random = createRandom(seed)
  const data = new Uint8Array(width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const v = x < width / 2 ? random.normal(80, 20) : random.normal(170, 25)
      data[y * width + x] = Math.min(255, Math.max(0, Math.round(v)))
    }
  }
  return { width, height, data }
}

describe('otsuFromHistogram', () => {
  const counts = [8, 7, 2, 6, 9, 4]

  it('When given the METHODS worked example, then the split is level 2 with class 0 = levels ≤ 2', () => {
    // METHODS.md check #1 [D]: Otsu 1979 formula; scikit-image 0.26 threshold_otsu returns 2.
    const result = otsuFromHistogram(counts)
    expect(result.level).toBe(2)
    // METHODS.md §1.1 [D]: class means 11/17 and 74/19 (exact fractions).
    expect(result.mean0).toBeCloseTo(11 / 17, 12)
    expect(result.mean1).toBeCloseTo(74 / 19, 12)
  })

  it('When given the worked example, then σB² at the split is 1100401/418608', () => {
    // METHODS.md check #2 [D]: σB²(t*) = 1100401/418608 = 2.628715, tolerance 1e-6.
    expect(Math.abs(otsuFromHistogram(counts).betweenClassVariance - 1100401 / 418608)).toBeLessThan(1e-6)
  })

  it('When given the worked example, then σW² and σ² match and σW² + σB² = σ²', () => {
    // METHODS.md check #3 [D]: σW²(t*) = 0.490884, σ² = 3.119599, tolerance 1e-6.
    const result = otsuFromHistogram(counts)
    expect(Math.abs(result.withinClassVariance - 0.490884)).toBeLessThan(1e-6)
    expect(Math.abs(result.totalVariance - 3.119599)).toBeLessThan(1e-6)
    expect(result.withinClassVariance + result.betweenClassVariance).toBeCloseTo(result.totalVariance, 12)
  })

  it('When two modes are separated by empty levels (a tie), then the first maximum is kept', () => {
    // METHODS.md §1.1 [P]: ties → first maximum. Every split between 3 and 9 gives the same σB².
    const gapped = [0, 0, 0, 5, 0, 0, 0, 0, 0, 0, 5, 0]
    expect(otsuFromHistogram(gapped).level).toBe(3)
  })

  it('When only one level is occupied, then that level is returned with zero variances', () => {
    // METHODS.md §0 [P]: degenerate input returns a defined result (threshold = that value).
    const result = otsuFromHistogram([0, 0, 0, 0, 12, 0])
    expect(result).toEqual({
      level: 4,
      betweenClassVariance: 0,
      withinClassVariance: 0,
      totalVariance: 0,
      mean0: 4,
      mean1: 4,
    })
  })

  it('When the histogram is empty or all zero, then level 0 is returned without NaN', () => {
    for (const empty of [[], [0, 0, 0]]) {
      const result = otsuFromHistogram(empty)
      expect(result.level).toBe(0)
      expect(Object.values(result).every(Number.isFinite)).toBe(true)
    }
  })
})

describe('otsuThreshold', () => {
  it('When given a noisy bimodal 8-bit image, then the level equals image-js 1.7.0 computeThreshold otsu', () => {
    // Cross-check: image-js 1.7.0 `computeThreshold(image, { algorithm: 'otsu' })` (same O(L) formula).
    // Fixed seed 1979 so the image, and therefore the level, is reproducible.
    const image = bimodal8bit(128, 96, 1979)
    const ours = otsuThreshold(image)
    const reference = computeThreshold(new Image(128, 96, { colorModel: 'GREY', data: image.data }), {
      algorithm: 'otsu',
    })
    expect(ours.level).toBe(reference)
    expect(ours.threshold).toBe(reference)
    // Both modes lie on their own side of the split.
    expect(ours.threshold).toBeGreaterThan(80)
    expect(ours.threshold).toBeLessThan(170)
  })

  it('When the histogram has a gap, then our first-maximum level and image-js last-maximum level give the same mask', () => {
    // image-js 1.7.0 otsu keeps the last maximum (`>=`), we keep the first; the partition of the pixels is identical.
    const data = new Uint8Array(64)
    for (let i = 0; i < 64; i++) data[i] = i % 3 === 0 ? 200 : 50
    const ours = otsuThreshold({ width: 8, height: 8, data })
    const theirs = new Image(8, 8, { colorModel: 'GREY', data }).threshold({ algorithm: 'otsu' })
    expect(ours.threshold).toBe(50)
    for (let i = 0; i < 64; i++) expect(theirs.getBitByIndex(i)).toBe(data[i] > ours.threshold ? 1 : 0)
  })

  it('When the data are float, then I > threshold selects exactly the bins above the level (upper bin edge)', () => {
    // Fixed seed 7: two overlapping normal modes in float.
    const random = createRandom(7)
    const data = new Float32Array(5000)
    for (let i = 0; i < data.length; i++) data[i] = i % 2 ? random.normal(-1, 0.4) : random.normal(1.5, 0.6)
    const image: FloatImage = { width: 100, height: 50, data }
    const result = otsuThreshold(image, { bins: 64 })
    const histogram = intensityHistogram(image, 64)
    let above = 0
    for (let b = result.level + 1; b < 64; b++) above += histogram.counts[b]
    expect(data.filter((v) => v > result.threshold).length).toBe(above)
    expect(result.threshold).toBeCloseTo(histogram.min + (result.level + 1) * histogram.binWidth, 12)
  })

  it('When 16-bit data are given, then linear bins span min..max and the threshold separates the modes', () => {
    const random = createRandom(11) // fixed seed: reproducible 16-bit bimodal data
    const data = new Uint16Array(4096)
    for (let i = 0; i < data.length; i++) {
      data[i] = Math.round(i < 1024 ? random.normal(12000, 800) : random.normal(30000, 1500))
    }
    const result = otsuThreshold({ width: 64, height: 64, data })
    const histogram = intensityHistogram({ width: 64, height: 64, data })
    expect(histogram.exactLevels).toBe(false)
    expect(histogram.counts.reduce((a, b) => a + b, 0)).toBe(4096)
    let misclassified = 0
    for (let i = 0; i < data.length; i++) if ((data[i] > result.threshold) !== i >= 1024) misclassified++
    expect(misclassified).toBe(0)
  })

  it('When an ignore map excludes pixels, then they leave the histogram', () => {
    const data = new Uint8Array([10, 10, 200, 200, 255, 255])
    const ignore = new Uint8Array([0, 0, 0, 0, 1, 1])
    const histogram = intensityHistogram({ width: 6, height: 1, data }, 256, ignore)
    expect(histogram.counts[255]).toBe(0)
    expect(histogram.counts[10] + histogram.counts[200]).toBe(4)
    expect(otsuThreshold({ width: 6, height: 1, data }, { ignore }).threshold).toBe(10)
  })

  it.each([
    ['1×1 8-bit', { width: 1, height: 1, data: new Uint8Array([77]) }, 77],
    ['constant 8-bit', { width: 4, height: 3, data: new Uint8Array(12).fill(130) }, 130],
    ['constant float', { width: 4, height: 3, data: new Float32Array(12).fill(-2.5) }, -2.5],
    ['1×1 float', { width: 1, height: 1, data: new Float32Array([0.25]) }, 0.25],
  ])('When the image is %s, then the threshold is that value and nothing is foreground', (_name, image, value) => {
    // METHODS.md §0 [P]: constant image → threshold = that value.
    const result = otsuThreshold(image)
    expect(result.threshold).toBe(value)
    expect(result.betweenClassVariance).toBe(0)
  })

  it('When every pixel is ignored or not finite, then the threshold is 0 and finite', () => {
    const data = new Float32Array([Number.NaN, Number.POSITIVE_INFINITY, 1, 2])
    const ignore = new Uint8Array([0, 0, 1, 1])
    const result = otsuThreshold({ width: 2, height: 2, data }, { ignore })
    expect(result.threshold).toBe(0)
    expect(Number.isFinite(result.betweenClassVariance)).toBe(true)
  })
})

// Performance sanity (not asserted; tsx script, Node 20, shared 2-core machine, median of 5 warm runs): otsuThreshold
// on 1024² 8-bit 2–3.5 ms, on 1024² float (256 linear bins) about 10 ms; 2048²: 13–17 ms and 41–52 ms.
