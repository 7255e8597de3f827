import { describe, expect, it } from 'vitest'
import { fft2d, ifft2d } from '@shared/analysis/fft2d'
import { createRandom } from '@shared/analysis/seededRandom'
import { stripeOrientation } from '@shared/analysis/stripeOrientation'
import type { FloatImage } from '@shared/analysis/types'

/** cos(2π(x·cosθ + y·sinθ)/λ): wave vector at θ from +x towards +y (x = column, y = row). */
function sinusoid(size: number, period: number, angleDeg: number): FloatImage {
  const c = Math.cos((angleDeg * Math.PI) / 180)
  const s = Math.sin((angleDeg * Math.PI) / 180)
  const data = new Float32Array(size * size)
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) data[y * size + x] = Math.cos((2 * Math.PI * (x * c + y * s)) / period)
  }
  return { width: size, height: size, data }
}

/** Band-limited isotropic random field: white noise filtered by a Gaussian ring at 1/λ (width 0.15/λ). */
function labyrinthField(size: number, period: number, seed: number): FloatImage {
  const random = createRandom(seed)
  const spectrum = fft2d(
    Float64Array.from({ length: size * size }, () => random() - 0.5),
    size,
    size,
  )
  const q0 = 1 / period
  for (let k = 0; k < size; k++) {
    for (let l = 0; l < size; l++) {
      const q = Math.hypot((k <= size / 2 ? k : k - size) / size, (l <= size / 2 ? l : l - size) / size)
      const gain = Math.exp(-((q - q0) ** 2) / (2 * (0.15 * q0) ** 2))
      spectrum.re[k * size + l] *= gain
      spectrum.im[k * size + l] *= gain
    }
  }
  return { width: size, height: size, data: Float32Array.from(ifft2d(spectrum.re, spectrum.im, size, size).re) }
}

describe('stripeOrientation', () => {
  it('When sinusoidal stripes (λ = 20 px, 256²) have their wave vector at 30°, then φ̄ = 30.0° ± 0.5° and S ≥ 0.99', () => {
    // METHODS.md check #20 [D]: structure tensor, σ_d ≈ 1 px.
    const result = stripeOrientation(sinusoid(256, 20, 30))
    expect(Math.abs((result.waveVectorAngleDeg as number) - 30)).toBeLessThan(0.5)
    expect(result.orderParameter).toBeGreaterThanOrEqual(0.99)
    // Walls run perpendicular to the wave vector: 30° + 90° wrapped to (−90°, 90°].
    expect(result.wallAngleDeg as number).toBeCloseTo(-60, 0)
  })

  it('When the wave vector is at −45°, then φ̄ = −45.0°', () => {
    // METHODS.md check #20 [D]: −45° → −45.0° (±0.5°).
    const result = stripeOrientation(sinusoid(256, 20, -45))
    expect(Math.abs((result.waveVectorAngleDeg as number) + 45)).toBeLessThan(0.5)
    expect(result.wallAngleDeg as number).toBeCloseTo(45, 0)
  })

  it.each([0, 10, 60, 89, 90])('When the wave vector is at %f°, then the angle is recovered within 0.1°', (angle) => {
    // Synthetic ground truth [D]; x = column, y = row, angles from +x towards +y, wrapped to (−90°, 90°].
    const result = stripeOrientation(sinusoid(256, 24, angle))
    const difference = (((result.waveVectorAngleDeg as number) - angle + 90) % 180 + 180) % 180 - 90
    expect(Math.abs(difference)).toBeLessThan(0.1)
  })

  it.each([1, 2, 3])('When the pattern is an isotropic labyrinth (seed %i), then S < 0.2', (seed) => {
    // METHODS.md check #21 [D]: band-limited isotropic labyrinth → S ≈ 0.11 (< 0.2); fixed seeds 1–3.
    expect(stripeOrientation(labyrinthField(256, 20, seed)).orderParameter).toBeLessThan(0.2)
  })

  it('When binarised noisy stripes at 30° are analysed, then the angle is within 1° and S stays well above a labyrinth', () => {
    // Synthetic ground truth [D]: square wave P = 20 px, noise sd 0.3 before thresholding at 0 (fixed seed 4). The
    // isolated noise specks add isotropic gradient energy, so S drops from 1 (0.84 here) but stays far above 0.2.
    const random = createRandom(4)
    const base = sinusoid(256, 20, 30)
    const data = Float32Array.from(base.data, (v) => (v + random.normal(0, 0.3) > 0 ? 1 : 0))
    const result = stripeOrientation({ width: 256, height: 256, data })
    expect(Math.abs((result.waveVectorAngleDeg as number) - 30)).toBeLessThan(1)
    expect(result.orderParameter).toBeGreaterThan(0.7)
  })

  it('When pixels are twice as tall as wide, then the angle is the physical one', () => {
    // Wave vector at 45° in physical units: along y one row spans 2 units, so the pattern is cos(2π(x + 2y)/(λ√2)).
    const size = 256
    const data = new Float32Array(size * size)
    for (let y = 0; y < size; y++) {
      for (let x = 0; x < size; x++) data[y * size + x] = Math.cos((2 * Math.PI * (x + 2 * y)) / (24 * Math.SQRT2))
    }
    const result = stripeOrientation({ width: size, height: size, data }, { pixelAspect: 2 })
    expect(Math.abs((result.waveVectorAngleDeg as number) - 45)).toBeLessThan(0.5)
  })

  it('When maps are requested, then per-pixel orientation and coherence follow the stripes', () => {
    const result = stripeOrientation(sinusoid(128, 20, 30), { maps: true, sigmaIntegration: 4 })
    const centre = 64 * 128 + 64
    expect((result.orientationMapDeg as Float32Array)[centre]).toBeCloseTo(30, 0)
    expect((result.coherenceMap as Float32Array)[centre]).toBeGreaterThan(0.95)
  })

  it('When the image is constant, 1×1 or 2×2, then the angles are null and S = 0', () => {
    // METHODS.md §0 [P]: degenerate input gives a defined result, never NaN.
    for (const image of [
      { width: 32, height: 32, data: new Float32Array(32 * 32).fill(7) },
      { width: 1, height: 1, data: new Float32Array([1]) },
      { width: 2, height: 2, data: new Float32Array([0, 1, 1, 0]) },
    ]) {
      const result = stripeOrientation(image)
      expect(result.waveVectorAngleDeg).toBeNull()
      expect(result.wallAngleDeg).toBeNull()
      expect(result.orderParameter).toBe(0)
    }
  })
})
