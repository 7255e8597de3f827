/**
 * Separable Gaussian smoothing of a float image.
 *
 * Method: convolution with a sampled, normalised 1-D Gaussian kernel along rows then columns (the 2-D Gaussian is
 * separable), kernel radius ceil(3σ); borders by edge replication (METHODS §1.3: zero padding biases border pixels).
 * Reference: scipy.ndimage.gaussian_filter(mode='nearest', truncate=3.0) uses the same kernel and border rule.
 * Input: any GrayImage/FloatImage; σ in pixels (σ ≤ 0 returns a float copy). Output: a new FloatImage.
 */
import type { FloatImage, GrayImage } from './types'

/** Sampled Gaussian kernel of radius ceil(3σ), normalised to sum 1. */
export function gaussianKernel(sigma: number): Float32Array {
  const radius = Math.max(1, Math.ceil(3 * sigma))
  const kernel = new Float32Array(2 * radius + 1)
  let sum = 0
  for (let i = -radius; i <= radius; i++) {
    const v = Math.exp((-i * i) / (2 * sigma * sigma))
    kernel[i + radius] = v
    sum += v
  }
  for (let i = 0; i < kernel.length; i++) kernel[i] /= sum
  return kernel
}

/**
 * Convolve every row of `src` with `kernel` into `dst` (edge replication), summing the taps in kernel order in double
 * precision. Only the first and last `radius` pixels of a row need the clamp; the 7-tap kernel (σ ≤ 1, the default
 * smoothing and derivative scale) has an unrolled interior with the row window held in locals.
 */
function convolveRows(src: Float32Array, dst: Float32Array, width: number, height: number, kernel: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  for (let y = 0; y < height; y++) {
    const row = y * width
    if (radius === 3 && width > 6) {
      convolveRowInterior7(src, dst, row, width, kernel)
      convolveRowEdges(src, dst, row, width, kernel, 0, 3)
      convolveRowEdges(src, dst, row, width, kernel, width - 3, width)
    } else if (width > 2 * radius) {
      convolveRowInterior(src, dst, row, width, kernel)
      convolveRowEdges(src, dst, row, width, kernel, 0, radius)
      convolveRowEdges(src, dst, row, width, kernel, width - radius, width)
    } else {
      convolveRowEdges(src, dst, row, width, kernel, 0, width)
    }
  }
}

/**
 * Pixels radius..width−radius−1 of one row, whose taps all lie inside the row (any radius, same sum order). Four
 * neighbouring pixels are summed side by side: their sums are independent, so the long tap loop is not one chain.
 */
function convolveRowInterior(src: Float32Array, dst: Float32Array, row: number, width: number, kernel: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  const taps = kernel.length
  const end = row + width - radius
  let i = row + radius
  for (; i + 4 <= end; i += 4) {
    let acc0 = 0
    let acc1 = 0
    let acc2 = 0
    let acc3 = 0
    const first = i - radius
    for (let k = 0; k < taps; k++) {
      const weight = kernel[k]
      acc0 += src[first + k] * weight
      acc1 += src[first + k + 1] * weight
      acc2 += src[first + k + 2] * weight
      acc3 += src[first + k + 3] * weight
    }
    dst[i] = acc0
    dst[i + 1] = acc1
    dst[i + 2] = acc2
    dst[i + 3] = acc3
  }
  for (; i < end; i++) {
    let acc = 0
    const first = i - radius
    for (let k = 0; k < taps; k++) acc += src[first + k] * kernel[k]
    dst[i] = acc
  }
}

/** Pixels from..to−1 of one row with clamped taps (any radius). */
function convolveRowEdges(src: Float32Array, dst: Float32Array, row: number, width: number, kernel: Float32Array, from: number, to: number): void {
  const radius = (kernel.length - 1) >> 1
  for (let x = from; x < to; x++) {
    let acc = 0
    for (let k = -radius; k <= radius; k++) {
      let xx = x + k
      if (xx < 0) xx = 0
      else if (xx >= width) xx = width - 1
      acc += src[row + xx] * kernel[k + radius]
    }
    dst[row + x] = acc
  }
}

/** Pixels 3..width−4 of one row with a 7-tap kernel: a sliding window of seven samples, same sum order. */
function convolveRowInterior7(src: Float32Array, dst: Float32Array, row: number, width: number, kernel: Float32Array): void {
  const k0 = kernel[0]
  const k1 = kernel[1]
  const k2 = kernel[2]
  const k3 = kernel[3]
  const k4 = kernel[4]
  const k5 = kernel[5]
  const k6 = kernel[6]
  let a0 = src[row]
  let a1 = src[row + 1]
  let a2 = src[row + 2]
  let a3 = src[row + 3]
  let a4 = src[row + 4]
  let a5 = src[row + 5]
  const end = row + width - 3
  for (let i = row + 3; i < end; i++) {
    const a6 = src[i + 3]
    // The leading 0 + keeps the generic loop's result for signed zeros (acc starts at +0 there).
    dst[i] = 0 + a0 * k0 + a1 * k1 + a2 * k2 + a3 * k3 + a4 * k4 + a5 * k5 + a6 * k6
    a0 = a1
    a1 = a2
    a2 = a3
    a3 = a4
    a4 = a5
    a5 = a6
  }
}

