/**
 * Display derivatives of a frame (server/analysis/frameRendering.ts): exact percentiles for integer frames, the 8-bit
 * stretch between them, greyscale PNGs, and the thumbnail size. Expected values are constructed by hand from the
 * definition (the first value whose running count reaches the fraction of the pixels). In the server project because
 * it is server code; it needs no services.
 */
import { describe, expect, it } from 'vitest'
import { Jimp } from 'jimp'
import { THUMBNAIL_SIZE, displayRange, patternAboveBackground, renderFrame } from '../../server/analysis/frameRendering'
import type { GrayImage } from '../../shared/analysis/types'

/** Width, height, PNG colour type and bit depth from the IHDR chunk, and the decoded RGBA bitmap. */
async function readPng(png: Uint8Array) {
  const view = new DataView(png.buffer, png.byteOffset, png.byteLength)
  const image = await Jimp.read(Buffer.from(png))
  return { width: view.getUint32(16), height: view.getUint32(20), bitDepth: png[24], colorType: png[25], rgba: image.bitmap.data }
}

/** 40 × 25 frame holding each value 0 … 999 once (shuffled by a fixed stride, so position does not matter). */
function everyValueOnce(): GrayImage {
  const data = new Uint16Array(1000)
  for (let i = 0; i < 1000; i++) data[i] = (i * 37) % 1000
  return { width: 40, height: 25, data }
}

describe('displayRange', () => {
  it('When a 16-bit frame holds 0 … 999 once each, then the 0.5th and 99.5th percentiles are exactly 4 and 994', () => {
    // constructed: 0.005 × 1000 = 5 values reach value 4; 0.995 × 1000 = 995 values reach value 994.
    expect(displayRange(everyValueOnce())).toEqual({ low: 4, high: 994 })
  })

  it('When an 8-bit frame has 4 dead and 4 hot pixels in 1000, then the range is that of the other pixels', () => {
    // constructed: pixels 4 … 995 hold 20 + (i mod 100). Nine of them are 20, so 4 + 9 = 13 ≥ 5 values reach 20; nine
    // are 119, so 987 values reach 118 and 996 ≥ 995 reach 119.
    const data = Uint8Array.from({ length: 1000 }, (_, i) => (i < 4 ? 0 : i >= 996 ? 255 : 20 + (i % 100)))
    expect(displayRange({ width: 1000, height: 1, data })).toEqual({ low: 20, high: 119 })
  })

  it('When a float frame is given, then the range is within one of its 4096 bins of the exact percentiles', () => {
    const data = Float32Array.from({ length: 1000 }, (_, i) => ((i * 37) % 1000) / 10)
    const { low, high } = displayRange({ width: 1000, height: 1, data })
    const bin = 99.9 / 4095
    // constructed: exact percentiles 0.4 and 99.4 as above, values scaled by 1/10.
    expect(Math.abs(low - 0.4)).toBeLessThanOrEqual(bin)
    expect(Math.abs(high - 99.4)).toBeLessThanOrEqual(bin)
  })
})

