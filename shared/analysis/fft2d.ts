/**
 * Two-dimensional discrete Fourier transform of power-of-two images on top of fft.js.
 *
 * Method: row–column decomposition of the 2-D DFT F(k,l) = Σ_y Σ_x f(y,x)·exp(−2πi(ky/H + lx/W)): real-input row
 * transforms (fft.js `realTransform` + `completeSpectrum`), then complex column transforms (radix-4 Cooley–Tukey in
 * fft.js 4.0.4, F. Indutny). The inverse carries the 1/(W·H) factor (numpy.fft.ifft2 convention).
 * The half-plane transforms (`realFft2dHalf`, `realFft2dHalfPower`) run fft.js's radix-4 schedule on several rows or
 * columns at once (same butterflies, same twiddle table, same order of operations, so the same bits as calling
 * fft.js row by row and column by column; the loops only load each twiddle once for the whole batch and keep the
 * data of a batch in cache).
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
 * Supplies one row of a real image: writes its `width` samples x = 0..width−1 to out[offset + x] (zeros for padding).
 * Rows are requested in order, a few at a time.
 */
export type RealRowSource = (y: number, out: Float64Array, offset: number) => void

/** Tables of the batched transforms for one length n ≥ 2: fft.js's radix-4 schedule. */
interface BatchPlan {
  n: number
  /** fft.js's own table: cos(2πj/n), −sin(2πj/n) interleaved (taken from it, so the twiddles are the same numbers). */
  twiddles: Float64Array
  /** Input stride of fft.js's first pass in samples: n/4 (radix-4 first pass, log2 n even) or n/2 (radix-2). */
  firstStride: number
  /** Input sample at which first-pass block t starts: t with its base-4 digits reversed (fft.js `_bitrev`). */
  firstOffsets: Int32Array
}

const batchPlans = new Map<number, BatchPlan>()

function batchPlanFor(n: number): BatchPlan {
  let plan = batchPlans.get(n)
  if (plan === undefined) {
    const log2n = Math.round(Math.log2(n))
    // fft.js: `_width` = log2 of the first pass's stride in interleaved values (2 per sample).
    const width = log2n % 2 === 0 ? log2n - 1 : log2n
    const firstStride = (1 << width) >> 1
    const radix = firstStride === n / 4 ? 4 : 2
    const firstOffsets = new Int32Array(n / radix)
    for (let t = 0; t < firstOffsets.length; t++) {
      let reversed = 0
      // width is odd; the digit at bit width − 1 is 0 for every block used, so it is left out (fft.js shifts it by −1).
      for (let shift = 0; shift + 2 <= width; shift += 2) reversed |= ((t >>> shift) & 3) << (width - shift - 2)
      firstOffsets[t] = reversed >> 1
    }
    plan = { n, twiddles: Float64Array.from(planFor(n).fft.table), firstStride, firstOffsets }
    batchPlans.set(n, plan)
  }
  return plan
}

/**
 * Forward real DFT of `count` signals of length n at once with the arithmetic of fft.js `realTransform` (the same
 * operations in the same order, so the same bits; only the loop order differs): sample x of signal r at
 * src[r·n + x], bin p of signal r to re/im[p·count + r] for p = 0..n/2 (entries above n/2 are scratch). Each
 * twiddle is loaded once for all blocks and signals, which is where the time goes for short blocks.
 */
