import { describe, expect, it } from 'vitest'
import { createRandom } from '@shared/analysis/seededRandom'
import type { BinaryMask } from '@shared/analysis/types'
import { wallDisplacement } from '@shared/analysis/wallDisplacement'

/** Digital ellipse: pixels with ((x − cx)/a)² + ((y − cy)/b)² ≤ 1 (a disk when a = b). */
function ellipse(size: number, cx: number, cy: number, a: number, b: number): BinaryMask {
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) data[y * size + x] = ((x - cx) / a) ** 2 + ((y - cy) / b) ** 2 <= 1 ? 1 : 0
  }
  return { width: size, height: size, data }
}

/** Sector mean nearest to `angleDeg`. */
function sectorMean(result: ReturnType<typeof wallDisplacement>, angleDeg: number): number {
  const sector = result.sectors.find((s) => s.angleDeg === angleDeg)
  return sector!.meanPx!
}

describe('wallDisplacement', () => {
  it('When a digital disk grows from radius 40 to 45, then the mean displacement is 5 px within 2 %', () => {
    // Constructed: ΔA/L̄ = π(r₂² − r₁²)/(π(r₁ + r₂)) = r₂ − r₁ exactly for circles [D]; the digital disks carry the
    // Crofton length bias (+0.4 % on a disk, METHODS §4 check #27) and the pixel-count area.
    const result = wallDisplacement(ellipse(128, 63.3, 64.6, 40, 40), ellipse(128, 63.3, 64.6, 45, 45))
    expect(Math.abs(result.meanDisplacementPx / 5 - 1)).toBeLessThan(0.02)
    expect(result.meanDisplacementStdErrPx).toBeGreaterThan(0)
    expect(result.meanDisplacementStdErrPx!).toBeLessThan(0.1)
    // Constructed: the local nearest-wall distances along the normals also average about 5 px (quantised, ±0.3 px).
    expect(Math.abs(result.local.meanPx! - 5)).toBeLessThan(0.3)
    expect(Math.abs(result.local.medianPx! - 5)).toBeLessThan(0.5)
    expect(result.local.count).toBeGreaterThan(200)
    // Constructed: an isotropic expansion moves every sector by about the same amount.
    for (const sector of result.sectors) {
      expect(sector.count).toBeGreaterThan(0)
      expect(Math.abs(sector.meanPx! - 5)).toBeLessThan(0.6)
    }
    expect(result.sectors).toHaveLength(16)
    expect(result.centroid!.x).toBeCloseTo(63.3, 0)
  })

  it('When the growing domain is the down phase (phase 0), then inverted frames give the same displacement', () => {
    // Constructed: complementing both frames and measuring phase 0 is the same geometry.
    const before = ellipse(128, 63.3, 64.6, 30, 30)
    const after = ellipse(128, 63.3, 64.6, 36, 36)
    const invert = (m: BinaryMask): BinaryMask => ({ ...m, data: m.data.map((v) => 1 - v) })
    const up = wallDisplacement(before, after)
    const down = wallDisplacement(invert(before), invert(after), { phase: 0 })
    expect(down.meanDisplacementPx).toBeCloseTo(up.meanDisplacementPx, 12)
    expect(down.local).toEqual(up.local)
  })

  it('When the area change is counted, then it equals the pixel-count difference of the two frames', () => {
    // Constructed: areas are plain pixel counts of the domain phase.
    const before = ellipse(100, 50.2, 49.7, 20, 20)
    const after = ellipse(100, 50.2, 49.7, 26, 26)
    const count = (m: BinaryMask) => m.data.reduce((s, v) => s + v, 0)
    const result = wallDisplacement(before, after)
    expect(result.areaBeforePx).toBe(count(before))
    expect(result.areaAfterPx).toBe(count(after))
    expect(result.areaChangePx).toBe(count(after) - count(before))
    expect(result.meanWallLengthPx).toBeCloseTo((result.wallLengthBeforePx + result.wallLengthAfterPx) / 2, 12)
  })

  it('When the domain shrinks, then the mean and local displacements are negative', () => {
    // Constructed: radius 45 → 40, the wall retreats by 5 px.
    const result = wallDisplacement(ellipse(128, 64.4, 63.2, 45, 45), ellipse(128, 64.4, 63.2, 40, 40))
    expect(Math.abs(result.meanDisplacementPx / -5 - 1)).toBeLessThan(0.02)
    expect(Math.abs(result.local.meanPx! + 5)).toBeLessThan(0.3)
  })

  it('When an ellipse grows faster towards +x, then the sectors around 0° move more than those around 180°', () => {
    // Constructed: disk r = 30 at (80, 80) → ellipse a = 44, b = 36 centred at (86, 80): the wall moves 20 px at 0°,
    // 8 px at 180° and about 6 px at ±90°.
    const result = wallDisplacement(ellipse(180, 80, 80, 30, 30), ellipse(180, 86, 80, 44, 36))
    const at0 = sectorMean(result, 0)
    const at180 = sectorMean(result, 180)
    expect(Math.abs(at0 - 20)).toBeLessThan(1.5)
    expect(Math.abs(at180 - 8)).toBeLessThan(1.5)
    expect(at0 - at180).toBeGreaterThan(8)
    expect(sectorMean(result, 22.5)).toBeGreaterThan(sectorMean(result, 157.5))
    expect(sectorMean(result, 337.5)).toBeGreaterThan(sectorMean(result, 202.5))
    // Constructed: the mean displacement lies between the slowest and the fastest side.
    expect(result.meanDisplacementPx).toBeGreaterThan(6)
    expect(result.meanDisplacementPx).toBeLessThan(20)
  })

  it('When local displacements are compared with a brute-force nearest-wall search, then they agree exactly', () => {
    // Constructed: random blobs (fixed seed 17); reference = O(n²) search over the later wall pixels.
    const random = createRandom(17)
    const size = 40
    const blob = (radius: number): BinaryMask => {
      const m = ellipse(size, 20, 20, radius, radius)
      for (let i = 0; i < size * size; i++) if (random() < 0.04) m.data[i] = 1 - m.data[i]
      return m
    }
    const before = blob(9)
    const after = blob(13)
    const wallOf = (m: BinaryMask): number[] => {
      const out: number[] = []
      for (let y = 0; y < size; y++) {
        for (let x = 0; x < size; x++) {
          const i = y * size + x
          if (m.data[i] !== 1) continue
          const neighbours = [x > 0 ? i - 1 : -1, x < size - 1 ? i + 1 : -1, y > 0 ? i - size : -1, y < size - 1 ? i + size : -1]
          if (neighbours.some((j) => j >= 0 && m.data[j] === 0)) out.push(i)
        }
      }
      return out
    }
    const later = wallOf(after)
    const expected = wallOf(before).map((i) => {
      let best = Infinity
      for (const j of later) best = Math.min(best, Math.hypot((i % size) - (j % size), Math.floor(i / size) - Math.floor(j / size)))
      return after.data[i] === 1 ? best : -best
    })
    const result = wallDisplacement(before, after)
    expect(Array.from(result.localPx)).toHaveLength(expected.length)
    result.localPx.forEach((d, k) => expect(d).toBeCloseTo(expected[k], 5))
  })

  it('When the frames differ in size, then a RangeError names both sizes', () => {
    // Constructed: 10×10 vs 10×12.
    const a: BinaryMask = { width: 10, height: 10, data: new Uint8Array(100) }
    const b: BinaryMask = { width: 10, height: 12, data: new Uint8Array(120) }
    expect(() => wallDisplacement(a, b)).toThrow(RangeError)
    expect(() => wallDisplacement(a, b)).toThrow(/10×10 before, 10×12 after/)
  })

  it('When neither frame has a wall (all one phase, or an empty image), then the result is 0 and null, never NaN', () => {
    // METHODS §0 [P]: degenerate input returns a defined result.
    const zeros: BinaryMask = { width: 8, height: 8, data: new Uint8Array(64) }
    const result = wallDisplacement(zeros, zeros)
    expect(result.meanDisplacementPx).toBe(0)
    expect(result.meanDisplacementStdErrPx).toBeNull()
    expect(result.local).toEqual({ meanPx: null, medianPx: null, stdErrPx: null, count: 0 })
    expect(result.sectors.every((s) => s.meanPx === null && s.count === 0)).toBe(true)
    const empty: BinaryMask = { width: 0, height: 0, data: new Uint8Array(0) }
    const none = wallDisplacement(empty, empty)
    expect(none.meanDisplacementPx).toBe(0)
    expect(none.centroid).toBeNull()
  })

  it('When the domain appears from nothing, then the mean displacement is defined and local values are null', () => {
    // Constructed: nucleation (empty → disk r = 10): ΔA/L̄ = πr²/(πr) = r; no earlier wall to measure from.
    const size = 40
    const result = wallDisplacement({ width: size, height: size, data: new Uint8Array(size * size) }, ellipse(size, 20, 20, 10, 10))
    expect(result.meanDisplacementPx).toBeGreaterThan(8)
    expect(result.meanDisplacementPx).toBeLessThan(12)
    expect(result.local.count).toBe(0)
    expect(result.local.meanPx).toBeNull()
  })

  it('When a pixel is ignored in either frame, then it counts in neither area', () => {
    // Constructed: ignoring one domain pixel of both frames lowers both areas by one; the change is unchanged.
    const before = ellipse(60, 30, 30, 10, 10)
    const after = ellipse(60, 30, 30, 14, 14)
    const ignore = new Uint8Array(3600)
    ignore[30 * 60 + 30] = 1
    const plain = wallDisplacement(before, after)
    const masked = wallDisplacement({ ...before, ignore }, after)
    expect(masked.areaBeforePx).toBe(plain.areaBeforePx - 1)
    expect(masked.areaAfterPx).toBe(plain.areaAfterPx - 1)
    expect(masked.areaChangePx).toBe(plain.areaChangePx)
  })
})
