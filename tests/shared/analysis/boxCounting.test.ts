import { describe, expect, it } from 'vitest'
import { boxCountingDimension } from '@shared/analysis/boxCounting'
import type { BinaryMask } from '@shared/analysis/types'

/** Digital disk: pixels with (x − cx)² + (y − cy)² ≤ R² in a (2R + 20)² image, centre off the pixel grid. */
function disk(radius: number): BinaryMask {
  const size = 2 * radius + 20
  const cx = radius + 10.3
  const cy = radius + 9.6
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = (x - cx) ** 2 + (y - cy) ** 2 <= radius * radius ? 1 : 0
  return { width: size, height: size, data }
}

function filledSquare(side: number): BinaryMask {
  const size = side + 20
  const data = new Uint8Array(size * size)
  for (let y = 10; y < 10 + side; y++) for (let x = 10; x < 10 + side; x++) data[y * size + x] = 1
  return { width: size, height: size, data }
}

/** Koch curve polyline after `level` iterations of the 4-segment generator on a base of `length` px. */
function kochCurve(level: number, length: number): { x: number; y: number }[] {
  let points = [
    { x: 0, y: 0 },
    { x: length, y: 0 },
  ]
  const c = Math.cos(-Math.PI / 3)
  const s = Math.sin(-Math.PI / 3)
  for (let l = 0; l < level; l++) {
    const next = [points[0]]
    for (let i = 0; i + 1 < points.length; i++) {
      const a = points[i]
      const b = points[i + 1]
      const dx = (b.x - a.x) / 3
      const dy = (b.y - a.y) / 3
      const p1 = { x: a.x + dx, y: a.y + dy }
      next.push(p1, { x: p1.x + dx * c - dy * s, y: p1.y + dx * s + dy * c }, { x: a.x + 2 * dx, y: a.y + 2 * dy }, b)
    }
    points = next
  }
  return points
}

describe('boxCountingDimension', () => {
  it.each([30, 60, 100, 200])('When the wall is the boundary of a digital disk of radius %i, then D = 1 within 0.05', (radius) => {
    // Constructed: a smooth closed curve has box-counting dimension 1 (computed here: 1.011–1.028).
    const result = boxCountingDimension(disk(radius))
    expect(Math.abs(result.dimension! - 1)).toBeLessThan(0.05)
    expect(result.dimensionStdErr!).toBeGreaterThan(0)
    expect(result.sizes[0]).toBe(1)
    // Sizes are powers of two up to a quarter of the wall's bounding box (2R + 1 px).
    expect(result.sizes[result.sizes.length - 1]).toBeLessThanOrEqual((2 * radius + 1) / 4)
    expect(result.sizes.every((e, i) => e === 2 ** i)).toBe(true)
  })

  it('When the wall is the boundary of a filled square, then D = 1 and the counts follow 4(⌈s/ε⌉ − 1)', () => {
    // [D]: the wall pixels (up pixels with an 8-neighbour of the other phase) are the square's outer ring of side s;
    // boxes aligned with its bounding box cover it with 4(⌈s/ε⌉ − 1) boxes.
    for (const side of [100, 400]) {
      const result = boxCountingDimension(filledSquare(side))
      result.sizes.forEach((eps, i) => expect(result.counts[i]).toBe(4 * (Math.ceil(side / eps) - 1)))
      expect(Math.abs(result.dimension! - 1)).toBeLessThan(0.02)
    }
  })

  it('When the square side is an exact multiple of the largest box, then the finite-size bias is at most +0.06', () => {
    // [D] (documented in the module header): side 160, boxes up to 32 ⇒ D = 1.057; fitting finer boxes (maxBox 8)
    // brings it to within 0.03.
    expect(boxCountingDimension(filledSquare(160)).dimension!).toBeCloseTo(1.057, 3)
    const finer = boxCountingDimension(filledSquare(160), { maxBox: 8 })
    expect(finer.sizes).toEqual([1, 2, 4, 8])
    expect(Math.abs(finer.dimension! - 1)).toBeLessThan(0.03)
  })

  it('When the wall is a closed polyline circle, then D = 1 within 0.05', () => {
    // Constructed: 400-gon of radius 100 px rasterised at ¼-px steps.
    const polyline = Array.from({ length: 400 }, (_, i) => ({
      x: 150 + 100 * Math.cos((2 * Math.PI * i) / 400),
      y: 150 + 100 * Math.sin((2 * Math.PI * i) / 400),
    }))
    const result = boxCountingDimension({ polyline, closed: true })
    expect(Math.abs(result.dimension! - 1)).toBeLessThan(0.05)
  })

  it('When the wall is a Koch curve (level 7), then D = log 4 / log 3 within 0.05', () => {
    // [D]: the Koch curve has similarity dimension ln 4/ln 3 = 1.26186 (Mandelbrot 1982 [M]); base 6561 px so the
    // smallest segment is 3 px; computed here: 1.248.
    const result = boxCountingDimension({ polyline: kochCurve(7, 6561) })
    expect(Math.abs(result.dimension! - Math.log(4) / Math.log(3))).toBeLessThan(0.05)
  })

  it('When only 4-neighbours define wall pixels, then the thinner curve lowers D (the documented bias)', () => {
    // [D] (module header): digital disk R = 100, D ≈ 0.92 with the 8-connected boundary vs ≈ 1.01 by default.
    const thin = boxCountingDimension(disk(100), { neighbours: 4 })
    const thick = boxCountingDimension(disk(100))
    expect(thin.dimension!).toBeLessThan(thick.dimension! - 0.05)
    expect(thin.counts[0]).toBeLessThan(thick.counts[0])
  })

  it('When there is no wall or it is tiny, then the dimension is null, never NaN', () => {
    // METHODS §0 [P]: empty mask, one phase, no points, a wall under 8 px.
    const none = { dimension: null, dimensionStdErr: null, sizes: [], counts: [] }
    expect(boxCountingDimension({ width: 0, height: 0, data: new Uint8Array(0) })).toEqual(none)
    expect(boxCountingDimension({ width: 5, height: 5, data: new Uint8Array(25) })).toEqual(none)
    expect(boxCountingDimension({ width: 5, height: 5, data: new Uint8Array(25).fill(1) })).toEqual(none)
    expect(boxCountingDimension({ polyline: [] })).toEqual(none)
    const tiny = boxCountingDimension(filledSquare(3))
    expect(tiny.dimension).toBeNull()
    expect(tiny.sizes).toEqual([1])
    expect(tiny.counts).toEqual([8])
  })
})
