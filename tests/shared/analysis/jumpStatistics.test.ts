import { describe, expect, it } from 'vitest'
import { flippedClusters, globalJumps } from '@shared/analysis/jumpStatistics'
import { createRandom } from '@shared/analysis/seededRandom'
import type { BinaryMask } from '@shared/analysis/types'

function mask(width: number, height: number, fill = 0): BinaryMask {
  return { width, height, data: new Uint8Array(width * height).fill(fill) }
}

function paintBlock(m: BinaryMask, x0: number, y0: number, w: number, h: number, value: number): void {
  for (let y = y0; y < y0 + h; y++) for (let x = x0; x < x0 + w; x++) m.data[y * m.width + x] = value
}

/** M/Ms of a binary map by METHODS §5.1 [P]: 2·A_A(up) − 1. */
function binaryMagnetization(m: BinaryMask): number {
  let up = 0
  for (const v of m.data) up += v
  return (2 * up) / m.data.length - 1
}

describe('flippedClusters', () => {
  it('When a 4×3 and a 5×6 block flip up in a 64×64 frame, then sizes {12, 30} and ΔM/Ms = 0.020508', () => {
    // METHODS.md check #36 [D]: ΔM/Ms = 2·42/4096 = 0.0205078.
    const before = mask(64, 64)
    const after = mask(64, 64)
    paintBlock(after, 10, 10, 4, 3, 1)
    paintBlock(after, 30, 40, 5, 6, 1)
    const result = flippedClusters(before, after)
    expect(result.downToUp.sort((a, b) => a - b)).toEqual([12, 30])
    expect(result.upToDown).toEqual([])
    expect(result.sizes.sort((a, b) => a - b)).toEqual([12, 30])
    expect(result.deltaM).toBe((2 * 42) / 4096)
    expect(result.deltaM).toBeCloseTo(0.020508, 6)
    expect(result.censored).toBe(0)
    expect(result.analysedPixels).toBe(4096)
  })

  it('When domains shrink and grow at once, then up→down and down→up clusters are separated with signed ΔM', () => {
    const before = mask(32, 32)
    paintBlock(before, 4, 4, 10, 10, 1)
    const after = mask(32, 32)
    paintBlock(after, 4, 4, 10, 10, 1)
    paintBlock(after, 4, 4, 3, 3, 0) // 9 px up→down
    paintBlock(after, 20, 20, 2, 2, 1) // 4 px down→up
    const result = flippedClusters(before, after)
    expect(result.upToDown).toEqual([9])
    expect(result.downToUp).toEqual([4])
    // ΔM equals the change of the §5.1 binary magnetization [D].
    expect(result.deltaM).toBeCloseTo(binaryMagnetization(after) - binaryMagnetization(before), 14)
  })

  it('When two flipped pixels touch only at a corner, then they form one 8-connected cluster', () => {
    // METHODS §5.3 [P]: clusters are labelled 8-connected.
    const before = mask(8, 8)
    const after = mask(8, 8)
    after.data[2 * 8 + 2] = 1
    after.data[3 * 8 + 3] = 1
    expect(flippedClusters(before, after).downToUp).toEqual([2])
  })

  it('When clusters are below minArea, then they leave the size list but still count in ΔM', () => {
    // METHODS §1.5 minimum-area filter [P] against flicker.
    const before = mask(16, 16)
    const after = mask(16, 16)
    after.data[5 * 16 + 5] = 1
    paintBlock(after, 9, 9, 3, 2, 1)
    const result = flippedClusters(before, after, 4)
    expect(result.sizes).toEqual([6])
    expect(result.deltaM).toBeCloseTo((2 * 7) / 256, 14)
  })

  it('When a cluster touches the image edge, then it is censored and reported separately', () => {
    // METHODS §5.3 [P]: edge clusters are truncated.
    const before = mask(20, 20)
    const after = mask(20, 20)
    paintBlock(after, 0, 5, 3, 3, 1)
    paintBlock(after, 8, 8, 2, 2, 1)
    const result = flippedClusters(before, after)
    expect(result.sizes).toEqual([4])
    expect(result.censored).toBe(1)
    expect(result.censoredSizes).toEqual([9])
  })

  it('When pixels are ignored, then they leave the analysed area and clusters touching them are censored', () => {
    const before = mask(10, 10)
    const after = mask(10, 10)
    paintBlock(after, 4, 4, 2, 2, 1)
    after.ignore = new Uint8Array(100)
    after.ignore[4 * 10 + 6] = 1
    before.ignore = new Uint8Array(100)
    before.ignore[0] = 1
    const result = flippedClusters(before, after)
    expect(result.analysedPixels).toBe(98)
    expect(result.censored).toBe(1)
    expect(result.sizes).toEqual([])
    expect(result.deltaM).toBeCloseTo((2 * 4) / 98, 14)
  })

  it('When a flip does not persist in the next frame, then it is dropped from the sizes as flicker', () => {
    // METHODS §5.3 [P]: require a flipped pixel to persist in the next frame.
    const before = mask(16, 16)
    const after = mask(16, 16)
    paintBlock(after, 3, 3, 2, 2, 1) // flicker: back to 0 in the next frame
    paintBlock(after, 9, 9, 3, 3, 1) // real jump
    const next = mask(16, 16)
    paintBlock(next, 9, 9, 3, 3, 1)
    const result = flippedClusters(before, after, 1, { persistFrame: next })
    expect(result.sizes).toEqual([9])
    expect(result.deltaM).toBeCloseTo((2 * 13) / 256, 14)
  })

  it('When random frames are compared, then the cluster sizes plus small and censored ones add up to the flips', () => {
    // Property [D]: every flipped pixel lies in exactly one listed, small or censored cluster; fixed seed 36.
    const random = createRandom(36)
    const before = mask(40, 30)
    const after = mask(40, 30)
    for (let i = 0; i < before.data.length; i++) {
      before.data[i] = random() < 0.5 ? 1 : 0
      after.data[i] = random() < 0.2 ? 1 - before.data[i] : before.data[i]
    }
    let flips = 0
    for (let i = 0; i < before.data.length; i++) flips += before.data[i] !== after.data[i] ? 1 : 0
    const result = flippedClusters(before, after)
    const listed = [...result.sizes, ...result.censoredSizes].reduce((a, b) => a + b, 0)
    expect(listed).toBe(flips)
    expect(result.deltaM).toBeCloseTo(binaryMagnetization(after) - binaryMagnetization(before), 14)
  })

  it('When frames carry no ignore map, then the packed route gives what the per-pixel route gives with an empty one', () => {
    // Two routes of the same method (METHODS §5.3): frames without ignore maps are compared on packed rows; an
    // all-zero ignore map takes the per-pixel route. Sizes off the 32-pixel grid (37, 70) exercise the padding bits.
    const random = createRandom(41) // fixed seed 41
    for (const [width, height] of [[37, 23], [64, 64], [70, 5], [1, 9]]) {
      const before = mask(width, height)
      const after = mask(width, height)
      const next = mask(width, height)
      for (let i = 0; i < before.data.length; i++) {
        before.data[i] = random() < 0.5 ? 1 : 0
        after.data[i] = random() < 0.3 ? 1 - before.data[i] : before.data[i]
        next.data[i] = random() < 0.2 ? 1 - after.data[i] : after.data[i]
      }
      const none = new Uint8Array(width * height)
      const withEmptyIgnore = (m: BinaryMask): BinaryMask => ({ ...m, ignore: none })
      for (const minArea of [1, 3]) {
        expect(flippedClusters(before, after, minArea)).toEqual(flippedClusters(withEmptyIgnore(before), after, minArea))
        expect(flippedClusters(before, after, minArea, { persistFrame: next })).toEqual(
          flippedClusters(withEmptyIgnore(before), after, minArea, { persistFrame: next }),
        )
      }
    }
  })

  it('When frames are identical, empty or differ in size, then nothing flips, or a RangeError names the sizes', () => {
    const a = mask(8, 8, 1)
    expect(flippedClusters(a, mask(8, 8, 1))).toMatchObject({ sizes: [], deltaM: 0, censored: 0 })
    expect(flippedClusters(mask(0, 0), mask(0, 0))).toMatchObject({ sizes: [], deltaM: 0, analysedPixels: 0 })
    expect(() => flippedClusters(a, mask(8, 9))).toThrow(/8×8 vs 8×9/)
  })
})

describe('globalJumps', () => {
  it('When M is given per frame, then ΔM_i = M_{i+1} − M_i is listed in frame order', () => {
    // METHODS §5.3 [P].
    expect(globalJumps([-1, -0.5, -0.5, 0.25, 1])).toEqual([
      { fromFrame: 0, toFrame: 1, deltaM: 0.5 },
      { fromFrame: 1, toFrame: 2, deltaM: 0 },
      { fromFrame: 2, toFrame: 3, deltaM: 0.75 },
      { fromFrame: 3, toFrame: 4, deltaM: 0.75 },
    ])
  })

  it('When a threshold is given, then smaller steps are left out; NaN frames skip their steps', () => {
    expect(globalJumps([0, 0.01, 0.5, Number.NaN, 0.6], 0.1)).toEqual([{ fromFrame: 1, toFrame: 2, deltaM: 0.49 }])
  })

  it('When there are fewer than two frames, then there is no jump', () => {
    expect(globalJumps([])).toEqual([])
    expect(globalJumps([0.3])).toEqual([])
  })
})
