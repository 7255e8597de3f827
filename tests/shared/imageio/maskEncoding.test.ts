import { describe, expect, it } from 'vitest'
import { decodeMask, encodeMask, maskFromBase64, maskToBase64, MaskEncodingError } from '../../../shared/imageio/maskEncoding'
import { createRandom } from '../../../shared/analysis/seededRandom'
import type { BinaryMask } from '../../../shared/analysis/types'

function randomMask(width: number, height: number, seed: number, withIgnore = false): BinaryMask {
  const random = createRandom(seed) // fixed seed: the same masks on every run
  const data = new Uint8Array(width * height)
  // blocks of random length so that runs of every size (1 … > 16384, multi-byte varints) occur
  let i = 0
  let v = 0
  while (i < data.length) {
    const run = 1 + Math.floor(random() ** 4 * 20_000)
    data.fill(v, i, Math.min(data.length, i + run))
    i += run
    v ^= 1
  }
  const mask: BinaryMask = { width, height, data }
  if (withIgnore) mask.ignore = Uint8Array.from(data, (_, k) => (k % 97 < 3 ? 1 : 0))
  return mask
}

describe('maskEncoding', () => {
  it.each([
    [1, 1, 1],
    [7, 3, 2],
    [256, 256, 3],
    [1024, 768, 4],
  ])('When a %i × %i mask is encoded and decoded, then it comes back exactly (seed %i)', (w, h, seed) => {
    const mask = randomMask(w, h, seed)
    const back = decodeMask(encodeMask(mask))
    expect(back.width).toBe(w)
    expect(back.height).toBe(h)
    expect(Buffer.from(back.data).equals(Buffer.from(mask.data))).toBe(true)
    expect(back.ignore).toBeUndefined()
  })

  it('When the mask has an ignore plane, then both planes round-trip exactly, also through base64', () => {
    const mask = randomMask(300, 200, 9, true)
    const back = maskFromBase64(maskToBase64(mask))
    expect(Buffer.from(back.data).equals(Buffer.from(mask.data))).toBe(true)
    expect(Buffer.from(back.ignore!).equals(Buffer.from(mask.ignore!))).toBe(true)
  })

  it('When a small mask is encoded, then the bytes are exactly those the format defines (stored masks stay readable)', () => {
    // 3 × 2 mask 1 1 0 / 0 0 1 with an ignore plane 0 … 0 1: runs 0,2,3,1 and 5,1, written out by hand from the
    // header comment of maskEncoding.ts ("RMSK", version 1, width and height u32 LE, flags 1).
    const mask: BinaryMask = { width: 3, height: 2, data: Uint8Array.from([1, 1, 0, 0, 0, 1]), ignore: Uint8Array.from([0, 0, 0, 0, 0, 1]) }
    expect(Array.from(encodeMask(mask))).toEqual([0x52, 0x4d, 0x53, 0x4b, 1, 3, 0, 0, 0, 2, 0, 0, 0, 1, 0, 2, 3, 1, 5, 1])
    // A run of 300 needs a two-byte varint: 300 = 0b10_0101100 → 0xac 0x02.
    const long = encodeMask({ width: 300, height: 1, data: new Uint8Array(300) })
    expect(Array.from(long.subarray(14))).toEqual([0xac, 0x02])
  })

  it('When every pixel starts a run (checkerboard, starting with 1), then it encodes in its worst-case size and round-trips', () => {
    const width = 513
    const data = Uint8Array.from({ length: width * width }, (_, i) => ((i % width) + Math.floor(i / width) + 1) & 1)
    const bytes = encodeMask({ width, height: width, data, ignore: data })
    // Header + per plane one empty first run and one byte per pixel.
    expect(bytes.length).toBe(14 + 2 * (width * width + 1))
    const back = decodeMask(bytes)
    expect(Buffer.from(back.data).equals(Buffer.from(data))).toBe(true)
    expect(Buffer.from(back.ignore!).equals(Buffer.from(data))).toBe(true)
  })

  it('When the mask is all one phase, then it takes a handful of bytes', () => {
    const bytes = encodeMask({ width: 1024, height: 1024, data: new Uint8Array(1024 * 1024).fill(1) })
    expect(bytes.length).toBeLessThan(24)
    expect(decodeMask(bytes).data.every((v) => v === 1)).toBe(true)
  })

  it.each([
    ['an empty buffer', new Uint8Array(0)],
    ['a PNG header', Uint8Array.from([137, 80, 78, 71, 13, 10, 26, 10, 0, 0, 0, 13, 73, 72])],
    ['truncated runs', encodeMask({ width: 64, height: 64, data: Uint8Array.from({ length: 4096 }, (_, i) => (i >> 1) & 1) }).subarray(0, 40)],
    ['extra bytes', Uint8Array.from([...encodeMask(randomMask(8, 8, 6)), 1])],
    ['a huge declared size', Uint8Array.from([0x52, 0x4d, 0x53, 0x4b, 1, 0xff, 0xff, 0, 0, 0xff, 0xff, 0, 0, 0, 1])],
  ])('When the bytes are %s, then MaskEncodingError with code invalid-mask', (_name, bytes) => {
    expect(() => decodeMask(bytes)).toThrow(MaskEncodingError)
  })

  it('When the base64 text is not base64, then a clear error', () => {
    expect(() => maskFromBase64('***not base64***')).toThrow(/base64/)
  })
})
