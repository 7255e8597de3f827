import { describe, expect, it } from 'vitest'
import { kmeans } from 'ml-kmeans'
import { greedyHistogramSeeds, kmeans1DHistogram, kmeansSegment } from '@shared/analysis/kmeansSegmentation'
import { createRandom } from '@shared/analysis/seededRandom'
import type { GrayImage } from '@shared/analysis/types'

const otsuLevels = [0, 1, 2, 3, 4, 5]
const otsuCounts = [8, 7, 2, 6, 9, 4]

/** Expand a histogram into ml-kmeans points [[v], [v], …]. */
function expand(values: number[], counts: number[]): number[][] {
  return values.flatMap((v, i) => Array.from({ length: counts[i] }, () => [v]))
}

/**
 * Two-level 8-bit test image with exact ground truth: up discs (radius 9) on a down background, levels 90 / 150,
 * Gaussian noise σ = 12, on a width×height frame; `spacing` sets the disc density (smaller = more up area).
 */
function discImage(
  width: number,
  height: number,
  spacing: number,
  seed: number,
): { image: GrayImage; truth: Uint8Array } {
  const random = createRandom(seed)
  const truth = new Uint8Array(width * height)
  const data = new Uint8Array(width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const dx = (x % spacing) - spacing / 2
      const dy = (y % spacing) - spacing / 2
      const up = dx * dx + dy * dy <= 81 ? 1 : 0
      truth[y * width + x] = up
      data[y * width + x] = Math.min(255, Math.max(0, Math.round((up ? 150 : 90) + random.normal(0, 12))))
    }
  }
  return { image: { width, height, data }, truth }
}

describe('kmeans1DHistogram', () => {
  it('When clustering {0,0,1,1,9,9,10,10} with k = 2, then the centres are 0.5 and 9.5 with boundary 5', () => {
    // METHODS.md check #4 [D]: centres 0.5, 9.5, boundary 5.0, tolerance 1e-9.
    const result = kmeans1DHistogram([0, 1, 9, 10], [2, 2, 2, 2], [0, 1])
    expect(Math.abs(result.centres[0] - 0.5)).toBeLessThan(1e-9)
    expect(Math.abs(result.centres[1] - 9.5)).toBeLessThan(1e-9)
    expect(result.boundaries[0]).toBe(5)
    expect(result.converged).toBe(true)
    // Cross-check: ml-kmeans 7.0.1 on the expanded points with explicit initial centres.
    const ml = kmeans([[0], [0], [1], [1], [9], [9], [10], [10]], 2, { initialization: [[0], [1]] })
    const mlCentres = ml.centroids.map((c) => c[0]).sort((a, b) => a - b)
    expect(Math.abs(mlCentres[0] - 0.5)).toBeLessThan(1e-9)
    expect(Math.abs(mlCentres[1] - 9.5)).toBeLessThan(1e-9)
  })

  it('When Lloyd starts from any two distinct seeds in [0, 5] on the Otsu histogram, then it ends at 11/17 and 74/19', () => {
    // METHODS.md check #5 [D]: Ridler–Calvard fixed point (R); same partition as Otsu check #1 (levels ≤ 2).
    const seeds = [0, 1, 2, 3, 4, 5, 0.3, 2.5, 4.99]
    for (const a of seeds) {
      for (const b of seeds) {
        if (a >= b) continue
        const result = kmeans1DHistogram(otsuLevels, otsuCounts, [a, b])
        expect(Math.abs(result.centres[0] - 11 / 17)).toBeLessThan(1e-6)
        expect(Math.abs(result.centres[1] - 74 / 19)).toBeLessThan(1e-6)
        expect(result.boundaries[0]).toBeGreaterThan(2)
        expect(result.boundaries[0]).toBeLessThan(3)
      }
    }
  })

  it('When ml-kmeans 7.0.1 runs on the expanded Otsu histogram, then it agrees with the histogram Lloyd', () => {
    // Cross-check of check #5 with the general-purpose library (explicit centres, no random seeding).
    for (const [a, b] of [[0, 1], [4, 5], [0, 5], [2, 3]]) {
      const ml = kmeans(expand(otsuLevels, otsuCounts), 2, { initialization: [[a], [b]] })
      const centres = ml.centroids.map((c) => c[0]).sort((x, y) => x - y)
      expect(Math.abs(centres[0] - 11 / 17)).toBeLessThan(1e-6)
      expect(Math.abs(centres[1] - 74 / 19)).toBeLessThan(1e-6)
    }
  })

  it('When the histogram is empty, then the sorted initial centres are returned', () => {
    const result = kmeans1DHistogram([1, 2], [0, 0], [5, 1])
    expect(result.centres).toEqual([1, 5])
    expect(result.inertia).toBe(0)
  })
})

describe('greedyHistogramSeeds', () => {
  it('When seeding on the Otsu histogram, then it picks 3 (weighted median) then 0', () => {
    // METHODS.md §1.2 check [D]: greedy seeding on the §1.1 histogram picks 3 then 0.
    expect(greedyHistogramSeeds(otsuLevels, otsuCounts, 2)).toEqual([3, 0])
  })

  it('When fewer distinct values than k exist, then fewer seeds are returned', () => {
    expect(greedyHistogramSeeds([4, 7], [5, 0], 3)).toEqual([4])
    expect(greedyHistogramSeeds([], [], 2)).toEqual([])
  })
})

