import { describe, expect, it } from 'vitest'
import { closeMask, dilateMask, erodeMask, fillHoles, openMask } from '@shared/analysis/morphology'
import { createRandom } from '@shared/analysis/seededRandom'
import type { BinaryMask } from '@shared/analysis/types'

function maskFrom(width: number, height: number, up: Array<[number, number]>): BinaryMask {
  const data = new Uint8Array(width * height)
  for (const [x, y] of up) data[y * width + x] = 1
  return { width, height, data }
}

function block(x0: number, y0: number, w: number, h: number): Array<[number, number]> {
  const out: Array<[number, number]> = []
  for (let y = y0; y < y0 + h; y++) for (let x = x0; x < x0 + w; x++) out.push([x, y])
  return out
}

function randomMask(width: number, height: number, fill: number, seed: number): BinaryMask {
  const random = createRandom(seed)
  return { width, height, data: Uint8Array.from({ length: width * height }, () => (random() < fill ? 1 : 0)) }
}

function invert(mask: BinaryMask): BinaryMask {
  return { ...mask, data: mask.data.map((v) => 1 - v) }
}

const area = (mask: BinaryMask): number => mask.data.reduce((a, b) => a + b, 0)

/** Brute-force reference: min (erosion) or max (dilation) over the window clipped to the image (= edge replication). */
function bruteForce(mask: BinaryMask, r: number, erode: boolean): Uint8Array {
  const { width, height, data } = mask
  const out = new Uint8Array(width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      let v = erode ? 1 : 0
      for (let dy = -r; dy <= r; dy++) {
        for (let dx = -r; dx <= r; dx++) {
          const yy = Math.min(height - 1, Math.max(0, y + dy))
          const xx = Math.min(width - 1, Math.max(0, x + dx))
          v = erode ? Math.min(v, data[yy * width + xx]) : Math.max(v, data[yy * width + xx])
        }
      }
      out[y * width + x] = v
    }
  }
  return out
}

