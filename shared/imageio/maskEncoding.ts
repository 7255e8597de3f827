/**
 * Compact, exact storage of a binary domain map: run-length encoding of the rows in raster order (runs alternate
 * between 0 and 1, starting with 0; each run an unsigned LEB128 varint), behind a small header of our own:
 *
 *   "RMSK" | u8 format version (1) | u32 LE width | u32 LE height | u8 flags (bit 0: an ignore plane follows)
 *   | runs of the domain plane | [runs of the ignore plane]
 *
 * Labyrinths and stripes of a 1024² frame take a few tens of kB (a raw byte map would be 1 MB). Decoding checks every
 * field and the run total, so a corrupt or hostile blob gets a clear error instead of a wrong mask.
 */
import type { BinaryMask } from '../analysis/types'

const MAGIC = [0x52, 0x4d, 0x53, 0x4b] // "RMSK"
const FORMAT_VERSION = 1
const HEADER_BYTES = 14
/** Largest mask accepted when decoding (matches the decoder's default frame limit, 8192²). */
export const MAX_MASK_PIXELS = 8192 * 8192

export class MaskEncodingError extends Error {
  readonly code = 'invalid-mask'
  constructor(message: string) {
    super(message)
    this.name = 'MaskEncodingError'
  }
}

/**
 * Output buffer of encodeMask, kept for masks up to 2048² (larger ones get one of their own). A run of r ≥ 1 pixels
 * takes at most r bytes (a varint carries 7 bits a byte) and a plane has at most one empty run (its first), so a
 * plane of n pixels needs at most n + 1 bytes.
 */
let encodeScratch = new Uint8Array(0)
const MAX_KEPT_SCRATCH = HEADER_BYTES + 2 * (2048 * 2048 + 1)

/** Write `value` as an unsigned LEB128 varint at `offset`; returns the offset after it. */
function writeVarint(out: Uint8Array, offset: number, value: number): number {
  while (value >= 0x80) {
    out[offset++] = (value & 0x7f) | 0x80
    value = Math.floor(value / 128)
  }
  out[offset++] = value
  return offset
}

/** Runs of one plane, written from `offset`; returns the offset after them. */
function encodePlane(plane: Uint8Array, out: Uint8Array, offset: number): number {
  let current = 0
  let start = 0
  for (let i = 0; i < plane.length; i++) {
    // Nonzero counts as 1: the sign bit of −byte.
    const v = -plane[i] >>> 31
    if (v === current) continue
    offset = writeVarint(out, offset, i - start)
    current = v
    start = i
  }
  return writeVarint(out, offset, plane.length - start)
}

/** Encode a mask (values other than 0 count as 1). */
export function encodeMask(mask: BinaryMask): Uint8Array {
  const { width, height, data, ignore } = mask
  if (data.length !== width * height) throw new MaskEncodingError(`mask data has ${data.length} values for ${width} × ${height}`)
  const bound = HEADER_BYTES + (ignore ? 2 : 1) * (data.length + 1)
  if (encodeScratch.length < bound && bound <= MAX_KEPT_SCRATCH) encodeScratch = new Uint8Array(bound)
  const out = encodeScratch.length >= bound ? encodeScratch : new Uint8Array(bound)
  out.set(MAGIC, 0)
  out[4] = FORMAT_VERSION
  const view = new DataView(out.buffer, 0, HEADER_BYTES)
  view.setUint32(5, width, true)
  view.setUint32(9, height, true)
  out[13] = ignore ? 1 : 0
  let offset = encodePlane(data, out, HEADER_BYTES)
  if (ignore) offset = encodePlane(ignore, out, offset)
  return out.slice(0, offset)
}

function decodePlane(bytes: Uint8Array, offset: number, length: number): { plane: Uint8Array; offset: number } {
  const plane = new Uint8Array(length)
  let position = 0
  let value = 0
  let p = offset
  while (position < length) {
    let run = 0
    let scale = 1
    for (;;) {
      if (p >= bytes.length) throw new MaskEncodingError('the mask data ends in the middle of a run')
      const b = bytes[p++]
      run += (b & 0x7f) * scale
      if (b < 0x80) break
      scale *= 128
      if (scale > 2 ** 35) throw new MaskEncodingError('a run length is too long')
    }
    if (position + run > length) throw new MaskEncodingError('the runs add up to more pixels than the mask has')
    if (value === 1) plane.fill(1, position, position + run)
    position += run
    value ^= 1
  }
  return { plane, offset: p }
}

/** Decode a mask; throws MaskEncodingError with the reason when the bytes are not a valid mask. */
export function decodeMask(bytes: Uint8Array): BinaryMask {
  if (bytes.length < HEADER_BYTES || MAGIC.some((m, i) => bytes[i] !== m)) throw new MaskEncodingError('not a Remanence mask (bad header)')
  if (bytes[4] !== FORMAT_VERSION) throw new MaskEncodingError(`unknown mask format version ${bytes[4]}`)
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
  const width = view.getUint32(5, true)
  const height = view.getUint32(9, true)
  const flags = bytes[13]
  if (width === 0 || height === 0 || width * height > MAX_MASK_PIXELS) throw new MaskEncodingError(`mask size ${width} × ${height} is out of range`)
  if (flags > 1) throw new MaskEncodingError('unknown mask flags')
  const data = decodePlane(bytes, HEADER_BYTES, width * height)
  let offset = data.offset
  let ignore: Uint8Array | undefined
  if (flags & 1) {
    const decoded = decodePlane(bytes, offset, width * height)
    ignore = decoded.plane
    offset = decoded.offset
  }
  if (offset !== bytes.length) throw new MaskEncodingError('extra bytes after the mask data')
  return ignore ? { width, height, data: data.plane, ignore } : { width, height, data: data.plane }
}

/** Base64 of an encoded mask, for JSON bodies (works in Node and browsers). */
export function maskToBase64(mask: BinaryMask): string {
  const bytes = encodeMask(mask)
  let binary = ''
  for (let i = 0; i < bytes.length; i += 0x8000) binary += String.fromCharCode(...bytes.subarray(i, i + 0x8000))
  return btoa(binary)
}

export function maskFromBase64(text: string): BinaryMask {
  let binary: string
  try {
    binary = atob(text)
  } catch {
    throw new MaskEncodingError('the mask is not valid base64')
  }
  const bytes = new Uint8Array(binary.length)
  for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i)
  return decodeMask(bytes)
}
