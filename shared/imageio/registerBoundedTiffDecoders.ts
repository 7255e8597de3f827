/**
 * TIFF strip/tile decompressors whose output can never exceed the block's declared size, registered with geotiff in
 * place of its own LZW, Deflate and PackBits decoders.
 *
 * Why: geotiff 3.0.5 inflates a block without an output bound (pako `inflate`, and LZW/PackBits into growing JS
 * arrays), so a small file whose blocks expand a thousandfold would exhaust memory. Each decoder here writes into a
 * buffer of exactly tileWidth × tileHeight × bytes-per-pixel bytes and stops there (extra output is dropped, as libtiff
 * does with a warning).
 * Methods: LZW as specified in TIFF 6.0 section 13 (MSB-first codes of 9–12 bits, Clear 256, EndOfInformation 257,
 * code width raised one code early, the "early change" every TIFF writer uses) [from memory]; PackBits per TIFF 6.0
 * section 9 (header n ≥ 0: copy n+1 bytes; −127…−1: repeat the next byte 1−n times; −128: no operation) [from memory];
 * Deflate (Adobe, compression 8 and 32946) is a zlib stream (RFC 1950/1951), inflated with the platform's
 * DecompressionStream('deflate') in Node 18+ and browsers, read chunk by chunk and cancelled at the bound.
 * Checked against: Pillow 9.4.0 LZW and tifffile 2023.2.3 zlib fixtures, and the writers' pixel formulas (tests).
 */
import { BaseDecoder, addDecoder } from 'geotiff'

type DecoderParameters = BaseDecoder['parameters']

/** Bytes one decoded block may hold: ceil(width × bits per pixel / 8) × height. */
function blockByteLimit(parameters: DecoderParameters): number {
  const bits = parameters.bitsPerSample
  const list = typeof bits === 'number' ? [bits] : Array.from(bits as ArrayLike<number>)
  const bitsPerPixel = parameters.planarConfiguration === 2 ? list[0] : list.reduce((sum, b) => sum + b, 0)
  return Math.ceil((parameters.tileWidth * bitsPerPixel) / 8) * parameters.tileHeight
}

/** An ArrayBuffer holding exactly the bytes of `out` (geotiff views the whole buffer it gets back). */
function exactBuffer(out: Uint8Array): ArrayBuffer {
  const whole = out.byteOffset === 0 && out.byteLength === out.buffer.byteLength
  return (whole ? out.buffer : out.slice().buffer) as ArrayBuffer
}

const LZW_CLEAR = 256
const LZW_END = 257
const LZW_FIRST_FREE = 258
const LZW_TABLE_SIZE = 4096

/**
 * Decode one TIFF LZW block into at most `limit` bytes.
 * A stream that ends without EndOfInformation returns what was decoded (many writers omit it at a strip's end).
 * @throws Error for a code that is neither in the table nor the next free one.
 */
export function lzwDecodeBounded(input: Uint8Array, limit: number): Uint8Array {
  const out = new Uint8Array(limit)
  const prefix = new Uint16Array(LZW_TABLE_SIZE)
  const suffix = new Uint8Array(LZW_TABLE_SIZE)
  const first = new Uint8Array(LZW_TABLE_SIZE)
  const length = new Uint16Array(LZW_TABLE_SIZE)
  for (let i = 0; i < 256; i++) {
    suffix[i] = i
    first[i] = i
    length[i] = 1
  }
  let next = LZW_FIRST_FREE
  let width = 9
  let previous = -1
  let written = 0
  let bitBuffer = 0
  let bitCount = 0
  let inPos = 0

  /** Copy the string of `code` to the output; false once the output is full. */
  const emit = (code: number): boolean => {
    const n = length[code]
    const end = Math.min(written + n, limit)
    // The string is stored back to front through the prefix chain; skip the part that does not fit.
    let c = code
    for (let k = written + n - 1; k >= written; k--) {
      if (k < end) out[k] = suffix[c]
      c = prefix[c]
    }
    written = end
    return written < limit
  }

  for (;;) {
    while (bitCount < width) {
      if (inPos >= input.length) return out.subarray(0, written)
      bitBuffer = ((bitBuffer << 8) | input[inPos++]) & 0xffffff
      bitCount += 8
    }
    bitCount -= width
    const code = (bitBuffer >>> bitCount) & ((1 << width) - 1)
    if (code === LZW_END) break
    if (code === LZW_CLEAR) {
      next = LZW_FIRST_FREE
      width = 9
      previous = -1
      continue
    }
    if (previous === -1) {
      if (code > 255) throw new Error(`LZW code ${code} follows a Clear code; expected a literal byte.`)
      if (!emit(code)) break
      previous = code
      continue
    }
    if (code > next || (code === next && next >= LZW_TABLE_SIZE)) {
      throw new Error(`LZW code ${code} is not in the table (next free code ${next}).`)
    }
    const addable = next < LZW_TABLE_SIZE
    if (code === next) {
      // The KwKwK case: the new string is the previous one plus its own first byte.
      prefix[next] = previous
      suffix[next] = first[previous]
      first[next] = first[previous]
      length[next] = length[previous] + 1
      next++
      if (!emit(code)) break
    } else {
      if (!emit(code)) break
      if (addable) {
        prefix[next] = previous
        suffix[next] = first[code]
        first[next] = first[previous]
        length[next] = length[previous] + 1
        next++
      }
    }
    if (next + 1 >= 1 << width && width < 12) width++
    previous = code
  }
  return out.subarray(0, written)
}