describe('openMask and closeMask', () => {
  it('When a 3×3 block and an isolated pixel are opened with a 3×3 square, then the 9 block pixels remain', () => {
    // METHODS.md check #6 [D]: 9×9 image, 3×3 block + one isolated pixel, opening 3×3 → 9 px (scipy.ndimage).
    const mask = maskFrom(9, 9, [...block(1, 1, 3, 3), [6, 6]])
    const opened = openMask(mask, 1)
    expect(area(opened)).toBe(9)
    expect(Array.from(opened.data)).toEqual(Array.from(maskFrom(9, 9, block(1, 1, 3, 3)).data))
  })

  it('When a 5×5 block with one interior hole is closed with a 3×3 square, then it has 25 pixels', () => {
    // METHODS.md check #7 [D]: 5×5 block with one interior hole, closing 3×3 → 25 px (scipy.ndimage).
    const mask = maskFrom(9, 9, block(2, 2, 5, 5).filter(([x, y]) => !(x === 4 && y === 4)))
    expect(area(mask)).toBe(24)
    const closed = closeMask(mask, 1)
    expect(area(closed)).toBe(25)
    expect(Array.from(closed.data)).toEqual(Array.from(maskFrom(9, 9, block(2, 2, 5, 5)).data))
  })

  it('When a domain touches the border, then opening keeps it whole (edge replication, not zero padding)', () => {
    // METHODS.md §1.3 [P]: zero padding would erode border domains.
    const mask = maskFrom(8, 8, block(0, 0, 3, 8))
    expect(Array.from(openMask(mask).data)).toEqual(Array.from(mask.data))
    const full = { width: 5, height: 4, data: new Uint8Array(20).fill(1) }
    expect(area(erodeMask(full, 2))).toBe(20)
  })

  it.each([1, 2])('When eroding and dilating random masks with radius %i, then the result equals a brute-force window', (r) => {
    for (let seed = 1; seed <= 3; seed++) {
      const mask = randomMask(37, 23, 0.6, seed) // fixed seeds 1..3, odd sizes to exercise both borders
      expect(Array.from(erodeMask(mask, r).data)).toEqual(Array.from(bruteForce(mask, r, true)))
      expect(Array.from(dilateMask(mask, r).data)).toEqual(Array.from(bruteForce(mask, r, false)))
    }
  })

  it('When applied to both phases, then opening the up phase equals closing the down phase', () => {
    // METHODS.md §1.3 [D]: duality of opening and closing with a symmetric SE.
    for (let seed = 10; seed < 13; seed++) {
      const mask = randomMask(40, 30, 0.5, seed) // fixed seeds 10..12
      expect(Array.from(openMask(mask).data)).toEqual(Array.from(invert(closeMask(invert(mask))).data))
      expect(Array.from(closeMask(mask, 2).data)).toEqual(Array.from(invert(openMask(invert(mask), 2)).data))
    }
  })

  it('When filters are repeated, then opening, closing and close∘open are idempotent and ordered', () => {
    const mask = randomMask(48, 48, 0.5, 99) // fixed seed 99
    const opened = openMask(mask)
    const closed = closeMask(mask)
    expect(Array.from(openMask(opened).data)).toEqual(Array.from(opened.data))
    expect(Array.from(closeMask(closed).data)).toEqual(Array.from(closed.data))
    const filtered = closeMask(openMask(mask))
    expect(Array.from(closeMask(openMask(filtered)).data)).toEqual(Array.from(filtered.data))
    // Opening is anti-extensive, closing extensive.
    for (let i = 0; i < mask.data.length; i++) {
      expect(opened.data[i]).toBeLessThanOrEqual(mask.data[i])
      expect(closed.data[i]).toBeGreaterThanOrEqual(mask.data[i])
    }
  })

  it('When isolated specks smaller than the SE are scattered on a down background, then opening removes all of them', () => {
    const random = createRandom(5) // fixed seed 5
    const mask: BinaryMask = { width: 64, height: 64, data: new Uint8Array(64 * 64) }
    for (let k = 0; k < 40; k++) {
      // Specks are single pixels or 2-pixel bars, narrower than 3 px in one direction.
      const x = 1 + random.int(61)
      const y = 1 + random.int(61)
      mask.data[y * 64 + x] = 1
      if (k % 2) mask.data[y * 64 + x + 1] = 1
    }
    expect(area(openMask(mask))).toBe(0)
  })

  it('When the mask carries an ignore map, then it is passed through', () => {
    const mask: BinaryMask = { ...maskFrom(3, 3, [[1, 1]]), ignore: new Uint8Array(9).fill(1) }
    expect(openMask(mask).ignore).toBe(mask.ignore)
  })

  it.each([
    ['1×1 up', { width: 1, height: 1, data: new Uint8Array([1]) }],
    ['1×1 down', { width: 1, height: 1, data: new Uint8Array([0]) }],
    ['all up', { width: 4, height: 3, data: new Uint8Array(12).fill(1) }],
    ['all down', { width: 4, height: 3, data: new Uint8Array(12) }],
    ['0×0', { width: 0, height: 0, data: new Uint8Array(0) }],
  ])('When the mask is %s, then every operation returns it unchanged', (_name, mask: BinaryMask) => {
    for (const op of [erodeMask, dilateMask, openMask, closeMask, fillHoles]) {
      expect(Array.from(op(mask).data)).toEqual(Array.from(mask.data))
    }
  })
})

describe('fillHoles', () => {
  it('When a down region is enclosed by up, then it becomes up; down regions at the border stay', () => {
    const ring = block(1, 1, 5, 5).filter(([x, y]) => !(x >= 2 && x <= 4 && y >= 2 && y <= 4))
    const mask = maskFrom(8, 8, ring)
    const filled = fillHoles(mask)
    expect(area(filled)).toBe(25)
    expect(filled.data[0]).toBe(0)
    expect(filled.data[7 * 8 + 7]).toBe(0)
  })

  it('When a hole leaks to the outside only through a diagonal step, then 4-connectivity fills it and 8 does not', () => {
    // 5×5: 3×3 up ring around the down centre (2,2) with its corner (3,3) also down; (3,3) reaches the border
    // through (4,3), while the centre touches (3,3) only diagonally.
    const mask = maskFrom(5, 5, block(1, 1, 3, 3).filter(([x, y]) => !(x === 2 && y === 2) && !(x === 3 && y === 3)))
    expect(area(fillHoles(mask, 4))).toBe(area(mask) + 1)
    expect(area(fillHoles(mask, 8))).toBe(area(mask))
  })
})

// Performance sanity (not asserted; tsx script, Node 20, shared 2-core machine under load, median of 5 warm runs):
// openMask/closeMask radius 1 on a 1024² labyrinth-like mask 22–56 ms (radius 3 about the same: O(1) per pixel),
// fillHoles 12–27 ms; 2048²: 90–285 ms and 50–150 ms.
