import { describe, expect, it } from 'vitest'
import { fft2d, ifft2d, isPowerOfTwo, nextPowerOfTwo, realFft2dHalf, realFft2dHalfPower } from '@shared/analysis/fft2d'
import { createRandom } from '@shared/analysis/seededRandom'

/** Independent reference: the 2-D DFT summed term by term, F(k,l) = Σ f(y,x)·exp(−2πi(ky/H + lx/W)). */
function naiveDft(re: Float64Array, im: Float64Array, width: number, height: number) {
  const outRe = new Float64Array(width * height)
  const outIm = new Float64Array(width * height)
  for (let k = 0; k < height; k++) {
    for (let l = 0; l < width; l++) {
      let sr = 0
      let si = 0
      for (let y = 0; y < height; y++) {
        for (let x = 0; x < width; x++) {
          const angle = -2 * Math.PI * ((k * y) / height + (l * x) / width)
          const c = Math.cos(angle)
          const s = Math.sin(angle)
          const i = y * width + x
          sr += re[i] * c - im[i] * s
          si += re[i] * s + im[i] * c
        }
      }
      outRe[k * width + l] = sr
      outIm[k * width + l] = si
    }
  }
  return { re: outRe, im: outIm }
}

function maxAbsDifference(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]))
  return m
}

describe('fft2d', () => {
  it.each([
    [8, 4],
    [16, 16],
    [32, 2],
    [1, 8],
    [8, 1],
    [2, 2],
  ])('When a random real %i×%i array is transformed, then it matches a naive DFT to 1e-9', (width, height) => {
    // Fixed seed 11 so the arrays are reproducible.
    const random = createRandom(11)
    const re = Float64Array.from({ length: width * height }, () => random() - 0.5)
    const expected = naiveDft(re, new Float64Array(width * height), width, height)
    const actual = fft2d(re, width, height)
    expect(maxAbsDifference(actual.re, expected.re)).toBeLessThan(1e-9)
    expect(maxAbsDifference(actual.im, expected.im)).toBeLessThan(1e-9)
  })

  it('When a complex array is given, then it matches a naive complex DFT', () => {
    const random = createRandom(12) // fixed seed
    const re = Float64Array.from({ length: 64 }, () => random() - 0.5)
    const im = Float64Array.from({ length: 64 }, () => random() - 0.5)
    const expected = naiveDft(re, im, 16, 4)
    const actual = fft2d(re, 16, 4, im)
    expect(maxAbsDifference(actual.re, expected.re)).toBeLessThan(1e-9)
    expect(maxAbsDifference(actual.im, expected.im)).toBeLessThan(1e-9)
  })

  it('When the input is Float32, then the result equals the Float64 transform of the same values', () => {
    const random = createRandom(13) // fixed seed
    const f32 = Float32Array.from({ length: 32 * 16 }, () => random())
    const a = fft2d(f32, 32, 16)
    const b = fft2d(Float64Array.from(f32), 32, 16)
    expect(maxAbsDifference(a.re, b.re)).toBe(0)
    expect(maxAbsDifference(a.im, b.im)).toBe(0)
  })

  it('When transformed forth and back, then the input is recovered (ifft carries 1/(W·H))', () => {
    const random = createRandom(14) // fixed seed
    const re = Float64Array.from({ length: 64 * 32 }, () => random() * 100)
    const spectrum = fft2d(re, 64, 32)
    const back = ifft2d(spectrum.re, spectrum.im, 64, 32)
    expect(maxAbsDifference(back.re, re)).toBeLessThan(1e-9)
    expect(maxAbsDifference(back.im, new Float64Array(re.length))).toBeLessThan(1e-9)
  })

  it('When the documented 2×2 example is transformed, then the spectrum is [10, −2, −4, 0]', () => {
    // Hand calculation: F(0,0) = 1+2+3+4, F(0,1) = (1−2)+(3−4), F(1,0) = (1+2)−(3+4), F(1,1) = 1−2−3+4.
    const { re, im } = fft2d(new Float64Array([1, 2, 3, 4]), 2, 2)
    expect(Array.from(re)).toEqual([10, -2, -4, 0])
    expect(Array.from(im).every((v) => v === 0)).toBe(true)
  })

  it('When a size is not a power of two, then a RangeError names the problem', () => {
    expect(() => fft2d(new Float64Array(12), 3, 4)).toThrow(RangeError)
    expect(() => ifft2d(new Float64Array(12), new Float64Array(12), 4, 3)).toThrow(/power-of-two/)
  })

  it('When the input is a single sample, then the transform is the identity', () => {
    expect(Array.from(fft2d(new Float64Array([7]), 1, 1).re)).toEqual([7])
  })
})