/** Decode one PackBits block into at most `limit` bytes. */
export function packBitsDecodeBounded(input: Uint8Array, limit: number): Uint8Array {
  const out = new Uint8Array(limit)
  let written = 0
  let i = 0
  while (i < input.length && written < limit) {
    const header = input[i] > 127 ? input[i] - 256 : input[i]
    i++
    if (header >= 0) {
      const n = Math.min(header + 1, input.length - i, limit - written)
      out.set(input.subarray(i, i + n), written)
      written += n
      i += header + 1
    } else if (header !== -128) {
      if (i >= input.length) break
      const n = Math.min(1 - header, limit - written)
      out.fill(input[i], written, written + n)
      written += n
      i++
    }
  }
  return out.subarray(0, written)
}

/**
 * Inflate a zlib stream into at most `limit` bytes.
 * @throws Error when the stream is damaged before `limit` bytes came out.
 */
export async function inflateBounded(input: Uint8Array, limit: number): Promise<Uint8Array> {
  const out = new Uint8Array(limit)
  let written = 0
  const reader = new Blob([input as Uint8Array<ArrayBuffer>]).stream().pipeThrough(new DecompressionStream('deflate')).getReader()
  try {
    for (;;) {
      const { done, value } = await reader.read()
      if (done) break
      const n = Math.min(value.byteLength, limit - written)
      out.set(value.subarray(0, n), written)
      written += n
      if (written >= limit) {
        await reader.cancel().catch(() => undefined)
        break
      }
    }
  } catch (err) {
    // Junk after a complete block is harmless; a stream that breaks off before the block is full is damage.
    if (written < limit) throw new Error(`the Deflate data is damaged (${(err as Error).message}).`)
  }
  return out.subarray(0, written)
}

class BoundedLzwDecoder extends BaseDecoder {
  override decodeBlock(buffer: ArrayBufferLike): ArrayBufferLike {
    const out = lzwDecodeBounded(new Uint8Array(buffer), blockByteLimit(this.parameters))
    return exactBuffer(out)
  }
}

class BoundedPackBitsDecoder extends BaseDecoder {
  override decodeBlock(buffer: ArrayBufferLike): ArrayBufferLike {
    const out = packBitsDecodeBounded(new Uint8Array(buffer), blockByteLimit(this.parameters))
    return exactBuffer(out)
  }
}

class BoundedDeflateDecoder extends BaseDecoder {
  override async decodeBlock(buffer: ArrayBufferLike): Promise<ArrayBufferLike> {
    const out = await inflateBounded(new Uint8Array(buffer), blockByteLimit(this.parameters))
    return exactBuffer(out)
  }
}

let registered = false

/**
 * Replace geotiff's LZW (5), Deflate (8, 32946) and PackBits (32773) decoders with the bounded ones. Idempotent;
 * geotiff keeps one registry per module instance, so this affects every geotiff use in the process or page.
 */
export function registerBoundedTiffDecoders(): void {
  if (registered) return
  registered = true
  addDecoder(5, async () => BoundedLzwDecoder, undefined, false)
  addDecoder([8, 32946], async () => BoundedDeflateDecoder, undefined, false)
  addDecoder(32773, async () => BoundedPackBitsDecoder, undefined, false)
}