/**
 * Convolve every column of `src` with `kernel` into `dst`, one output row at a time (it stays in cache) from the
 * 2·radius + 1 input rows it needs (edge rows repeated), accumulating in float32 in kernel order (the rounding of a
 * Float32Array sum).
 */
function convolveColumns(src: Float32Array, dst: Float32Array, width: number, height: number, kernel: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  const taps = kernel.length
  // Start of the input row of each tap, edge rows repeated; border rows then take the same loops as the others.
  const rows = new Int32Array(taps)
  for (let y = 0; y < height; y++) {
    for (let k = 0; k < taps; k++) {
      const yy = y + k - radius
      rows[k] = (yy < 0 ? 0 : yy >= height ? height - 1 : yy) * width
    }
    if (radius === 3) convolveColumnRow7(src, rows, dst, y * width, width, kernel)
    else convolveColumnRow(src, rows, dst, y * width, width, kernel)
  }
}

/**
 * One output row of the column pass from the input rows starting at rows[k] (one per tap), float32 rounding after
 * every tap. Taps are applied four at a time, so each output value is loaded and stored once per four taps.
 */
function convolveColumnRow(src: Float32Array, rows: Int32Array, dst: Float32Array, out: number, width: number, kernel: Float32Array): void {
  const f = Math.fround
  const taps = kernel.length
  let k = 0
  for (; k + 4 <= taps; k += 4) {
    const a = rows[k]
    const b = rows[k + 1]
    const c = rows[k + 2]
    const d = rows[k + 3]
    const wa = kernel[k]
    const wb = kernel[k + 1]
    const wc = kernel[k + 2]
    const wd = kernel[k + 3]
    // The sum starts from +0, as in a zero-filled Float32Array row.
    const first = k === 0
    for (let x = 0; x < width; x++) {
      let acc = f((first ? 0 : dst[out + x]) + src[a + x] * wa)
      acc = f(acc + src[b + x] * wb)
      acc = f(acc + src[c + x] * wc)
      dst[out + x] = acc + src[d + x] * wd
    }
  }
  for (; k < taps; k++) {
    const a = rows[k]
    const wa = kernel[k]
    if (k === 0) for (let x = 0; x < width; x++) dst[out + x] = 0 + src[a + x] * wa
    else for (let x = 0; x < width; x++) dst[out + x] += src[a + x] * wa
  }
}

/** One output row of the 7-tap column pass from the seven input rows starting at rows[0..6]. */
function convolveColumnRow7(src: Float32Array, rows: Int32Array, dst: Float32Array, out: number, width: number, kernel: Float32Array): void {
  const f = Math.fround
  const k0 = kernel[0]
  const k1 = kernel[1]
  const k2 = kernel[2]
  const k3 = kernel[3]
  const k4 = kernel[4]
  const k5 = kernel[5]
  const k6 = kernel[6]
  const r0 = rows[0]
  const r1 = rows[1]
  const r2 = rows[2]
  const r3 = rows[3]
  const r4 = rows[4]
  const r5 = rows[5]
  const r6 = rows[6]
  for (let x = 0; x < width; x++) {
    let acc = f(0 + src[r0 + x] * k0)
    acc = f(acc + src[r1 + x] * k1)
    acc = f(acc + src[r2 + x] * k2)
    acc = f(acc + src[r3 + x] * k3)
    acc = f(acc + src[r4 + x] * k4)
    acc = f(acc + src[r5 + x] * k5)
    dst[out + x] = acc + src[r6 + x] * k6
  }
}

/** Float copy of integer input and the row-pass output, kept for the largest image seen (never returned). */
let inputScratch = new Float32Array(0)
let rowScratch = new Float32Array(0)

/**
 * Gaussian-smooth `image` with standard deviation `sigma` pixels.
 * @param scratch optional reusable buffer of width*height floats for the row pass (a module buffer otherwise).
 * @param out optional buffer of at least width*height floats for the result (its first width*height values are
 *   returned); it may be the input's own data (in-place smoothing).
 * @example gaussianBlur({ width: 3, height: 1, data: new Float32Array([0, 3, 0]) }, 1)
 */
export function gaussianBlur(image: GrayImage | FloatImage, sigma: number, scratch?: Float32Array, out?: Float32Array): FloatImage {
  const { width, height } = image
  const n = width * height
  let src: Float32Array
  if (image.data instanceof Float32Array) {
    src = image.data
  } else {
    if (inputScratch.length < n) inputScratch = new Float32Array(n)
    src = inputScratch.subarray(0, n)
    src.set(image.data.subarray(0, n))
  }
  if (!(sigma > 0)) return { width, height, data: Float32Array.from(src.subarray(0, n)) }
  const kernel = gaussianKernel(sigma)
  let tmp: Float32Array
  if (scratch && scratch.length >= n) {
    tmp = scratch
  } else {
    if (rowScratch.length < n) rowScratch = new Float32Array(n)
    tmp = rowScratch
  }
  const result = out !== undefined && out.length >= n ? out.subarray(0, n) : new Float32Array(n)
  convolveRows(src, tmp, width, height, kernel)
  convolveColumns(tmp, result, width, height, kernel)
  return { width, height, data: result }
}
