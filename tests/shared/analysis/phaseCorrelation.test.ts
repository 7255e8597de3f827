import { describe, expect, it } from 'vitest'
import { fft2d, ifft2d } from '@shared/analysis/fft2d'
import { applyShift, estimateShift } from '@shared/analysis/phaseCorrelation'
import { createRandom } from '@shared/analysis/seededRandom'
import type { FloatImage } from '@shared/analysis/types'

/** numpy.roll(image, (sy, sx)): out(y, x) = in(y − sy, x − sx) with wrap-around. */
function roll(image: FloatImage, sy: number, sx: number): FloatImage {
  const { width, height, data } = image
  const out = new Float32Array(width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      out[(((y + sy) % height) + height) % height * width + ((((x + sx) % width) + width) % width)] = data[y * width + x]
    }
  }
  return { width, height, data: out }
}

/** Random texture band-limited by a Gaussian (σ_f in px), built in Float64 to keep the spectrum exact. */
function texture(size: number, seed: number, sigma: number): Float64Array {
  const random = createRandom(seed)
  const spectrum = fft2d(Float64Array.from({ length: size * size }, () => random()), size, size)
  for (let k = 0; k < size; k++) {
    for (let l = 0; l < size; l++) {
      const ky = (k <= size / 2 ? k : k - size) / size
      const kx = (l <= size / 2 ? l : l - size) / size
      // Zero the Nyquist row/column so that a fractional Fourier shift keeps the image real.
      const nyquist = k === size / 2 || l === size / 2 ? 0 : 1
      const gain = nyquist * Math.exp(-2 * Math.PI ** 2 * sigma ** 2 * (kx * kx + ky * ky))
      spectrum.re[k * size + l] *= gain
      spectrum.im[k * size + l] *= gain
    }
  }
  return ifft2d(spectrum.re, spectrum.im, size, size).re
}

/** Exact circular sub-pixel shift by the Fourier shift theorem: F·exp(−2πi(k̃·sy/N + l̃·sx/N)). */
function fourierShift(values: Float64Array, size: number, sy: number, sx: number): Float64Array {
  const spectrum = fft2d(values, size, size)
  for (let k = 0; k < size; k++) {
    for (let l = 0; l < size; l++) {
      const ky = (k <= size / 2 ? k : k - size) / size
      const kx = (l <= size / 2 ? l : l - size) / size
      const angle = -2 * Math.PI * (ky * sy + kx * sx)
      const i = k * size + l
      const re = spectrum.re[i]
      const im = spectrum.im[i]
      spectrum.re[i] = re * Math.cos(angle) - im * Math.sin(angle)
      spectrum.im[i] = re * Math.sin(angle) + im * Math.cos(angle)
    }
  }
  return ifft2d(spectrum.re, spectrum.im, size, size).re
}

