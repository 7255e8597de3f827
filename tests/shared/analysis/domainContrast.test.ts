import { describe, expect, it } from 'vitest'
import { domainContrast, sharpestFrameIndex } from '@shared/analysis/domainContrast'
import { createRandom } from '@shared/analysis/seededRandom'
import type { BinaryMask, FloatImage } from '@shared/analysis/types'

const width = 32
const height = 16
/** Stripe mask: columns 0–15 up, 16–31 down. */
const stripes: BinaryMask = {
  width,
  height,
  data: Uint8Array.from({ length: width * height }, (_, i) => (i % width < 16 ? 1 : 0)),
}

/** Two-level frame on the stripe mask with Gaussian noise. */
function frame(up: number, down: number, sigma: number, seed: number): FloatImage {
  const random = createRandom(seed)
  return {
    width,
    height,
    data: Float32Array.from(stripes.data, (v) => (v ? up : down) + random.normal(0, sigma)),
  }
}

describe('domainContrast', () => {
  it('When a noise-free two-level frame is measured, then contrast = |up − down| and noise = 0', () => {
    const result = domainContrast(frame(140, 100, 0, 1), stripes)
    expect(result).toMatchObject({ contrast: 40, upMean: 140, downMean: 100, noise: 0, upPixels: 256, downPixels: 256 })
  })

  it('When Gaussian noise σ = 5 is added, then the means and the pooled noise are recovered', () => {
    // Synthetic ground truth [D]: SE of each mean = 5/√256 ≈ 0.31; pooled SD within a few % of σ; fixed seed 2.
    const result = domainContrast(frame(140, 100, 5, 2), stripes)
    expect(Math.abs(result.upMean! - 140)).toBeLessThan(1.5)
    expect(Math.abs(result.downMean! - 100)).toBeLessThan(1.5)
    expect(Math.abs(result.noise! - 5)).toBeLessThan(0.5)
  })

  it('When the contrast is inverted, then the contrast is still positive and the means say which is brighter', () => {
    const result = domainContrast(frame(90, 130, 0, 3), stripes)
    expect(result.contrast).toBe(40)
    expect(result.upMean! < result.downMean!).toBe(true)
  })

  it('When pixels are ignored or not finite, then they are left out', () => {
    const image = frame(140, 100, 0, 4)
    image.data[0] = 10_000
    image.data[20] = Number.NaN
    const ignore = new Uint8Array(width * height)
    ignore[0] = 1
    const result = domainContrast(image, { ...stripes, ignore })
    expect(result).toMatchObject({ contrast: 40, upPixels: 255, downPixels: 255 })
  })

  it('When the mask has one phase only, then contrast 0 and a null mean and noise', () => {
    const allUp: BinaryMask = { width, height, data: new Uint8Array(width * height).fill(1) }
    expect(domainContrast(frame(140, 100, 0, 5), allUp)).toMatchObject({ contrast: 0, downMean: null, noise: null })
    const empty = domainContrast({ width: 0, height: 0, data: new Float32Array(0) }, { width: 0, height: 0, data: new Uint8Array(0) })
    expect(empty).toMatchObject({ contrast: 0, upMean: null, downMean: null, noise: null })
  })

  it('When the image and mask differ in size, then a RangeError is thrown', () => {
    expect(() => domainContrast({ width: 2, height: 2, data: new Uint8Array(4) }, stripes)).toThrow(RangeError)
  })
})

describe('sharpestFrameIndex', () => {
  it('When contrasts are given, then the largest wins (first on ties); empty gives null', () => {
    expect(sharpestFrameIndex([3, 9, 2, 9])).toBe(1)
    expect(sharpestFrameIndex([Number.NaN, 1])).toBe(1)
    expect(sharpestFrameIndex([])).toBeNull()
  })

  it('When a temperature series fades, then the frame with the highest contrast-to-noise is chosen', () => {
    // Contrast shrinks toward Tc while noise stays: 40, 25, 10, 3 grey levels at σ = 4; fixed seeds 10…13.
    const series = [10, 40, 25, 3].map((c, k) => frame(100 + c, 100, 4, 10 + k))
    expect(sharpestFrameIndex(series)).toBe(1)
  })

  it('When frames are noise-free, then the larger contrast wins; a constant frame scores 0', () => {
    const constant: FloatImage = { width, height, data: new Float32Array(width * height).fill(7) }
    expect(sharpestFrameIndex([constant, frame(120, 100, 0, 0), frame(150, 100, 0, 0)])).toBe(2)
  })
})