function realTransformBatch(plan: BatchPlan, src: Float64Array, re: Float64Array, im: Float64Array, count: number): void {
  const { n, twiddles: table, firstStride, firstOffsets } = plan
  const s1 = firstStride
  if (s1 === n / 2) {
    for (let t = 0; t < firstOffsets.length; t++) {
      const a = firstOffsets[t]
      const o = 2 * t * count
      for (let r = 0; r < count; r++) {
        const even = src[r * n + a]
        const odd = src[r * n + a + s1]
        re[o + r] = even + odd
        im[o + r] = 0
        re[o + count + r] = even - odd
        im[o + count + r] = 0
      }
    }
  } else {
    for (let t = 0; t < firstOffsets.length; t++) {
      const a = firstOffsets[t]
      const o = 4 * t * count
      for (let r = 0; r < count; r++) {
        const i = r * n + a
        const Ar = src[i]
        const Br = src[i + s1]
        const Cr = src[i + 2 * s1]
        const Dr = src[i + 3 * s1]
        const T0r = Ar + Cr
        const T1r = Ar - Cr
        const T2r = Br + Dr
        const T3r = Br - Dr
        const q = o + r
        re[q] = T0r + T2r
        im[q] = 0
        re[q + count] = T1r
        im[q + count] = -T3r
        re[q + 2 * count] = T0r - T2r
        im[q + 2 * count] = 0
        re[q + 3 * count] = T1r
        im[q + 3 * count] = T3r
      }
    }
  }
  // Radix-4 passes over blocks of `len` samples; fft.js's twiddle step `step` is in interleaved values.
  for (let len = (n / firstStride) * 4, step = firstStride >> 1; len <= n; len *= 4, step >>= 2) {
    const quarter = len >> 2
    const half = len >> 1
    const q = quarter * count
    for (let i = 0, k = 0; 2 * i <= quarter; i++, k += step) {
      const tBr = table[k]
      const tBi = table[k + 1]
      const tCr = table[2 * k]
      const tCi = table[2 * k + 1]
      const tDr = table[3 * k]
      const tDi = table[3 * k + 1]
      // fft.js stores the third output only at i = 0 and the mirrored pair only strictly inside the half quarter.
      const mirror = i > 0 && 2 * i < quarter
      const mirrorA = (quarter - i) * count
      const mirrorB = (half - i) * count
      for (let block = 0; block < n * count; block += len * count) {
        const base = block + i * count
        for (let r = 0; r < count; r++) {
          const A = base + r
          const B = A + q
          const C = B + q
          const D = C + q
          const Ar = re[A]
          const Ai = im[A]
          const Br = re[B]
          const Bi = im[B]
          const Cr = re[C]
          const Ci = im[C]
          const Dr = re[D]
          const Di = im[D]
          const MBr = Br * tBr - Bi * tBi
          const MBi = Br * tBi + Bi * tBr
          const MCr = Cr * tCr - Ci * tCi
          const MCi = Cr * tCi + Ci * tCr
          const MDr = Dr * tDr - Di * tDi
          const MDi = Dr * tDi + Di * tDr
          const T0r = Ar + MCr
          const T0i = Ai + MCi
          const T1r = Ar - MCr
          const T1i = Ai - MCi
          const T2r = MBr + MDr
          const T2i = MBi + MDi
          const T3r = MBr - MDr
          const T3i = MBi - MDi
          re[A] = T0r + T2r
          im[A] = T0i + T2i
          re[B] = T1r + T3i
          im[B] = T1i - T3r
          if (i === 0) {
            re[C] = T0r - T2r
            im[C] = T0i - T2i
          } else if (mirror) {
            const SA = block + mirrorA + r
            const SB = block + mirrorB + r
            re[SA] = T1r + -T3i
            im[SA] = -T1i + -T3r
            re[SB] = T0r + -T2r
            im[SB] = -T0i - -T2i
          }
        }
      }
    }
  }
}

/**
 * Forward complex DFT of `count` signals of length n at once with the arithmetic of fft.js `transform` (same
 * operations, same order, same bits): sample y of signal c at srcRe/srcIm[from + sampleAt[y] + c·signalStep] (the
 * source is only read), bin k of signal c to re/im[k·count + c].
 */
