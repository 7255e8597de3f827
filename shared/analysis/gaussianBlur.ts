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

/** Convolve every row of `src` with `kernel` into `dst` (edge replication). Kept small so the JIT optimises it early. */
function convolveRows(src: Float32Array, dst: Float32Array, width: number, height: number, kernel: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) {
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
}

/** Convolve every column of `src` with `kernel` into `dst`, row by row for cache-friendly access. */
function convolveColumns(src: Float32Array, dst: Float32Array, width: number, height: number, kernel: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  dst.fill(0)
  for (let k = -radius; k <= radius; k++) {
    const weight = kernel[k + radius]
    for (let y = 0; y < height; y++) {
      let yy = y + k
      if (yy < 0) yy = 0
      else if (yy >= height) yy = height - 1
      const out = y * width
      const inp = yy * width
      for (let x = 0; x < width; x++) dst[out + x] += src[inp + x] * weight
    }
  }
}

/**
 * Gaussian-smooth `image` with standard deviation `sigma` pixels.
 * @param scratch optional reusable buffer of width*height floats (avoids an allocation per frame).
 * @example gaussianBlur({ width: 3, height: 1, data: new Float32Array([0, 3, 0]) }, 1)
 */
export function gaussianBlur(image: GrayImage | FloatImage, sigma: number, scratch?: Float32Array): FloatImage {
  const { width, height } = image
  const src = image.data instanceof Float32Array ? image.data : Float32Array.from(image.data)
  if (!(sigma > 0)) return { width, height, data: Float32Array.from(src) }
  const kernel = gaussianKernel(sigma)
  const tmp = scratch && scratch.length >= width * height ? scratch : new Float32Array(width * height)
  const out = new Float32Array(width * height)
  convolveRows(src, tmp, width, height, kernel)
  convolveColumns(tmp, out, width, height, kernel)
  return { width, height, data: out }
}
