import { describe, expect, it } from 'vitest'
import { medianFilter } from '@shared/analysis/medianFilter'
import { createRandom } from '@shared/analysis/seededRandom'
import type { FloatImage, GrayImage } from '@shared/analysis/types'

/** Brute-force reference: sort the clamped (edge-replicated) window of every pixel and take the middle value. */
function bruteMedian(image: GrayImage | FloatImage, r: number): Float32Array {
  const { width, height, data } = image
  const out = new Float32Array(width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const window: number[] = []
      for (let dy = -r; dy <= r; dy++) {
        for (let dx = -r; dx <= r; dx++) {
          const yy = Math.min(height - 1, Math.max(0, y + dy))
          const xx = Math.min(width - 1, Math.max(0, x + dx))
          window.push(data[yy * width + xx])
        }
      }
      window.sort((a, b) => a - b)
      out[y * width + x] = window[(window.length - 1) / 2]
    }
  }
  return out
}

describe('medianFilter', () => {
  it.each([1, 2] as const)('When filtering random images with radius %i, then every pixel equals a brute-force median', (r) => {
    const random = createRandom(31 + r) // fixed seeds 32, 33
    const float: FloatImage = {
      width: 29,
      height: 17,
      data: Float32Array.from({ length: 29 * 17 }, () => random.normal(0, 10)),
    }
    // 8-bit data take the sliding-histogram path, 16-bit and float the sorting path: both must match the reference.
    const bytes: GrayImage = { width: 13, height: 21, data: Uint8Array.from({ length: 273 }, () => random.int(256)) }
    const words: GrayImage = { width: 11, height: 9, data: Uint16Array.from({ length: 99 }, () => random.int(65536)) }
    for (const image of [float, bytes, words]) {
      expect(Array.from(medianFilter(image, r).data)).toEqual(Array.from(bruteMedian(image, r)))
    }
  })

  it('When a two-level image has isolated salt-and-pepper pixels, then a 3×3 median restores it exactly', () => {
    // Ground truth: vertical stripes of width 8 (levels 50 / 200); impulses at least 3 px apart and away from walls.
    const width = 64
    const height = 32
    const truth = new Uint8Array(width * height)
    for (let i = 0; i < truth.length; i++) truth[i] = Math.floor((i % width) / 8) % 2 ? 200 : 50
    const noisy = Uint8Array.from(truth)
    for (let y = 2; y < height; y += 5) for (let x = 3; x < width; x += 8) noisy[y * width + x] = (x + y) % 2 ? 255 : 0
    const filtered = medianFilter({ width, height, data: noisy }, 1)
    expect(Array.from(filtered.data)).toEqual(Array.from(truth))
  })

  it('When a straight domain wall is filtered with 5×5, then it stays in place (median preserves edges)', () => {
    const data = Float32Array.from({ length: 20 * 10 }, (_, i) => (i % 20 < 9 ? 1 : 3))
    expect(Array.from(medianFilter({ width: 20, height: 10, data }, 2).data)).toEqual(Array.from(data))
  })

  it.each([
    ['1×1', { width: 1, height: 1, data: new Float32Array([4.5]) }],
    ['1×1 8-bit', { width: 1, height: 1, data: new Uint8Array([200]) }],
    ['constant 8-bit', { width: 3, height: 7, data: new Uint8Array(21).fill(255) }],
    ['constant', { width: 5, height: 4, data: new Uint16Array(20).fill(1234) }],
    ['0×0', { width: 0, height: 0, data: new Uint8Array(0) }],
  ])('When the image is %s, then it is returned unchanged as float', (_name, image: GrayImage | FloatImage) => {
    // METHODS.md §0 [P]: degenerate input returns a defined result.
    for (const r of [1, 2] as const) {
      const out = medianFilter(image, r)
      expect(out.data).toBeInstanceOf(Float32Array)
      expect(Array.from(out.data)).toEqual(Array.from(image.data))
    }
  })
})
