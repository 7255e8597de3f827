import { describe, expect, it } from 'vitest'
import { labelBothPhases } from '@shared/analysis/connectedComponents'
import { removeSmallDomains } from '@shared/analysis/minimumAreaFilter'
import { createRandom } from '@shared/analysis/seededRandom'
import type { BinaryMask } from '@shared/analysis/types'

function paint(mask: BinaryMask, x0: number, y0: number, w: number, h: number, value: number): void {
  for (let y = y0; y < y0 + h; y++) for (let x = x0; x < x0 + w; x++) mask.data[y * mask.width + x] = value
}

function emptyMask(width: number, height: number): BinaryMask {
  return { width, height, data: new Uint8Array(width * height) }
}

const sortedSizes = (sizes: Uint32Array): number[] => Array.from(sizes.subarray(1)).sort((a, b) => a - b)

describe('removeSmallDomains', () => {
  it('When up domains of 1, 4, 9 and 30 px are filtered with A_min = 5, then 9 and 30 remain and 5 px are reassigned', () => {
    // METHODS.md check #10 [D]: sizes {1, 4, 9, 30}, A_min 5 → keep {9, 30}, 5 px reassigned.
    const mask = emptyMask(64, 64)
    paint(mask, 5, 5, 1, 1, 1)
    paint(mask, 20, 5, 2, 2, 1)
    paint(mask, 5, 30, 3, 3, 1)
    paint(mask, 30, 30, 5, 6, 1)
    expect(sortedSizes(labelBothPhases(mask).up.sizes)).toEqual([1, 4, 9, 30])
    const result = removeSmallDomains(mask, 5)
    expect(sortedSizes(labelBothPhases(result.mask).up.sizes)).toEqual([9, 30])
    expect(result.reassignedPixels).toBe(5)
    expect(result.reassignedFraction).toBeCloseTo(5 / 4096, 15)
  })

  it('When a small down hole sits inside an up domain, then it is reassigned to up', () => {
    const mask = emptyMask(32, 32)
    paint(mask, 4, 4, 20, 20, 1)
    paint(mask, 10, 10, 2, 1, 0)
    const result = removeSmallDomains(mask, 5)
    expect(result.reassignedPixels).toBe(2)
    expect(result.mask.data[10 * 32 + 10]).toBe(1)
    expect(labelBothPhases(result.mask).down.count).toBe(1)
  })

  it('When an up speck sits inside a small down hole, then both are absorbed by the surrounding up domain', () => {
    // Step 1 turns the speck down (hole grows to 9 px), step 2 turns the 9-px hole up: no swapped phases remain.
    const mask = emptyMask(32, 32)
    paint(mask, 4, 4, 20, 20, 1)
    paint(mask, 10, 10, 3, 3, 0)
    paint(mask, 11, 11, 1, 1, 1)
    const result = removeSmallDomains(mask, 10)
    const { up, down } = labelBothPhases(result.mask)
    expect(up.count).toBe(1)
    expect(up.sizes[1]).toBe(400)
    expect(down.count).toBe(1)
    expect(result.reassignedPixels).toBe(8)
  })

  it('When random noise is filtered, then no remaining component of either phase is smaller than A_min', () => {
    for (let seed = 1; seed <= 3; seed++) {
      const random = createRandom(seed) // fixed seeds 1..3
      const mask: BinaryMask = {
        width: 80,
        height: 60,
        data: Uint8Array.from({ length: 4800 }, () => (random() < 0.5 ? 1 : 0)),
      }
      const result = removeSmallDomains(mask, 6)
      const { up, down } = labelBothPhases(result.mask)
      expect(Math.min(...up.sizes.subarray(1), ...down.sizes.subarray(1))).toBeGreaterThanOrEqual(6)
      let changed = 0
      for (let i = 0; i < 4800; i++) if (result.mask.data[i] !== mask.data[i]) changed++
      expect(result.reassignedPixels).toBe(changed)
      // The input is not modified.
      expect(mask.data.some((v, i) => v !== result.mask.data[i])).toBe(true)
    }
  })

  it('When pixels are ignored, then they keep their value and the fraction is per analysed pixel', () => {
    const mask = emptyMask(10, 10)
    paint(mask, 2, 2, 1, 1, 1)
    paint(mask, 7, 7, 1, 1, 1)
    mask.ignore = new Uint8Array(100)
    mask.ignore[7 * 10 + 7] = 1
    mask.ignore.fill(1, 90, 100)
    const result = removeSmallDomains(mask, 3)
    expect(result.mask.data[2 * 10 + 2]).toBe(0)
    expect(result.mask.data[7 * 10 + 7]).toBe(1)
    expect(result.reassignedPixels).toBe(1)
    expect(result.reassignedFraction).toBeCloseTo(1 / 89, 15)
    expect(result.mask.ignore).toBe(mask.ignore)
  })

  it.each([
    ['1×1', { width: 1, height: 1, data: new Uint8Array([1]) }, 5],
    ['all up', { width: 3, height: 2, data: new Uint8Array(6).fill(1) }, 100],
    ['all down', { width: 3, height: 2, data: new Uint8Array(6) }, 100],
    ['A_min 1', { width: 2, height: 2, data: new Uint8Array([1, 0, 0, 1]) }, 1],
    ['0×0', { width: 0, height: 0, data: new Uint8Array(0) }, 5],
    ['fully ignored', { width: 2, height: 1, data: new Uint8Array([1, 0]), ignore: new Uint8Array([1, 1]) }, 5],
  ])('When the mask is %s, then nothing is reassigned', (_name, mask: BinaryMask, minArea) => {
    // METHODS.md §0 [P]: degenerate input gives a defined result; a single component has no surrounding phase.
    const result = removeSmallDomains(mask, minArea)
    expect(Array.from(result.mask.data)).toEqual(Array.from(mask.data))
    expect(result.reassignedPixels).toBe(0)
    expect(result.reassignedFraction).toBe(0)
  })
})