describe('estimateShift', () => {
  const size = 128
  const random = createRandom(51) // fixed seed
  const reference: FloatImage = { width: size, height: size, data: Float32Array.from({ length: size * size }, () => random()) }

  it('When mov = roll(ref, (3, −5)), then s = (3, −5) exactly (scikit-image would return (−3, 5))', () => {
    // METHODS.md check #54 [D]; sign convention [R]: scikit-image phase_cross_correlation returns the correction −s.
    const moving = roll(reference, 3, -5)
    const plain = estimateShift(reference, moving, { window: 'none' })
    expect([plain.dy, plain.dx]).toEqual([3, -5])
    expect(plain.peak).toBeGreaterThan(0.99)
    // With the default Hann taper the circular relation is no longer exact, but the peak is the same pixel.
    const tapered = estimateShift(reference, moving)
    expect(Math.round(tapered.dy)).toBe(3)
    expect(Math.round(tapered.dx)).toBe(-5)
    expect(Math.abs(tapered.dy - 3) + Math.abs(tapered.dx + 5)).toBeLessThan(0.01)
  })

  it('When a texture is Fourier-shifted by (2.3, −1.7), then upsampling 100 recovers it within 0.02 px', () => {
    // METHODS.md check #55 [D] (Guizar-Sicairos et al. 2008, upsampled DFT [R]); periodic content ⇒ window 'none'.
    for (const [seed, sigma] of [
      [52, 0],
      [53, 1],
      [54, 2],
    ]) {
      const values = texture(size, seed, sigma)
      const ref = { width: size, height: size, data: Float32Array.from(values) }
      const mov = { width: size, height: size, data: Float32Array.from(fourierShift(values, size, 2.3, -1.7)) }
      const shift = estimateShift(ref, mov, { upsample: 100, window: 'none' })
      expect(Math.abs(shift.dy - 2.3)).toBeLessThan(0.02)
      expect(Math.abs(shift.dx + 1.7)).toBeLessThan(0.02)
    }
  })

  it('When only the parabola refines the peak, then a sub-pixel shift is found to a fraction of a pixel', () => {
    // Parabolic interpolation of a sinc-like peak is biased toward the integer; tolerance 0.25 px.
    const values = texture(size, 55, 0)
    const ref = { width: size, height: size, data: Float32Array.from(values) }
    const mov = { width: size, height: size, data: Float32Array.from(fourierShift(values, size, 2.3, -1.7)) }
    const shift = estimateShift(ref, mov, { window: 'none' })
    expect(Math.abs(shift.dy - 2.3)).toBeLessThan(0.25)
    expect(Math.abs(shift.dx + 1.7)).toBeLessThan(0.25)
  })

  it('When a crop of a larger texture is compared with a shifted crop, then the Hann default finds the drift', () => {
    // Non-periodic frames (the realistic case): crops of a 256² texture whose content moves by (−4, 6).
    const big = texture(256, 56, 0.7)
    const crop = (oy: number, ox: number): FloatImage => {
      const data = new Float32Array(size * size)
      for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = big[(y + oy) * 256 + x + ox]
      return { width: size, height: size, data }
    }
    // mov(x) = ref(x − s) with s = (−4, 6): the moving crop starts 4 rows lower and 6 columns further left.
    const shift = estimateShift(crop(60, 60), crop(64, 54), { upsample: 20 })
    expect(Math.abs(shift.dy + 4)).toBeLessThan(0.1)
    expect(Math.abs(shift.dx - 6)).toBeLessThan(0.1)
  })

  it('When the frames are constant, then the shift is zero with peak 0', () => {
    // METHODS.md §0 [P]: no phase information → defined result.
    const flat = { width: 16, height: 16, data: new Float32Array(256).fill(3) }
    expect(estimateShift(flat, flat)).toEqual({ dy: 0, dx: 0, peak: 0 })
    const one = { width: 1, height: 1, data: new Float32Array([2]) }
    expect(estimateShift(one, one)).toEqual({ dy: 0, dx: 0, peak: 0 })
  })

  it('When the frames differ in size, then a RangeError is thrown', () => {
    expect(() => estimateShift({ width: 4, height: 4, data: new Float32Array(16) }, { width: 4, height: 2, data: new Float32Array(8) })).toThrow(RangeError)
  })
})

describe('applyShift', () => {
  it('When shifted by whole pixels, then out(y, x) = in(y − dy, x − dx) with edges replicated', () => {
    const image = { width: 4, height: 3, data: Float32Array.from({ length: 12 }, (_, i) => i) }
    const out = applyShift(image, 1, -1)
    // Row 0 replicates source row 0 (y − 1 clamped); column 3 replicates source column 3 (x + 1 clamped).
    expect(Array.from(out.data)).toEqual([1, 2, 3, 3, 1, 2, 3, 3, 5, 6, 7, 7])
  })

  it('When shifted by half a pixel, then values are the bilinear average of neighbours', () => {
    const image = { width: 3, height: 1, data: new Float32Array([0, 10, 20]) }
    expect(Array.from(applyShift(image, 0, 0.5).data)).toEqual([0, 5, 15])
  })

  it('When a texture is moved by applyShift and registered back, then the shift is recovered to 0.1 px', () => {
    // Bilinear interpolation low-passes the moved frame, so a smooth texture is used (σ = 1.5 px); Hann default.
    const values = texture(128, 57, 1.5)
    const ref = { width: 128, height: 128, data: Float32Array.from(values) }
    const shift = estimateShift(ref, applyShift(ref, 3, -2), { upsample: 20 })
    expect(Math.abs(shift.dy - 3)).toBeLessThan(0.1)
    expect(Math.abs(shift.dx + 2)).toBeLessThan(0.1)
  })
})
