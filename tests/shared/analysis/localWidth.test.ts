import { describe, expect, it } from 'vitest'
import { mean, median } from 'simple-statistics'
import { localDomainWidths } from '@shared/analysis/localWidth'
import type { BinaryMask } from '@shared/analysis/types'

/** Stripes with wave vector at θ (x = column, y = row): up where frac((x·cosθ + y·sinθ)/P + 0.37) < duty. */
function stripes(size: number, period: number, angleDeg: number, duty = 0.5): BinaryMask {
  const c = Math.cos((angleDeg * Math.PI) / 180)
  const s = Math.sin((angleDeg * Math.PI) / 180)
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const u = (x * c + y * s) / period + 0.37
      data[y * size + x] = u - Math.floor(u) < duty ? 1 : 0
    }
  }
  return { width: size, height: size, data }
}

/** One vertical up stripe of integer width in a 40×12 down background. */
function singleStripe(stripeWidth: number): BinaryMask {
  const width = 40
  const height = 12
  const data = new Uint8Array(width * height)
  for (let y = 0; y < height; y++) for (let x = 10; x < 10 + stripeWidth; x++) data[y * width + x] = 1
  return { width, height, data }
}

describe('localDomainWidths', () => {
  it('When the raw centre estimator measures 9- and 10-px stripes, then both read 9 px', () => {
    // METHODS.md check #15 [D]: w = 2·d_max − 1 on the pixel-centre ridge; the known −1 px for even widths.
    expect(localDomainWidths(singleStripe(9), { estimator: 'centre' }).upMeanPx).toBe(9)
    expect(localDomainWidths(singleStripe(10), { estimator: 'centre' }).upMeanPx).toBe(9)
  })

  it('When the sub-pixel ray estimator measures 9- and 10-px stripes, then it reads 9 and 10 px', () => {
    // Synthetic ground truth [D]: walls half a pixel outside the outermost up centres.
    for (const stripeWidth of [9, 10]) {
      const result = localDomainWidths(singleStripe(stripeWidth))
      expect(result.upMeanPx as number).toBeCloseTo(stripeWidth, 6)
      // One ridge pixel per row crossing of the ridge.
      expect(result.widthsPx.length).toBe(12)
      // The background only faces the stripe, never another wall: no down width.
      expect(result.downMeanPx).toBeNull()
    }
  })

  it.each([20, 24, 32, 40])('When straight stripes of period %i px run at any angle, then the mean width is P/2 within 2 %', (period) => {
    // Issue requirement; synthetic ground truth [D]: up and down stripes each P/2 wide (continuous walls). Angles
    // 0…90° including 22.5° and 45°; measured worst case 0.9 %.
    for (const angle of [0, 10, 22.5, 30, 45, 60, 77, 90]) {
      const result = localDomainWidths(stripes(256, period, angle))
      expect(Math.abs((result.meanPx as number) / (period / 2) - 1)).toBeLessThan(0.02)
      expect(Math.abs((result.upMeanPx as number) / (period / 2) - 1)).toBeLessThan(0.02)
      expect(Math.abs((result.downMeanPx as number) / (period / 2) - 1)).toBeLessThan(0.02)
    }
  })

  it('When the period is odd (41 px), then the digitised 21/20 px stripes average P/2', () => {
    // Axis-aligned, each up stripe covers 21 columns and each down stripe 20: exact integer widths.
    const result = localDomainWidths(stripes(256, 41, 0))
    expect(result.upMeanPx as number).toBeCloseTo(21, 6)
    expect(result.downMeanPx as number).toBeCloseTo(20, 6)
  })

  it('When up stripes are 30 % of a 40-px period, then up widths are 12 px and down widths 28 px within 2 %', () => {
    for (const angle of [0, 20, 45]) {
      const result = localDomainWidths(stripes(400, 40, angle, 0.3))
      expect(Math.abs((result.upMeanPx as number) / 12 - 1)).toBeLessThan(0.02)
      expect(Math.abs((result.downMeanPx as number) / 28 - 1)).toBeLessThan(0.02)
    }
  })

  it.each([8, 15, 25])('When a disk of radius %i px is measured, then its width is the diameter within 3 %', (radius) => {
    // Synthetic ground truth [D]: a bubble's medial axis is its centre, where the facing walls are 2R apart.
    const size = 101
    const data = new Uint8Array(size * size)
    for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = (x - 50.3) ** 2 + (y - 49.8) ** 2 <= radius * radius ? 1 : 0
    const result = localDomainWidths({ width: size, height: size, data })
    expect(result.widthsPx.length).toBeGreaterThan(0)
    expect(Math.abs((result.medianPx as number) / (2 * radius) - 1)).toBeLessThan(0.03)
  })

  it('When statistics are reported, then they match simple-statistics on the widths and the arrays line up', () => {
    // Cross-check with simple-statistics 7.12.1 mean/median.
    const mask = stripes(200, 26, 33)
    const result = localDomainWidths(mask)
    const widths = Array.from(result.widthsPx)
    expect(result.meanPx as number).toBeCloseTo(mean(widths), 9)
    expect(result.medianPx as number).toBeCloseTo(median(widths), 9)
    expect(result.stdErrPx as number).toBeGreaterThan(0)
    const index = result.ridgeIndex as Int32Array
    const phase = result.ridgePhase as Uint8Array
    expect(index.length).toBe(widths.length)
    for (let i = 0; i < index.length; i++) expect(mask.data[index[i]]).toBe(phase[i])
  })

  it('When part of the frame is ignored, then no ridge pixel lies in it and the widths stay P/2', () => {
    const mask = stripes(200, 24, 15)
    const ignore = new Uint8Array(200 * 200)
    for (let y = 80; y < 120; y++) for (let x = 0; x < 200; x++) ignore[y * 200 + x] = 1
    const result = localDomainWidths({ ...mask, ignore })
    for (const p of result.ridgeIndex as Int32Array) expect(ignore[p]).toBe(0)
    expect(Math.abs((result.meanPx as number) / 12 - 1)).toBeLessThan(0.02)
  })

  it('When the mask is all one phase, 1×1 or empty, then there are no widths and the statistics are null', () => {
    // METHODS.md §0 [P]: degenerate input gives a defined result, never NaN.
    for (const mask of [
      { width: 30, height: 20, data: new Uint8Array(600).fill(1) },
      { width: 30, height: 20, data: new Uint8Array(600) },
      { width: 1, height: 1, data: new Uint8Array([1]) },
      { width: 0, height: 0, data: new Uint8Array(0) },
    ]) {
      const result = localDomainWidths(mask)
      expect(result.widthsPx.length).toBe(0)
      expect(result.meanPx).toBeNull()
      expect(result.medianPx).toBeNull()
      expect(result.stdErrPx).toBeNull()
      expect(result.upMeanPx).toBeNull()
      expect(result.downMeanPx).toBeNull()
    }
  })

  it.each(['ray', 'centre'] as const)('When only two rows of unit vectors are kept (%s), then every width is bit-identical to the default', (estimator) => {
    // An implementation check, not a physics one: with two rows every ray recomputes the unit vectors around its
    // pixel, with the default nearly none does; both must give the same float32 widths, pixels and order.
    const oblique = stripes(160, 17, 31, 0.4)
    const noisy: BinaryMask = { ...stripes(120, 12, 64), ignore: Uint8Array.from({ length: 120 * 120 }, (_, i) => (i % 37 === 0 ? 1 : 0)) }
    let state = 7
    const speckle: BinaryMask = { width: 70, height: 50, data: Uint8Array.from({ length: 3500 }, () => ((state = (state * 1103515245 + 12345) >>> 0) >>> 30) & 1) }
    for (const mask of [oblique, noisy, speckle]) {
      const held = localDomainWidths(mask, { estimator })
      const recomputed = localDomainWidths(mask, { estimator, ringRows: 2 })
      expect(held.widthsPx.length).toBeGreaterThan(0)
      expect(Buffer.from(recomputed.widthsPx.buffer).equals(Buffer.from(held.widthsPx.buffer))).toBe(true)
      expect(Array.from(recomputed.ridgeIndex!)).toEqual(Array.from(held.ridgeIndex!))
    }
    expect(() => localDomainWidths(oblique, { ringRows: 3 })).toThrow(RangeError)
  })
})
