import { decodePng } from 'image-js'
import { describe, expect, it } from 'vitest'
import { encodeGrayPng } from '../../../shared/imageio/encodePng'

describe('encodeGrayPng', () => {
  it('When a greyscale frame is encoded, then the PNG is colour type 0, 8-bit, and pngjs reads the same values', async () => {
    const data = Uint8Array.from({ length: 17 * 9 }, (_, i) => (i * 29) % 256)
    const png = await encodeGrayPng({ width: 17, height: 9, data })
    // IHDR: bytes 24 (bit depth) and 25 (colour type) per the PNG specification §11.2.2 [M].
    expect([png[24], png[25]]).toEqual([8, 0])
    // Independent reader: image-js 1.7.0 decodePng (fast-png, not jimp's pngjs).
    const decoded = decodePng(png).getRawImage()
    expect([decoded.width, decoded.height, decoded.channels, decoded.bitDepth]).toEqual([17, 9, 1, 8])
    expect(Uint8Array.from(decoded.data)).toEqual(data)
  })

  it('When data length does not match the size, then RangeError', async () => {
    await expect(encodeGrayPng({ width: 2, height: 2, data: new Uint8Array(3) })).rejects.toThrow(RangeError)
  })
})