describe('realFft2dHalf', () => {
  it.each([
    [16, 8],
    [4, 4],
    [1, 4],
    [8, 1],
  ])('When a real %i×%i image is transformed, then columns 0..W/2 equal those of fft2d', (width, height) => {
    const random = createRandom(15) // fixed seed
    const re = Float64Array.from({ length: width * height }, () => random())
    const full = fft2d(re, width, height)
    const half = realFft2dHalf(re, width, height)
    expect(half.halfWidth).toBe(width === 1 ? 1 : width / 2 + 1)
    for (let k = 0; k < height; k++) {
      for (let l = 0; l < half.halfWidth; l++) {
        expect(Math.abs(half.re[k * half.halfWidth + l] - full.re[k * width + l])).toBeLessThan(1e-12)
        expect(Math.abs(half.im[k * half.halfWidth + l] - full.im[k * width + l])).toBeLessThan(1e-12)
      }
    }
  })
})

describe('realFft2dHalf and realFft2dHalfPower (same fft.js butterflies as fft2d)', () => {
  it.each([
    [2, 2],
    [4, 8],
    [8, 4],
    [32, 16],
    [16, 64],
    [512, 2],
    [1, 1],
  ])('When a real %i×%i image is transformed, then the half plane is bit for bit fft2d and the power its square', (width, height) => {
    // Exact result: both run fft.js's radix-4 schedule (its twiddle table, its order of operations) on every row and
    // then every column, so the numbers are the same, not just close. Fixed seed 19.
    const random = createRandom(19)
    const re = Float64Array.from({ length: width * height }, () => random() - 0.5)
    const full = fft2d(re, width, height)
    const half = realFft2dHalf(re, width, height)
    const power = realFft2dHalfPower((y, out, offset) => out.set(re.subarray(y * width, (y + 1) * width), offset), width, height)
    for (let k = 0; k < height; k++) {
      for (let l = 0; l < half.halfWidth; l++) {
        const i = k * half.halfWidth + l
        expect(half.re[i]).toBe(full.re[k * width + l])
        expect(half.im[i]).toBe(full.im[k * width + l])
        expect(power[i]).toBe(half.re[i] * half.re[i] + half.im[i] * half.im[i])
      }
    }
  })
})

describe('realFft2dHalfPower with zero padding rows', () => {
  it.each([
    [16, 32, 5],
    [8, 16, 8],
    [4, 2, 1],
  ])('When only the first rows of a %i×%i image hold data (%i), then the power is that of the zero-padded image', (width, height, rowsWithData) => {
    // Exact result: a row of zeros transforms to zeros, so leaving those rows out changes no power value. Seed 29.
    const random = createRandom(29)
    const re = new Float64Array(width * height)
    for (let i = 0; i < width * rowsWithData; i++) re[i] = random() - 0.5
    const half = realFft2dHalf(re, width, height)
    const power = realFft2dHalfPower(
      (y, out, offset) => {
        expect(y).toBeLessThan(rowsWithData)
        out.set(re.subarray(y * width, (y + 1) * width), offset)
      },
      width,
      height,
      rowsWithData,
    )
    for (let i = 0; i < power.length; i++) expect(power[i]).toBe(half.re[i] * half.re[i] + half.im[i] * half.im[i])
  })
})

describe('nextPowerOfTwo', () => {
  it.each([
    [0, 1],
    [1, 1],
    [2, 2],
    [3, 4],
    [1000, 1024],
    [1024, 1024],
  ])('When n = %i, then the next power of two is %i', (n, expected) => {
    expect(nextPowerOfTwo(n)).toBe(expected)
    expect(isPowerOfTwo(expected)).toBe(true)
  })
})
