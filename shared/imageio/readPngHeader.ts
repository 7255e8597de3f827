/**
 * Reads a PNG's IHDR and checks its chunk sequence, without inflating any image data.
 *
 * Source: PNG Specification, 2nd edition (W3C Recommendation / ISO/IEC 15948:2003), §5.2 signature, §5.3 chunk layout
 * (4-byte big-endian length, type, data, CRC-32 over type and data), §11.2.2 IHDR (width, height ≤ 2³¹−1; allowed
 * bit depths per colour type) [from memory]. CRC-32 is the ISO 3309 / ITU-T V.42 polynomial 0xEDB88320 (reflected)
 * [from memory]; tests compare with node:zlib crc32.
 * Why: the declared size must be checked against the limits before a decoder allocates width × height × 4 bytes
 * (a few hundred bytes can declare 50 000 × 50 000 pixels), and a truncated file should be named as such.
 * Plausibility: Deflate expands at most 1032:1 (its longest match, 258 bytes, costs at least 2 bits) [from memory,
 * zlib technical details], so IDAT data shorter than the declared pixels / 1032 cannot hold the image: the header lies
 * or the data was cut (pngjs would otherwise pad the missing rows and allocate the full declared size).
 */
import { ImageDecodeError } from './imageDecodeError'

export interface PngHeader {
  width: number
  height: number
  /** Bits per sample: 1, 2, 4, 8 or 16. */
  bitDepth: number
  /** 0 grey, 2 RGB, 3 palette, 4 grey + alpha, 6 RGB + alpha. */
  colorType: number
  /** Bytes of compressed image data (all IDAT chunks together). */
  imageDataBytes: number
}

/** Most bytes Deflate can produce from one compressed byte. */
export const MAX_DEFLATE_EXPANSION = 1032

const SAMPLES_PER_PIXEL: Record<number, number> = { 0: 1, 2: 3, 3: 1, 4: 2, 6: 4 }

/**
 * Fewest compressed bytes that can hold the declared image: its sample bits (without the per-row filter bytes, so the
 * bound holds for interlaced files too) divided by MAX_DEFLATE_EXPANSION.
 */
export function minimumImageDataBytes(header: Pick<PngHeader, 'width' | 'height' | 'bitDepth' | 'colorType'>): number {
  const bits = header.width * header.height * (SAMPLES_PER_PIXEL[header.colorType] ?? 1) * header.bitDepth
  return Math.floor(bits / 8 / MAX_DEFLATE_EXPANSION)
}

const SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]

const ALLOWED_BIT_DEPTHS: Record<number, number[]> = {
  0: [1, 2, 4, 8, 16],
  2: [8, 16],
  3: [1, 2, 4, 8],
  4: [8, 16],
  6: [8, 16],
}

let crcTable: Uint32Array | null = null

/** CRC-32 (ISO 3309) of `bytes`, as PNG stores it. */
export function crc32(bytes: Uint8Array): number {
  if (crcTable === null) {
    crcTable = new Uint32Array(256)
    for (let n = 0; n < 256; n++) {
      let c = n
      for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1
      crcTable[n] = c >>> 0
    }
  }
  let crc = 0xffffffff
  for (let i = 0; i < bytes.length; i++) crc = crcTable[(crc ^ bytes[i]) & 0xff] ^ (crc >>> 8)
  return (crc ^ 0xffffffff) >>> 0
}

function chunkType(bytes: Uint8Array, at: number): string {
  return String.fromCharCode(bytes[at], bytes[at + 1], bytes[at + 2], bytes[at + 3])
}

/**
 * Read IHDR and walk the chunk headers up to IEND (constant work per chunk; no CRC of image data).
 * @throws ImageDecodeError corrupt-image for a bad signature, a damaged IHDR, missing IDAT or a file that ends early.
 */
export function readPngHeader(bytes: Uint8Array, fileName: string): PngHeader {
  const corrupt = (detail: string) => new ImageDecodeError('corrupt-image', fileName, `the PNG is damaged: ${detail}`)
  if (bytes.length < 8 || SIGNATURE.some((b, i) => bytes[i] !== b)) throw corrupt('the 8-byte PNG signature is wrong.')
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
  if (bytes.length < 33) throw corrupt('the file ends inside the IHDR header chunk (truncated?).')
  if (view.getUint32(8) !== 13 || chunkType(bytes, 12) !== 'IHDR') throw corrupt('the first chunk is not a 13-byte IHDR.')
  if (crc32(bytes.subarray(12, 29)) !== view.getUint32(29)) throw corrupt('the IHDR checksum does not match its contents.')
  const header: PngHeader = {
    width: view.getUint32(16),
    height: view.getUint32(20),
    bitDepth: bytes[24],
    colorType: bytes[25],
    imageDataBytes: 0,
  }
  if (header.width < 1 || header.height < 1 || header.width > 0x7fffffff || header.height > 0x7fffffff) {
    throw corrupt(`IHDR declares a size of ${header.width} × ${header.height} pixels.`)
  }
  if (!ALLOWED_BIT_DEPTHS[header.colorType]?.includes(header.bitDepth)) {
    throw corrupt(`IHDR declares colour type ${header.colorType} with ${header.bitDepth}-bit samples, which PNG does not allow.`)
  }
  let at = 33
  let sawImageData = false
  for (;;) {
    if (at + 8 > bytes.length) throw corrupt('the file ends before the IEND chunk (truncated?).')
    const length = view.getUint32(at)
    const type = chunkType(bytes, at + 4)
    if (length > 0x7fffffff || at + 12 + length > bytes.length) {
      throw corrupt(`the file ends inside the ${type} chunk at byte ${at} (truncated?).`)
    }
    if (type === 'IDAT') {
      sawImageData = true
      header.imageDataBytes += length
    }
    if (type === 'IEND') break
    at += 12 + length
  }
  if (!sawImageData) throw corrupt('there is no IDAT image-data chunk.')
  return header
}
