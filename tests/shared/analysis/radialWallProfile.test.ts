import { describe, expect, it } from 'vitest'
import type { BinaryMask } from '@shared/analysis/types'
import { radialWallProfile } from '@shared/analysis/radialWallProfile'

/** Digital domain whose wall is r(θ) around (cx, cy): pixel centres with distance ≤ r(θ) are in the domain. */
function polarDomain(size: number, wall: (theta: number) => number, cx = 128.3, cy = 127.8): BinaryMask {
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) data[y * size + x] = Math.hypot(x - cx, y - cy) <= wall(Math.atan2(y - cy, x - cx)) ? 1 : 0
  }
  return { width: size, height: size, data }
}

function rms(values: Float64Array): number {
  let sum = 0
  for (const v of values) sum += v * v
  return Math.sqrt(sum / values.length)
}

describe('radialWallProfile', () => {
  it('When the domain is a digital disk of radius 60, then r(θ) = 60 within 0.75 px and the residual rms is under 0.3 px', () => {
    // Constructed: pixel staircase of a disk; a pixel counts to its outer edge (≤ ½ px beyond the disk) and the ray
    // count is quantised to 0.25 px.
    const profile = radialWallProfile(polarDomain(256, () => 60))
    // [D]: N = round(2π·R̄), R̄ = √(A/π) ≈ 60 ⇒ 377 samples, ≈ 1 px of arc apart.
    expect(profile.u.length).toBe(Math.round(2 * Math.PI * profile.meanRadiusPx))
    expect(profile.arcStepPx).toBeCloseTo(1, 2)
    expect(profile.centre!.x).toBeCloseTo(128.3, 0)
    for (const r of profile.radiusPx) expect(Math.abs(r - 60)).toBeLessThanOrEqual(0.75)
    expect(rms(profile.u)).toBeLessThan(0.3)
  })

  it('When the domain is an off-centre ellipse, then the n ≤ 2 fit removes its shape and leaves under 1 px rms', () => {
    // [D]: an ellipse with semi-axes 70 and 50 has r(θ) dominated by modes 0 and 2 (higher even modes ≈ 1 px here:
    // r = ab/√(b²cos²θ + a²sin²θ), mode 4 amplitude ≈ 0.6 px); the raw r(θ) spans 50…70 px.
    const ellipse = (t: number) => (70 * 50) / Math.hypot(50 * Math.cos(t), 70 * Math.sin(t))
    const profile = radialWallProfile(polarDomain(256, ellipse, 120.4, 131.6))
    const spread = Math.max(...profile.radiusPx) - Math.min(...profile.radiusPx)
    expect(spread).toBeGreaterThan(18)
    expect(rms(profile.u)).toBeLessThan(1)
  })

  it('When the wall is a rosette r = 60 + 4·cos 5θ, then the profile keeps the n = 5 mode with amplitude 4 within 0.3 px', () => {
    // Constructed: modes above 2 are kept; the projection on cos/sin 5θ gives the amplitude back.
    const profile = radialWallProfile(polarDomain(256, (t) => 60 + 4 * Math.cos(5 * t)))
    const n = profile.u.length
    let c = 0
    let s = 0
    for (let k = 0; k < n; k++) {
      c += (2 / n) * profile.u[k] * Math.cos((10 * Math.PI * k) / n)
      s += (2 / n) * profile.u[k] * Math.sin((10 * Math.PI * k) / n)
    }
    expect(Math.abs(Math.hypot(c, s) - 4)).toBeLessThan(0.3)
  })

  it('When the domain is the down phase, then phase 0 follows it', () => {
    // Constructed: the complement of a disk of radius 40, domain phase 0.
    const disk = polarDomain(128, () => 40, 64.2, 63.9)
    const inverted: BinaryMask = { ...disk, data: disk.data.map((v) => 1 - v) }
    const profile = radialWallProfile(inverted, { phase: 0 })
    for (const r of profile.radiusPx) expect(Math.abs(r - 40)).toBeLessThanOrEqual(0.75)
  })

  it('When the domain is cut by the image border, then the rays that leave the image inside it give NaN', () => {
    // Constructed: a disk of radius 50 centred 30 px from the left edge: rays towards −x leave the image inside it.
    const profile = radialWallProfile(polarDomain(160, () => 50, 30, 80))
    const unknown = profile.u.filter((v) => Number.isNaN(v)).length
    expect(unknown).toBeGreaterThan(0)
    expect(unknown).toBeLessThan(profile.u.length / 2)
  })

  it.each([
    ['an empty mask', { width: 0, height: 0, data: new Uint8Array(0) }],
    ['a mask without the phase', { width: 8, height: 8, data: new Uint8Array(64) }],
  ])('When given %s, then the profile is empty and the centre null', (_name, mask) => {
    // Degenerate input: no domain, no wall.
    const profile = radialWallProfile(mask as BinaryMask)
    expect(profile.u).toHaveLength(0)
    expect(profile.centre).toBeNull()
  })
})
