import { describe, expect, it } from 'vitest'
import { labelComponents } from '@shared/analysis/connectedComponents'
import { countUp, drawWallLine, fillPolygon, floodFill, paintDisc, paintStroke, type MaskPlane } from '@/maskRaster'

function blank(width: number, height: number, value = 0): MaskPlane {
  return { width, height, data: new Uint8Array(width * height).fill(value) }
}

function at(mask: MaskPlane, x: number, y: number): number {
  return mask.data[y * mask.width + x]
}

describe('paintDisc', () => {
  // [D]: a disc of radius r covers area πr²; counting pixel centres inside it approaches that with an error that
  // grows more slowly than the perimeter (Gauss circle problem), so within 1.5 % from r = 10 px.
  it.each([10, 20, 40.5])('When a disc of radius %s px is painted, then its pixel count is πr² within 1.5 %', (r) => {
    const mask = blank(128, 128)
    const rect = paintDisc(mask, 64, 64, r, 1)
    const area = countUp(mask.data)
    expect(Math.abs(area - Math.PI * r * r) / (Math.PI * r * r)).toBeLessThan(0.015)
    // The reported rectangle is exactly the painted pixels' bounding box.
    expect(rect).toEqual({ x0: 64 - Math.ceil(r - 0.5), y0: 64 - Math.ceil(r - 0.5), x1: 64 + Math.ceil(r - 0.5), y1: 64 + Math.ceil(r - 0.5) })
  })

  it('When the tip is smaller than a pixel, then exactly the pixel under it is painted', () => {
    const mask = blank(8, 8)
    paintDisc(mask, 3.7, 5.2, 0.2, 1)
    expect(countUp(mask.data)).toBe(1)
    expect(at(mask, 3, 5)).toBe(1)
  })

  it('When the pixels already have the phase, then nothing changes and no rectangle is reported', () => {
    const mask = blank(16, 16, 1)
    expect(paintDisc(mask, 8, 8, 4, 1)).toBeNull()
  })

  it('When a stroke is painted between two far points, then it leaves no gap (a band 2r wide)', () => {
    const mask = blank(100, 20)
    paintStroke(mask, 5, 10, 95, 10, 3, 1)
    for (let x = 5; x < 95; x++) for (let y = 8; y <= 11; y++) expect(at(mask, x, y)).toBe(1)
    expect(at(mask, 50, 3)).toBe(0)
  })
})

describe('floodFill', () => {
  it('When two up squares touch only at a corner, then filling one leaves the other (4-connected)', () => {
    const mask = blank(10, 10)
    for (let y = 1; y < 4; y++) for (let x = 1; x < 4; x++) mask.data[y * 10 + x] = 1
    for (let y = 4; y < 7; y++) for (let x = 4; x < 7; x++) mask.data[y * 10 + x] = 1
    const rect = floodFill(mask, 2.5, 2.5, 0)
    expect(rect).toEqual({ x0: 1, y0: 1, x1: 4, y1: 4 })
    expect(countUp(mask.data)).toBe(9)
    expect(at(mask, 5, 5)).toBe(1)
  })

  it('When a winding domain is filled, then exactly its 4-connected component changes (checked against the engine’s labelling)', () => {
    // A fixed pseudo-random mask (LCG, seed 2024) with many irregular domains.
    let seed = 2024
    const random = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648
    const mask = blank(64, 48)
    for (let i = 0; i < mask.data.length; i++) mask.data[i] = random() < 0.55 ? 1 : 0
    const labels = labelComponents(mask.data, 64, 48, 4, 1)
    const seedIndex = mask.data.findIndex((v) => v === 1)
    const label = labels.labels[seedIndex]
    const before = countUp(mask.data)
    floodFill(mask, seedIndex % 64, Math.floor(seedIndex / 64), 0)
    expect(before - countUp(mask.data)).toBe(labels.sizes[label])
    for (let i = 0; i < mask.data.length; i++) if (labels.labels[i] === label) expect(mask.data[i]).toBe(0)
  })

  it('When the click is outside the mask or on the same phase, then nothing changes', () => {
    const mask = blank(4, 4)
    expect(floodFill(mask, -1, 2, 1)).toBeNull()
    expect(floodFill(mask, 1, 1, 0)).toBeNull()
  })
})

describe('fillPolygon', () => {
  it('When a square with corners on pixel edges is filled, then exactly its pixels change, in either winding', () => {
    for (const points of [
      [2, 2, 6, 2, 6, 6, 2, 6],
      [2, 2, 2, 6, 6, 6, 6, 2],
    ]) {
      const mask = blank(10, 10)
      const rect = fillPolygon(mask, points, 1)
      expect(rect).toEqual({ x0: 2, y0: 2, x1: 6, y1: 6 })
      expect(countUp(mask.data)).toBe(16)
      for (let y = 2; y < 6; y++) for (let x = 2; x < 6; x++) expect(at(mask, x, y)).toBe(1)
    }
  })

  it('When a five-pointed star is filled, then its middle stays out (even-odd rule) and the points are in', () => {
    const mask = blank(101, 101)
    const star: number[] = []
    // Vertices of a regular pentagram {5/2}: every second corner of a pentagon of radius 45 around (50.5, 50.5).
    for (let k = 0; k < 5; k++) {
      const angle = -Math.PI / 2 + (k * 4 * Math.PI) / 5
      star.push(50.5 + 45 * Math.cos(angle), 50.5 + 45 * Math.sin(angle))
    }
    fillPolygon(mask, star, 1)
    expect(at(mask, 50, 50)).toBe(0)
    expect(at(mask, 50, 12)).toBe(1)
  })

  it('When the outline has fewer than three corners, then nothing changes', () => {
    expect(fillPolygon(blank(8, 8), [1, 1, 5, 5], 1)).toBeNull()
  })
})

describe('drawWallLine', () => {
  it.each([1, 2] as const)('When a wall of %s px is traced across an up domain, then the two halves no longer connect', (thickness) => {
    const mask = blank(64, 64, 1)
    drawWallLine(mask, [-3, 5.3, 30.2, 33.7, 70, 58.9], 0, thickness)
    // The up phase is labelled 8-connected by the engine (METHODS §1.4): even so, the line leaves two domains.
    expect(labelComponents(mask.data, 64, 64, 8, 1).count).toBe(2)
    // The line itself is one edge-connected chain.
    expect(labelComponents(mask.data, 64, 64, 4, 0).count).toBe(1)
    // Flooding the lower half down stops at the line: the upper half keeps its up pixels.
    floodFill(mask, 2, 62, 0)
    expect(at(mask, 62, 2)).toBe(1)
    expect(at(mask, 2, 62)).toBe(0)
  })

  it('When the trace is a single point, then that pixel takes the down phase', () => {
    const mask = blank(5, 5, 1)
    expect(drawWallLine(mask, [2.4, 3.9], 0)).toEqual({ x0: 2, y0: 3, x1: 3, y1: 4 })
    expect(countUp(mask.data)).toBe(24)
  })

  it('When the trace lies outside the mask, then nothing changes', () => {
    expect(drawWallLine(blank(8, 8, 1), [-10, -10, -2, 20], 0)).toBeNull()
  })
})
