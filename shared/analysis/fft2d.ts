/**
 * Two-dimensional discrete Fourier transform of power-of-two images on top of fft.js.
 *
 * Method: row–column decomposition of the 2-D DFT F(k,l) = Σ_y Σ_x f(y,x)·exp(−2πi(ky/H + lx/W)): real-input row
 * transforms (fft.js `realTransform` + `completeSpectrum`), then complex column transforms (radix-4 Cooley–Tukey in
 * fft.js 4.0.4, F. Indutny). The inverse carries the 1/(W·H) factor (numpy.fft.ifft2 convention).
 * Checked against: a naive O(N²) DFT on small random arrays, and the round trip ifft2d(fft2d(f)) = f (tests).
 * Input: row-major arrays, width and height powers of two (a size of 1 is allowed: the 1-point DFT is the identity).
 * Output: new Float64Arrays `re`, `im` in unshifted order (frequency 0 at index 0; index k ≥ N/2 is k − N).
 * FFT plans and scratch rows are cached per size, so repeated frames of one size allocate only the outputs.
 */
import FFT from 'fft.js'

/** Complex 2-D spectrum or signal, row-major, unshifted. */
export interface ComplexImage {
  re: Float64Array
  im: Float64Array
}

interface FftPlan {
  fft: FFT
  /** Real input row (n values). */
  realIn: Float64Array
  /** Interleaved complex input (2n values). */
  complexIn: Float64Array
  /** Interleaved complex output (2n values). */
  complexOut: Float64Array
  /** Gathered block of COLUMN_BLOCK interleaved columns of length n, for column transforms. */
  columnBlock: Float64Array
}

/** Columns transformed together, so each gather reads one cache line of a row instead of one value. */
const COLUMN_BLOCK = 8

const plans = new Map<number, FftPlan>()

function planFor(n: number): FftPlan {
  let plan = plans.get(n)
  if (plan === undefined) {
    plan = {
      fft: new FFT(n),
      realIn: new Float64Array(n),
      complexIn: new Float64Array(2 * n),
      complexOut: new Float64Array(2 * n),
      columnBlock: new Float64Array(2 * n * COLUMN_BLOCK),
    }
    plans.set(n, plan)
  }
  return plan
}

/** True for 1, 2, 4, 8, … */
export function isPowerOfTwo(n: number): boolean {
  return Number.isInteger(n) && n >= 1 && (n & (n - 1)) === 0
}

/**
 * Smallest power of two ≥ n (1 for n ≤ 1).
 * @example nextPowerOfTwo(1000) // 1024
 */
export function nextPowerOfTwo(n: number): number {
  let p = 1
  while (p < n) p *= 2
  return p
}

function checkSize(width: number, height: number, length: number): void {
  if (!isPowerOfTwo(width) || !isPowerOfTwo(height)) {
    throw new RangeError(`fft2d needs power-of-two sizes, got ${width}×${height}; pad or crop first`)
  }
  if (length < width * height) throw new RangeError(`fft2d input has ${length} values, expected ${width * height}`)
}

/** Forward (sign −1) or inverse (sign +1, scaled 1/n) complex transform of every row, in place. */
function transformRows(re: Float64Array, im: Float64Array, width: number, height: number, inverse: boolean): void {
  if (width === 1) return
  const { fft, complexIn, complexOut } = planFor(width)
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) {
      complexIn[2 * x] = re[row + x]
      complexIn[2 * x + 1] = im[row + x]
    }
    if (inverse) fft.inverseTransform(complexOut, complexIn)
    else fft.transform(complexOut, complexIn)
    for (let x = 0; x < width; x++) {
      re[row + x] = complexOut[2 * x]
      im[row + x] = complexOut[2 * x + 1]
    }
  }
}

/** Real-input forward transform of every row of `src` into `re`, `im` (Hermitian half completed by symmetry). */
function transformRealRows(
  src: ArrayLike<number>,
  re: Float64Array,
  im: Float64Array,
  width: number,
  height: number,
): void {
  if (width === 1) {
    for (let i = 0; i < height; i++) re[i] = src[i]
    return
  }
  const { fft, realIn, complexOut } = planFor(width)
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) realIn[x] = src[row + x]
    fft.realTransform(complexOut, realIn)
    fft.completeSpectrum(complexOut)
    for (let x = 0; x < width; x++) {
      re[row + x] = complexOut[2 * x]
      im[row + x] = complexOut[2 * x + 1]
    }
  }
}

/**
 * Complex transform of columns 0..columns−1 of a row-major array `width` wide, in place, COLUMN_BLOCK columns at a
 * time.
 */
