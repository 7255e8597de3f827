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