describe('kmeansSegment', () => {
  it('When a noisy two-level image is segmented with 2 classes, then ≥ 99 % of pixels match the true partition', () => {
    const { image, truth } = discImage(240, 180, 30, 42) // fixed seed 42 for the noise
    const { labels, upMask, centres } = kmeansSegment(image, { classes: 2 })
    let same = 0
    for (let i = 0; i < truth.length; i++) if (labels[i] === truth[i]) same++
    expect(same / truth.length).toBeGreaterThanOrEqual(0.99)
    expect(Array.from(upMask.data)).toEqual(Array.from(labels))
    // Label 0 is the darker class; the centre intensities sit near the true levels.
    expect(centres[0][0]).toBeLessThan(centres[1][0])
    expect(Math.abs(centres[0][0] - 90)).toBeLessThan(6)
    expect(Math.abs(centres[1][0] - 150)).toBeLessThan(6)
  })

  it('When the up phase is a small minority and the frame exceeds the 20,000-pixel fit sample, then it is still recovered', () => {
    const { image, truth } = discImage(400, 300, 48, 7) // fixed seed 7; discs cover about 11 % of the frame
    const { labels } = kmeansSegment(image, { classes: 2, window: 3 })
    let same = 0
    for (let i = 0; i < truth.length; i++) if (labels[i] === truth[i]) same++
    expect(same / truth.length).toBeGreaterThanOrEqual(0.99)
  })

  it('When the noise is as large as half the contrast, then the local features keep ≥ 99 % where intensity alone fails', () => {
    // Levels 90 / 150 with σ = 25 and 11 % up discs: intensity alone (window 1) misplaces the split.
    const random = createRandom(1) // fixed seed 1
    const width = 400
    const height = 300
    const truth = new Uint8Array(width * height)
    const data = new Uint8Array(width * height)
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        const dx = (x % 48) - 24
        const dy = (y % 48) - 24
        truth[y * width + x] = dx * dx + dy * dy <= 81 ? 1 : 0
        const level = truth[y * width + x] ? 150 : 90
        data[y * width + x] = Math.min(255, Math.max(0, Math.round(level + random.normal(0, 25))))
      }
    }
    const accuracy = (window: number): number => {
      const { labels } = kmeansSegment({ width, height, data }, { classes: 2, window })
      return labels.reduce((n, v, i) => n + (v === truth[i] ? 1 : 0), 0) / truth.length
    }
    expect(accuracy(1)).toBeLessThan(0.8)
    expect(accuracy(5)).toBeGreaterThanOrEqual(0.99)
  })

  it('When a three-level image is segmented with 3 classes, then labels follow the levels and up is the brightest', () => {
    const random = createRandom(9) // fixed seed 9
    const width = 150
    const height = 90
    const data = new Float32Array(width * height)
    const truth = new Uint8Array(width * height)
    for (let i = 0; i < data.length; i++) {
      const band = Math.floor((i % width) / 50)
      truth[i] = band
      data[i] = [20, 60, 100][band] + random.normal(0, 5)
    }
    const { labels, upMask } = kmeansSegment({ width, height, data }, { classes: 3 })
    let same = 0
    for (let i = 0; i < truth.length; i++) if (labels[i] === truth[i]) same++
    expect(same / truth.length).toBeGreaterThanOrEqual(0.99)
    for (let i = 0; i < truth.length; i++) expect(upMask.data[i]).toBe(labels[i] === 2 ? 1 : 0)
  })

  it('When the same image is segmented twice, then the labels and centres are identical', () => {
    const { image } = discImage(160, 120, 30, 123) // fixed seed 123
    const first = kmeansSegment(image, { classes: 2 })
    const second = kmeansSegment({ ...image, data: Uint8Array.from(image.data) }, { classes: 2 })
    expect(second.centres).toEqual(first.centres)
    expect(Array.from(second.labels)).toEqual(Array.from(first.labels))
  })

  it('When pixels are ignored, then they get label 0 and the up mask carries the ignore map', () => {
    const { image } = discImage(60, 60, 30, 5) // fixed seed 5
    const ignore = new Uint8Array(3600)
    ignore.fill(1, 0, 600)
    const { labels, upMask } = kmeansSegment(image, { classes: 2, ignore })
    expect(labels.subarray(0, 600).every((v) => v === 0)).toBe(true)
    expect(upMask.ignore).toBe(ignore)
  })

  it.each([
    ['constant', { width: 8, height: 6, data: new Uint8Array(48).fill(77) }, 77],
    ['1×1', { width: 1, height: 1, data: new Uint8Array([12]) }, 0],
    ['0×0', { width: 0, height: 0, data: new Uint8Array(0) }, 0],
  ])('When the image is %s, then every pixel is label 0 (down) and the centres are finite', (_name, image: GrayImage, value) => {
    // METHODS.md §0 [P]: no contrast to split → all one phase, no NaN.
    for (const classes of [2, 3] as const) {
      const result = kmeansSegment(image, { classes })
      expect(result.labels.every((v) => v === 0)).toBe(true)
      expect(result.upMask.data.every((v) => v === 0)).toBe(true)
      expect(result.centres).toHaveLength(classes)
      expect(result.centres.flat().every(Number.isFinite)).toBe(true)
      if (image.width * image.height > 1) expect(result.centres[0][0]).toBe(value)
    }
  })
})