function complexTransformBatch(
  plan: BatchPlan,
  srcRe: Float64Array,
  srcIm: Float64Array,
  from: number,
  sampleAt: Int32Array,
  signalStep: number,
  re: Float64Array,
  im: Float64Array,
  count: number,
): void {
  const { n, twiddles: table, firstStride, firstOffsets } = plan
  const s1 = firstStride
  if (s1 === n / 2) {
    for (let t = 0; t < firstOffsets.length; t++) {
      const a = from + sampleAt[firstOffsets[t]]
      const b = from + sampleAt[firstOffsets[t] + s1]
      const o = 2 * t * count
      for (let c = 0; c < count; c++) {
        const ia = a + c * signalStep
        const ib = b + c * signalStep
        const er = srcRe[ia]
        const ei = srcIm[ia]
        const or = srcRe[ib]
        const oi = srcIm[ib]
        re[o + c] = er + or
        im[o + c] = ei + oi
        re[o + count + c] = er - or
        im[o + count + c] = ei - oi
      }
    }
  } else {
    for (let t = 0; t < firstOffsets.length; t++) {
      const y = firstOffsets[t]
      const a = from + sampleAt[y]
      const b = from + sampleAt[y + s1]
      const d = from + sampleAt[y + 2 * s1]
      const e = from + sampleAt[y + 3 * s1]
      const o = 4 * t * count
      for (let c = 0; c < count; c++) {
        const step = c * signalStep
        const Ar = srcRe[a + step]
        const Ai = srcIm[a + step]
        const Br = srcRe[b + step]
        const Bi = srcIm[b + step]
        const Cr = srcRe[d + step]
        const Ci = srcIm[d + step]
        const Dr = srcRe[e + step]
        const Di = srcIm[e + step]
        const T0r = Ar + Cr
        const T0i = Ai + Ci
        const T1r = Ar - Cr
        const T1i = Ai - Ci
        const T2r = Br + Dr
        const T2i = Bi + Di
        const T3r = Br - Dr
        const T3i = Bi - Di
        const q = o + c
        re[q] = T0r + T2r
        im[q] = T0i + T2i
        re[q + count] = T1r + T3i
        im[q + count] = T1i - T3r
        re[q + 2 * count] = T0r - T2r
        im[q + 2 * count] = T0i - T2i
        re[q + 3 * count] = T1r - T3i
        im[q + 3 * count] = T1i + T3r
      }
    }
  }
  for (let len = (n / firstStride) * 4, step = firstStride >> 1; len <= n; len *= 4, step >>= 2) {
    const quarter = len >> 2
    const q = quarter * count
    for (let i = 0, k = 0; i < quarter; i++, k += step) {
      const tBr = table[k]
      const tBi = table[k + 1]
      const tCr = table[2 * k]
      const tCi = table[2 * k + 1]
      const tDr = table[3 * k]
      const tDi = table[3 * k + 1]
      for (let block = 0; block < n * count; block += len * count) {
        const base = block + i * count
        for (let r = 0; r < count; r++) {
          const A = base + r
          const B = A + q
          const C = B + q
          const D = C + q
          const Ar = re[A]
          const Ai = im[A]
          const Br = re[B]
          const Bi = im[B]
          const Cr = re[C]
          const Ci = im[C]
          const Dr = re[D]
          const Di = im[D]
          const MBr = Br * tBr - Bi * tBi
          const MBi = Br * tBi + Bi * tBr
          const MCr = Cr * tCr - Ci * tCi
          const MCi = Cr * tCi + Ci * tCr
          const MDr = Dr * tDr - Di * tDi
          const MDi = Dr * tDi + Di * tDr
          const T0r = Ar + MCr
          const T0i = Ai + MCi
          const T1r = Ar - MCr
          const T1i = Ai - MCi
          const T2r = MBr + MDr
          const T2i = MBi + MDi
          const T3r = MBr - MDr
          const T3i = MBi - MDi
          re[A] = T0r + T2r
          im[A] = T0i + T2i
          re[B] = T1r + T3i
          im[B] = T1i - T3r
          re[C] = T0r - T2r
          im[C] = T0i - T2i
          re[D] = T1r - T3i
          im[D] = T1i + T3r
        }
      }
    }
  }
}

/** Rows transformed together by realTransformBatch. */
const ROW_BATCH = 8

/** Working arrays of halfPlaneTransform, kept for the largest size seen. */
const halfScratch = {
  rowSamples: new Float64Array(0),
  rowRe: new Float64Array(0),
  rowIm: new Float64Array(0),
  columnsRe: new Float64Array(0),
  columnsIm: new Float64Array(0),
  blockRe: new Float64Array(0),
  blockIm: new Float64Array(0),
}

function grow(name: keyof typeof halfScratch, length: number): Float64Array {
  if (halfScratch[name].length < length) halfScratch[name] = new Float64Array(length)
  return halfScratch[name]
}

/**
 * Receives COLUMN_BLOCK (or fewer) transformed columns x0..x0+count−1 of the half plane: F(k, x0 + c) in
 * re/im[k·count + c] for k = 0..H−1.
 */
type ColumnBlockSink = (x0: number, count: number, re: Float64Array, im: Float64Array) => void

/**
 * Half-plane 2-D DFT of a real width × height image (powers of two), same arithmetic as fft.js row by row, then
 * column by column: real row transforms ROW_BATCH rows at a time, whose bins 0..W/2 are kept as they come out (a
 * tile per batch, bin-major: F(y, l) at tile·halfWidth·R + l·R + y mod R), then complex column transforms
 * COLUMN_BLOCK columns at a time, reading the tiles through a per-row offset table, handed to `sink`. Rows from
 * `rowsWithData` on are zero padding: they are not requested, and whole tiles of them are not transformed (for
 * power spectra only, see the comment there).
 */
