/**
 * Binary domain maps packed 32 pixels to a 32-bit word, row by row, for the word-parallel steps of the engine
 * (run-based labelling, 3×3 morphology, the minimum-area filter): bit b of word j of row y is pixel (32·j + b, y), and
 * the bits past the width are 0. Packing reads the bytes four at a time through 32-bit words where the layout allows
 * (little-endian, width a multiple of 4), with the classic "has a zero byte" bit trick (S. E. Anderson, "Bit
 * Twiddling Hacks", Stanford, section "Determine if a word has a zero byte" [from memory]); otherwise pixel by pixel,
 * with the same result.
 */
/** Number of 32-bit words holding one packed row of `width` pixels. */
export function wordsPerRow(width: number): number {
  return (width + 31) >>> 5
}

/** The bits of the last word of a packed row that hold pixels (the others are padding, kept 0). */
export function rowTailMask(width: number): number {
  const used = width - ((wordsPerRow(width) - 1) << 5)
  return used >= 32 ? -1 : (1 << used) - 1
}

/**
 * Number of set bits of a 32-bit word (SWAR population count; Anderson, "Bit Twiddling Hacks", section "Counting
 * bits set, in parallel" [from memory]).
 */
export function bitCount(v: number): number {
  v -= (v >>> 1) & 0x55555555
  v = (v & 0x33333333) + ((v >>> 2) & 0x33333333)
  return Math.imul((v + (v >>> 4)) & 0x0f0f0f0f, 0x01010101) >>> 24
}

/** Word order check: the four-pixels-per-word packing below reads bytes through 32-bit words (little-endian). */
const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1

/** NIBBLE_BYTES[b] = the four bytes 0/1 of the low four bits of b, as one little-endian word. */
const NIBBLE_BYTES = Int32Array.from({ length: 16 }, (_, b) => (b & 1) | ((b >> 1) & 1) << 8 | ((b >> 2) & 1) << 16 | ((b >> 3) & 1) << 24)

/**
 * Pack the pixels of `data` equal to `value` into rows of 32-bit words: bit b of word j of row y is pixel
 * (32·j + b, y); bits past the width are 0. `out` needs wordsPerRow(width)·height entries. Pixels past the end of a
 * short `data` compare as `undefined`, as indexing them would.
 */
export function packEqual(data: Uint8Array, width: number, height: number, value: number, out: Int32Array): void {
  const stride = wordsPerRow(width)
  const n = width * height
  if (width % 4 === 0 && data.byteOffset % 4 === 0 && data.length >= n && LITTLE_ENDIAN && Number.isInteger(value) && value >= 0 && value <= 255) {
    packEqualByQuads(new Int32Array(data.buffer, data.byteOffset, n >>> 2), width, height, value, out)
    return
  }
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let j = 0; j < stride; j++) {
      const x0 = j << 5
      const count = Math.min(32, width - x0)
      let word = 0
      for (let b = 0; b < count; b++) if (data[row + x0 + b] === value) word |= 1 << b
      out[y * stride + j] = word
    }
  }
}

/** Pack the non-zero pixels of `data` as packEqual does (padding bits 0). */
export function packNonZero(data: Uint8Array, width: number, height: number, out: Int32Array): void {
  packEqual(data, width, height, 0, out)
  const stride = wordsPerRow(width)
  const tailMask = rowTailMask(width)
  for (let y = 0; y < height && stride > 0; y++) {
    const last = (y + 1) * stride - 1
    for (let i = y * stride; i < last; i++) out[i] = ~out[i]
    out[last] = ~out[last] & tailMask
  }
}

/**
 * packEqual four bytes at a time: the bytes equal to `value` are the zero bytes of word XOR value·0x01010101, found
 * with the carry-free test ~(((v & 0x7f7f7f7f) + 0x7f7f7f7f) | v) & 0x80808080, and their four flags are gathered
 * into a nibble by one multiplication (0x01020408 moves byte k's flag to bit 24 + k without overlapping sums).
 */
function packEqualByQuads(quads: Int32Array, width: number, height: number, value: number, out: Int32Array): void {
  const stride = wordsPerRow(width)
  const quadsPerRow = width >>> 2
  const pattern = Math.imul(value, 0x01010101)
  for (let y = 0; y < height; y++) {
    let q = y * quadsPerRow
    const rowEnd = q + quadsPerRow
    for (let j = 0; j < stride; j++) {
      const end = Math.min(q + 8, rowEnd)
      let word = 0
      for (let shift = 0; q < end; q++, shift += 4) {
        const v = quads[q] ^ pattern
        const zeroBytes = ~(((v & 0x7f7f7f7f) + 0x7f7f7f7f) | v) & 0x80808080
        word |= (Math.imul(zeroBytes >>> 7, 0x01020408) >>> 24) << shift
      }
      out[y * stride + j] = word
    }
  }
}

/** Unpack rows packed as by packEqual into one byte per pixel (0/1) in `out` (width·height bytes). */
export function unpackBits(words: Int32Array, width: number, height: number, out: Uint8Array): void {
  const stride = wordsPerRow(width)
  if (width % 4 === 0 && out.byteOffset % 4 === 0 && LITTLE_ENDIAN) {
    const quads = new Int32Array(out.buffer, out.byteOffset, (width * height) >>> 2)
    const quadsPerRow = width >>> 2
    for (let y = 0; y < height; y++) {
      let q = y * quadsPerRow
      const rowEnd = q + quadsPerRow
      for (let j = 0; j < stride; j++) {
        const word = words[y * stride + j]
        const end = Math.min(q + 8, rowEnd)
        for (let shift = 0; q < end; q++, shift += 4) quads[q] = NIBBLE_BYTES[(word >>> shift) & 15]
      }
    }
    return
  }
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let j = 0; j < stride; j++) {
      const word = words[y * stride + j]
      const x0 = j << 5
      const count = Math.min(32, width - x0)
      for (let b = 0; b < count; b++) out[row + x0 + b] = (word >>> b) & 1
    }
  }
}

/** Pack the pixels above `threshold` (up = I > threshold) into rows of words as packNonZero does. */
export function packAbove(data: Float32Array, width: number, height: number, threshold: number, out: Int32Array): void {
  const stride = wordsPerRow(width)
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let j = 0; j < stride; j++) {
      const x0 = j << 5
      const count = Math.min(32, width - x0)
      let word = 0
      for (let b = 0; b < count; b++) word |= (data[row + x0 + b] > threshold ? 1 : 0) << b
      out[y * stride + j] = word
    }
  }
}
