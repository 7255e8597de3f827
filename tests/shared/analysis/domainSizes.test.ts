import { describe, expect, it } from 'vitest'
import { fromMask, Mask } from 'image-js'
import { labelComponents } from '@shared/analysis/connectedComponents'
import { domainSizeStats, equivalentCircleDiameter } from '@shared/analysis/domainSizes'
import type { BinaryMask } from '@shared/analysis/types'

/** Up disks (centre x, centre y, radius) on a down background: pixels with (x−cx)² + (y−cy)² ≤ r². */
function disks(width: number, height: number, list: [number, number, number][]): BinaryMask {
  const data = new Uint8Array(width * height)
  for (const [cx, cy, r] of list) {
    for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) if ((x - cx) ** 2 + (y - cy) ** 2 <= r * r) data[y * width + x] = 1
  }
  return { width, height, data }
}

describe('equivalentCircleDiameter', () => {
  it('When A = 100 px², then d_ECD = 11.2838 px', () => {
    // METHODS.md check #14 [D]: 2·√(100/π).
    expect(Math.abs(equivalentCircleDiameter(100) - 11.2838)).toBeLessThan(1e-4)
  })
})

describe('domainSizeStats', () => {
  it('When disks of known radii are measured, then each diameter is 2R within 3 % and π(d/2)² is the pixel count', () => {
    // Synthetic ground truth [D]; property: the ECD area equals the pixel count exactly.
    const radii = [6, 10, 15, 22]
    const mask = disks(200, 120, [
      [30, 30, 6],
      [80, 40, 10],
      [130, 60, 15],
      [60, 85, 22],
    ])
    const stats = domainSizeStats(mask)
    expect(stats.count).toBe(4)
    expect(stats.censoredCount).toBe(0)
    const sorted = Array.from(stats.diametersPx).sort((a, b) => a - b)
    radii.forEach((r, i) => expect(Math.abs(sorted[i] / (2 * r) - 1)).toBeLessThan(0.03))
    stats.diametersPx.forEach((d, i) => expect(Math.PI * (d / 2) ** 2).toBeCloseTo(stats.areasPx[i], 9))
  })

  it('When means are taken, then the number mean is Σd/n and the area-weighted mean ΣA·d/ΣA', () => {
    const stats = domainSizeStats(disks(120, 60, [[20, 20, 5], [70, 30, 12]]))
    const [d1, d2] = stats.diametersPx
    const [a1, a2] = stats.areasPx
    expect(stats.numberMeanPx as number).toBeCloseTo((d1 + d2) / 2, 12)
    expect(stats.areaWeightedMeanPx as number).toBeCloseTo((a1 * d1 + a2 * d2) / (a1 + a2), 12)
    // sd/√n with n = 2: |d1 − d2|/2.
    expect(stats.stdErrPx as number).toBeCloseTo(Math.abs(d1 - d2) / 2, 12)
  })

  it('When the diameters are compared with image-js 1.7.0 ROI eqpc, then they agree', () => {
    // Cross-check: image-js Roi.eqpc is the diameter of the circle of equal surface (8-connected ROIs).
    const mask = disks(150, 100, [
      [25, 25, 7],
      [90, 50, 18],
      [40, 75, 11],
    ])
    const ours = Array.from(domainSizeStats(mask).diametersPx).sort((a, b) => a - b)
    const rois = fromMask(new Mask(150, 100, { data: mask.data }), { allowCorners: true }).getRois({ kind: 'white' })
    const theirs = rois.map((roi) => roi.eqpc).sort((a, b) => a - b)
    expect(theirs.length).toBe(ours.length)
    theirs.forEach((d, i) => expect(ours[i]).toBeCloseTo(d, 9))
  })

  it('When a disk touches the border or an ignored pixel, then it is censored, not counted', () => {
    // METHODS.md §1.4/§2.2 [P]: truncated domains are excluded from size statistics.
    const mask = disks(100, 100, [
      [5, 50, 10],
      [50, 50, 8],
      [80, 20, 6],
    ])
    const ignore = new Uint8Array(100 * 100)
    ignore[20 * 100 + 87] = 1
    const stats = domainSizeStats({ ...mask, ignore })
    expect(stats.count).toBe(1)
    expect(stats.censoredCount).toBe(2)
    expect(Math.abs(stats.diametersPx[0] / 16 - 1)).toBeLessThan(0.03)
  })

  it('When down bubbles are asked for, then the down phase is labelled (4-connected by default)', () => {
    const mask = disks(60, 60, [[30, 30, 20]])
    // Two down holes inside the up disk.
    for (const [x, y] of [
      [25, 30],
      [35, 30],
    ]) mask.data[y * 60 + x] = 0
    const stats = domainSizeStats(mask, { phase: 0 })
    expect(stats.count).toBe(2)
    expect(Array.from(stats.areasPx)).toEqual([1, 1])
    // The background touches the border: censored.
    expect(stats.censoredCount).toBe(1)
  })

  it('When precomputed labels and a minimum area are given, then small components are left out', () => {
    const mask = disks(80, 40, [[20, 20, 8]])
    mask.data[5 * 80 + 60] = 1
    const labels = labelComponents(mask.data, 80, 40, 8, 1)
    expect(domainSizeStats(labels).count).toBe(2)
    expect(domainSizeStats(labels, { minAreaPx: 2 }).count).toBe(1)
  })

  it('When there is no domain of the phase, then counts are 0 and the means null', () => {
    // METHODS.md §0 [P]: empty mask → defined result.
    for (const mask of [
      { width: 10, height: 10, data: new Uint8Array(100) },
      { width: 0, height: 0, data: new Uint8Array(0) },
      { width: 1, height: 1, data: new Uint8Array([1]) },
    ]) {
      const stats = domainSizeStats(mask)
      expect(stats.count).toBe(0)
      expect(stats.numberMeanPx).toBeNull()
      expect(stats.areaWeightedMeanPx).toBeNull()
      expect(stats.stdErrPx).toBeNull()
    }
  })
})