describe('renderFrame', () => {
  it('When a 16-bit frame is rendered, then the preview is an 8-bit greyscale PNG of its size, stretched between the percentiles', async () => {
    const frame = everyValueOnce()
    const { preview, low, high } = await renderFrame(frame)
    const png = await readPng(preview)
    expect({ width: png.width, height: png.height, bitDepth: png.bitDepth, colorType: png.colorType }).toEqual({ width: 40, height: 25, bitDepth: 8, colorType: 0 })
    expect({ low, high }).toEqual({ low: 4, high: 994 })
    for (let i = 0; i < frame.data.length; i++) {
      // constructed: the linear stretch of [4, 994] onto [0, 255], clipped, as grey with full alpha.
      const expected = Math.min(255, Math.max(0, Math.round(((frame.data[i] - 4) * 255) / 990)))
      expect([...png.rgba.subarray(4 * i, 4 * i + 4)]).toEqual([expected, expected, expected, 255])
    }
  })

  it('When a frame is wider than the thumbnail size, then the thumbnail keeps its aspect within THUMBNAIL_SIZE', async () => {
    const frame: GrayImage = { width: 640, height: 160, data: Uint16Array.from({ length: 640 * 160 }, (_, i) => i % 640) }
    const png = await readPng((await renderFrame(frame)).thumbnail)
    // constructed: 640 → 160 is a scale of 1/4, so 160 × 40.
    expect({ width: png.width, height: png.height, colorType: png.colorType }).toEqual({ width: THUMBNAIL_SIZE, height: 40, colorType: 0 })
    // A horizontal ramp stays a ramp after area averaging: darkest on the left, brightest on the right.
    expect(png.rgba[0]).toBeLessThan(png.rgba[4 * 80])
    expect(png.rgba[4 * 80]).toBeLessThan(png.rgba[4 * 159])
  })

  it('When the frame is constant, then preview and thumbnail are mid-grey', async () => {
    const frame: GrayImage = { width: 8, height: 8, data: new Uint16Array(64).fill(1234) }
    const { preview, thumbnail } = await renderFrame(frame)
    for (const png of [await readPng(preview), await readPng(thumbnail)]) {
      expect(new Set(png.rgba.filter((_, k) => k % 4 === 0))).toEqual(new Set([128]))
    }
  })
})

/** Opaque grey RGBA of `grey(x, y)`, as jimp holds a bitmap. */
function greyRgba(width: number, height: number, grey: (x: number, y: number) => number): Uint8Array {
  const rgba = new Uint8Array(4 * width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = 4 * (y * width + x)
      rgba[i] = rgba[i + 1] = rgba[i + 2] = grey(x, y)
      rgba[i + 3] = 255
    }
  }
  return rgba
}

describe('patternAboveBackground', () => {
  it('When the bitmap is a quadratic surface (a saturated frame under uneven light), then no pattern is left above it', () => {
    const vignette = (x: number, y: number) => Math.round(200 - 0.05 * (x - 20) ** 2 - 0.04 * (y - 14) ** 2 + 0.5 * x)
    // Rounding to whole grey levels leaves at most ±0.5, a standard deviation of about 0.29 (uniform, 1/√12).
    expect(patternAboveBackground(greyRgba(40, 30, vignette), 40, 30, 1)).toBeLessThan(0.35)
  })

  it('When half the bitmap is one phase and half the other (contrast c), then the pattern is c/2 in raw units: c·√(f(1−f)) at f = ½', () => {
    // 16 stripes of 4 px, 0 and 200 grey levels, on a flat background; 3 raw units per grey level.
    const stripes = greyRgba(64, 32, (x) => (Math.floor(x / 4) % 2 === 0 ? 0 : 200))
    expect(patternAboveBackground(stripes, 64, 32, 3)).toBeCloseTo(3 * 100, -1)
  })

  it('When frames are rendered, then one with domains scores above the same field of view saturated, and lower contrast scores lower', async () => {
    const size = 256
    const light = (x: number, y: number) => 8000 + 20 * x + 12 * y + 0.02 * (x - 128) ** 2
    const saturated: GrayImage = { width: size, height: size, data: Uint16Array.from({ length: size * size }, (_, i) => light(i % size, Math.floor(i / size))) }
    const withDomains = (contrast: number): GrayImage => ({ width: size, height: size, data: saturated.data.map((v, i) => v + (Math.floor((i % size) / 12) % 2 === 0 ? 0 : contrast)) })
    const [flat, strong, weak] = await Promise.all([renderFrame(saturated), renderFrame(withDomains(3000)), renderFrame(withDomains(1000))])
    expect(strong.pattern).toBeGreaterThan(weak.pattern)
    expect(weak.pattern).toBeGreaterThan(10 * flat.pattern)
  })
})