function transformColumns(
  re: Float64Array,
  im: Float64Array,
  width: number,
  height: number,
  inverse: boolean,
  columns = width,
): void {
  if (height === 1) return
  const { fft, complexIn: input, complexOut, columnBlock: gathered } = planFor(height)
  const block = Math.min(COLUMN_BLOCK, columns)
  for (let x0 = 0; x0 < columns; x0 += block) {
    const nb = Math.min(block, columns - x0)
    for (let y = 0; y < height; y++) {
      const row = y * width + x0
      for (let b = 0; b < nb; b++) {
        const g = 2 * (b * height + y)
        gathered[g] = re[row + b]
        gathered[g + 1] = im[row + b]
      }
    }
    for (let b = 0; b < nb; b++) {
      input.set(gathered.subarray(2 * b * height, 2 * (b + 1) * height))
      if (inverse) fft.inverseTransform(complexOut, input)
      else fft.transform(complexOut, input)
      gathered.set(complexOut, 2 * b * height)
    }
    for (let y = 0; y < height; y++) {
      const row = y * width + x0
      for (let b = 0; b < nb; b++) {
        const g = 2 * (b * height + y)
        re[row + b] = gathered[g]
        im[row + b] = gathered[g + 1]
      }
    }
  }
}

/**
 * Forward 2-D DFT, F(k,l) = Σ f(y,x)·exp(−2πi(ky/H + lx/W)), no scaling.
 * @param re real part (row-major, width·height values); `im` optional imaginary part (real input when absent).
 * @throws RangeError when width or height is not a power of two.
 * @example fft2d(new Float64Array([1, 2, 3, 4]), 2, 2).re // [10, -2, -4, 0]
 */
export function fft2d(
  re: Float32Array | Float64Array,
  width: number,
  height: number,
  im?: Float32Array | Float64Array,
): ComplexImage {
  checkSize(width, height, re.length)
  const n = width * height
  const outRe = new Float64Array(n)
  const outIm = new Float64Array(n)
  if (im === undefined) {
    transformRealRows(re, outRe, outIm, width, height)
  } else {
    for (let i = 0; i < n; i++) {
      outRe[i] = re[i]
      outIm[i] = im[i]
    }
    transformRows(outRe, outIm, width, height, false)
  }
  transformColumns(outRe, outIm, width, height, false)
  return { re: outRe, im: outIm }
}

/** Non-redundant half of the spectrum of a real image: columns l = 0..W/2 of F (F(−k,−l) = conj F(k,l)). */
export interface HalfSpectrum extends ComplexImage {
  /** Columns stored per row: W/2 + 1 (1 when W = 1). */
  halfWidth: number
}

/**
 * Forward 2-D DFT of a real image, keeping only columns l = 0..W/2 (about half the work of `fft2d`): the other
 * columns follow from Hermitian symmetry F(k, W−l) = conj F((H−k) mod H, l). Used for power spectra.
 * @param buffers optional buffers of at least (W/2 + 1)·H values to write the spectrum into (frames of one size then
 *   allocate nothing); the returned arrays are views of them.
 * @throws RangeError when width or height is not a power of two.
 */
export function realFft2dHalf(
  re: Float32Array | Float64Array,
  width: number,
  height: number,
  buffers?: { re: Float64Array; im: Float64Array },
): HalfSpectrum {
  checkSize(width, height, re.length)
  const halfWidth = width === 1 ? 1 : width / 2 + 1
  const size = halfWidth * height
  const reuse = buffers !== undefined && buffers.re.length >= size && buffers.im.length >= size
  const outRe = reuse ? buffers!.re.subarray(0, size) : new Float64Array(size)
  const outIm = reuse ? buffers!.im.subarray(0, size) : new Float64Array(size)
  // Every entry is written below except the imaginary column of a 1-wide image; clear a reused buffer for it.
  if (reuse && width === 1) outIm.fill(0)
  if (width === 1) {
    for (let i = 0; i < height; i++) outRe[i] = re[i]
  } else {
    const { fft, realIn, complexOut } = planFor(width)
    const direct = re instanceof Float64Array
    for (let y = 0; y < height; y++) {
      const row = y * width
      let input: Float64Array
      if (direct) {
        input = re.subarray(row, row + width)
      } else {
        for (let x = 0; x < width; x++) realIn[x] = re[row + x]
        input = realIn
      }
      // realTransform fills bins 0..W/2, exactly the half kept here.
      fft.realTransform(complexOut, input)
      const out = y * halfWidth
      for (let l = 0; l < halfWidth; l++) {
        outRe[out + l] = complexOut[2 * l]
        outIm[out + l] = complexOut[2 * l + 1]
      }
    }
  }
  transformColumns(outRe, outIm, halfWidth, height, false)
  return { re: outRe, im: outIm, halfWidth }
}

/**
 * Inverse 2-D DFT with the 1/(W·H) factor, so `ifft2d(fft2d(f))` returns f (imaginary part ≈ 0 for real f).
 * @throws RangeError when width or height is not a power of two.
 */
export function ifft2d(
  re: Float32Array | Float64Array,
  im: Float32Array | Float64Array,
  width: number,
  height: number,
): ComplexImage {
  checkSize(width, height, re.length)
  const n = width * height
  const outRe = Float64Array.from(re.subarray(0, n))
  const outIm = Float64Array.from(im.subarray(0, n))
  transformRows(outRe, outIm, width, height, true)
  transformColumns(outRe, outIm, width, height, true)
  return { re: outRe, im: outIm }
}