function halfPlaneTransform(width: number, height: number, rows: RealRowSource, sink: ColumnBlockSink, rowsWithData = height): void {
  const halfWidth = width === 1 ? 1 : width / 2 + 1
  const tileRows = Math.min(ROW_BATCH, height)
  const columnsRe = grow('columnsRe', halfWidth * height)
  const columnsIm = grow('columnsIm', halfWidth * height)
  const rowSamples = grow('rowSamples', width * tileRows)
  const rowRe = grow('rowRe', width * tileRows)
  const rowIm = grow('rowIm', width * tileRows)
  const rowPlan = width === 1 ? null : batchPlanFor(width)
  for (let y0 = 0; y0 < height; y0 += tileRows) {
    if (y0 >= rowsWithData) {
      // Rows of zeros transform to zeros: only the sign of a zero could differ, which squaring removes.
      columnsRe.fill(0, y0 * halfWidth, (y0 + tileRows) * halfWidth)
      columnsIm.fill(0, y0 * halfWidth, (y0 + tileRows) * halfWidth)
      continue
    }
    for (let r = 0; r < tileRows; r++) {
      if (y0 + r < rowsWithData) rows(y0 + r, rowSamples, r * width)
      else rowSamples.fill(0, r * width, (r + 1) * width)
    }
    if (rowPlan === null) {
      // A 1-point DFT is the identity.
      for (let r = 0; r < tileRows; r++) {
        rowRe[r] = rowSamples[r]
        rowIm[r] = 0
      }
    } else {
      realTransformBatch(rowPlan, rowSamples, rowRe, rowIm, tileRows)
    }
    columnsRe.set(rowRe.subarray(0, halfWidth * tileRows), y0 * halfWidth)
    columnsIm.set(rowIm.subarray(0, halfWidth * tileRows), y0 * halfWidth)
  }
  if (height === 1) {
    for (let x0 = 0; x0 < halfWidth; x0 += COLUMN_BLOCK) {
      const count = Math.min(COLUMN_BLOCK, halfWidth - x0)
      sink(x0, count, columnsRe.subarray(x0, x0 + count), columnsIm.subarray(x0, x0 + count))
    }
    return
  }
  const sampleAt = new Int32Array(height)
  for (let y = 0; y < height; y++) sampleAt[y] = (y - (y % tileRows)) * halfWidth + (y % tileRows)
  const blockRe = grow('blockRe', height * COLUMN_BLOCK)
  const blockIm = grow('blockIm', height * COLUMN_BLOCK)
  const columnPlan = batchPlanFor(height)
  for (let x0 = 0; x0 < halfWidth; x0 += COLUMN_BLOCK) {
    const count = Math.min(COLUMN_BLOCK, halfWidth - x0)
    complexTransformBatch(columnPlan, columnsRe, columnsIm, x0 * tileRows, sampleAt, tileRows, blockRe, blockIm, count)
    sink(x0, count, blockRe, blockIm)
  }
}

/** Row samples of a row-major real image (zeros need no padding: sizes are powers of two already). */
function imageRows(image: Float32Array | Float64Array, width: number): RealRowSource {
  return (y, out, offset) => {
    const row = y * width
    for (let x = 0; x < width; x++) out[offset + x] = image[row + x]
  }
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
  halfPlaneTransform(width, height, imageRows(re, width), (x0, count, blockRe, blockIm) => {
    for (let k = 0; k < height; k++) {
      for (let c = 0; c < count; c++) {
        outRe[k * halfWidth + x0 + c] = blockRe[k * count + c]
        outIm[k * halfWidth + x0 + c] = blockIm[k * count + c]
      }
    }
  })
  return { re: outRe, im: outIm, halfWidth }
}

/**
 * Power |F(k,l)|² of the 2-D DFT of a real image on the half plane l = 0..W/2 (row-major, W/2 + 1 values per row;
 * 1 when W = 1), the image given row by row so that no padded copy is needed. Same numbers as squaring
 * `realFft2dHalf` of the image.
 * @param rowsWithData rows from this one on are zero (padding to the power of two) and are not requested.
 * @param out optional buffer of at least (W/2 + 1)·H values; the result is a view of it.
 * @throws RangeError when width or height is not a power of two.
 */
export function realFft2dHalfPower(
  rows: RealRowSource,
  width: number,
  height: number,
  rowsWithData = height,
  out?: Float64Array,
): Float64Array {
  checkSize(width, height, width * height)
  const halfWidth = width === 1 ? 1 : width / 2 + 1
  const size = halfWidth * height
  const power = out !== undefined && out.length >= size ? out.subarray(0, size) : new Float64Array(size)
  halfPlaneTransform(width, height, rows, (x0, count, re, im) => {
    for (let k = 0; k < height; k++) {
      const row = k * halfWidth + x0
      const block = k * count
      for (let c = 0; c < count; c++) power[row + c] = re[block + c] * re[block + c] + im[block + c] * im[block + c]
    }
  }, Math.min(rowsWithData, height))
  return power
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
