import { decodeStack } from 'image-js'
import UTIF from 'utif2'
import { describe, expect, it } from 'vitest'
import type { GrayImage } from '../../../shared/analysis/types'
import { createRandom } from '../../../shared/analysis/seededRandom'
import { decodeImage, probeImage } from '../../../shared/imageio/decodeImage'
import { encodeTiff, toRational } from '../../../shared/imageio/encodeTiff'

// Fixed seed so the random frames are the same in every run.
const random = createRandom(20240611)

function randomFrame(width: number, height: number, bits: 8 | 16): GrayImage {
  const max = bits === 8 ? 256 : 65536
  const data = bits === 8 ? new Uint8Array(width * height) : new Uint16Array(width * height)
  for (let i = 0; i < data.length; i++) data[i] = random.int(max)
  // Include both extremes so byte order and the top bit are exercised.
  data[0] = 0
  data[data.length - 1] = max - 1
  return { width, height, data }
}

describe('encodeTiff → decodeImage round trip', () => {
  it.each([8, 16] as const)('When %s-bit frames are written as a 3-page TIFF, then decoding gives them back exactly', async (bits) => {
    const frames = [randomFrame(37, 23, bits), randomFrame(37, 23, bits), randomFrame(37, 23, bits)]
    const { header, frames: decoded } = await decodeImage(encodeTiff(frames), `round-${bits}.tif`)
    expect(header).toMatchObject({ format: 'tiff', width: 37, height: 23, frameCount: 3, bitDepth: bits, sampleFormat: 'uint' })
    decoded.forEach((frame, i) => {
      expect(frame.data).toBeInstanceOf(bits === 8 ? Uint8Array : Uint16Array)
      expect(frame.data).toEqual(frames[i].data)
    })
  })

  it('When a 16-bit frame spans several strips, then every strip is placed and read back', async () => {
    // 600 × 300 × 2 bytes = 360 kB, about six 64 kB strips.
    const frame = randomFrame(600, 300, 16)
    const { frames } = await decodeImage(encodeTiff([frame]), 'strips.tif')
    expect(frames[0].data).toEqual(frame.data)
  })

  it('When 32-bit float frames are written, then they decode as Float32Array with the same values', async () => {
    const data = Float32Array.from({ length: 12 }, (_, i) => (i - 5) * 0.125 + 1e-3)
    const { header, frames } = await decodeImage(encodeTiff([{ width: 4, height: 3, data }]), 'float.tif')
    expect(header).toMatchObject({ bitDepth: 32, sampleFormat: 'float' })
    expect(frames[0].data).toEqual(data)
  })

  it.each([80, 333, 0.5, 50_000])('When pixelSizeNm is %s, then the resolution tags give it back within 1e-6', async (nm) => {
    const header = await probeImage(encodeTiff([randomFrame(4, 4, 8)], { pixelSizeNm: nm }), 'pitch.tif')
    expect(header.pixelSizeSource).toBe('tiff-resolution')
    expect(Math.abs(header.pixelSizeNm! / nm - 1)).toBeLessThan(1e-6)
  })
})

describe('encodeTiff read by an outside reader', () => {
  // Independent reader: utif2 4.1.0 (npm), which parses the IFDs and raw strips itself.
  it('When utif2 reads a 2-page 16-bit file with calibration and description, then tags and pixels match', () => {
    const frames = [randomFrame(20, 10, 16), randomFrame(20, 10, 16)]
    const bytes = encodeTiff(frames, { pixelSizeNm: 80, description: 'KB24 test stack' })
    const ifds = UTIF.decode(bytes.slice().buffer)
    expect(ifds).toHaveLength(2)
    // XResolution = 1e7 nm per cm / 80 nm = 125000 px per cm, ResolutionUnit 3 (METHODS §9.1) [D].
    expect(ifds[0].t282).toEqual([[125000, 1]])
    expect(ifds[0].t296).toEqual([3])
    expect(ifds[0].t270).toEqual(['KB24 test stack'])
    ifds.forEach((ifd, i) => {
      expect([ifd.t256, ifd.t257, ifd.t258, ifd.t259, ifd.t262]).toEqual([[20], [10], [16], [1], [1]])
      UTIF.decodeImage(bytes.slice().buffer, ifd)
      const pixels = new Uint16Array(ifd.data.buffer, ifd.data.byteOffset, 200)
      expect(pixels).toEqual(frames[i].data)
    })
  })

  // Independent reader: image-js 1.7.0 decodeStack (its own 'tiff' package).
  it('When image-js reads a 3-page 8-bit file, then it sees three greyscale pages with the same pixels', () => {
    const frames = [randomFrame(9, 7, 8), randomFrame(9, 7, 8), randomFrame(9, 7, 8)]
    const stack = decodeStack(encodeTiff(frames))
    expect(stack.size).toBe(3)
    frames.forEach((frame, i) => {
      const raw = stack.getImage(i).getRawImage()
      expect([raw.width, raw.height, raw.channels, raw.bitDepth]).toEqual([9, 7, 1, 8])
      expect(Uint8Array.from(raw.data)).toEqual(frame.data)
    })
  })

  it('When the IFDs are walked, then every IFD starts on a word boundary and lists its tags in ascending order', () => {
    const bytes = encodeTiff([randomFrame(5, 3, 8), randomFrame(5, 3, 8), randomFrame(5, 3, 8)], { pixelSizeNm: 100, description: 'odd' })
    const view = new DataView(bytes.buffer)
    expect(Array.from(bytes.subarray(0, 4))).toEqual([0x49, 0x49, 42, 0])
    let offset = view.getUint32(4, true)
    let pages = 0
    while (offset !== 0) {
      expect(offset % 2).toBe(0)
      const n = view.getUint16(offset, true)
      const tags = Array.from({ length: n }, (_, i) => view.getUint16(offset + 2 + 12 * i, true))
      expect(tags).toEqual([...tags].sort((a, b) => a - b))
      offset = view.getUint32(offset + 2 + 12 * n, true)
      pages++
    }
    expect(pages).toBe(3)
  })
})

describe('toRational', () => {
  // Expected values [D]: the largest power-of-ten denominator (≤ 10⁶) with numerator < 2³²; 1e7/333 = 30030.03003…
  // → 3003003003 / 100000 (×10 more would pass 2³² = 4294967296).
  it.each([
    [125000, [125000, 1]],
    [1e7 / 333, [3003003003, 100000]],
    [0.5, [5, 10]],
  ])('When the value is %s, then the rational is %j', (value, expected) => {
    expect(toRational(value)).toEqual(expected)
  })

  it('When the value is not positive, then RangeError', () => {
    expect(() => toRational(0)).toThrow(RangeError)
  })
})

describe('encodeTiff input checks', () => {
  it('When no frames are given, then RangeError', () => {
    expect(() => encodeTiff([])).toThrow(RangeError)
  })

  it('When data length does not match width × height, then RangeError naming the frame', () => {
    expect(() => encodeTiff([{ width: 3, height: 3, data: new Uint8Array(8) }])).toThrow(/Frame 0/)
  })
})
