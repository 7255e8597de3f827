/**
 * Reads a JPEG's frame header (SOFn) by walking the marker segments, without decoding any scan data.
 *
 * Source: ITU-T T.81 / ISO/IEC 10918-1 (1992), annex B: markers 0xFFxx, fill bytes 0xFF, stand-alone markers
 * (SOI D8, EOI D9, RST0–7 D0–D7, TEM 01) without a length, other segments with a 2-byte big-endian length that includes
 * itself; frame header SOFn (C0–C3, C5–C7, C9–CB, CD–CF): precision P, lines Y, samples per line X, components Nf
 * [from memory]. Y = 0 defers the height to a DNL marker after the first scan (not supported here).
 * EXIF orientation: APP1 "Exif\0\0" + a TIFF structure whose IFD0 may hold tag 274 (Orientation, SHORT, 1–8; 5–8
 * swap width and height) [from memory, EXIF 2.3 / TIFF 6.0]; read because jimp applies it when decoding.
 * Why: the size must be checked against the limits before the decoder allocates it, and a file cut off before its
 * end-of-image marker should be reported rather than decoded into a partly grey picture.
 * Plausibility: in Huffman-coded frames every 8 × 8 block of every component starts with a DC difference whose code
 * is at least one bit long (T.81 F.1.2.1, and G.1.2.1 for the first DC scan of progressive files) [from memory], so
 * scan data shorter than one bit per block cannot hold the declared frame: the header lies or the data was cut.
 * Component sampling factors must be 1–4 (T.81 B.2.2) [from memory].
 */
import { ImageDecodeError } from './imageDecodeError'

export interface JpegHeader {
  width: number
  height: number
  /** Sample precision in bits (8 for baseline; 12 or 16 in extended or lossless files). */
  precision: number
  components: number
  /** Horizontal and vertical sampling factor of each component, in frame-header order. */
  sampling: { h: number; v: number }[]
  /** Arithmetic-coded frame (SOF9–11, SOF13–15), for which the one-bit-per-block bound does not hold. */
  arithmetic: boolean
  /** Bytes from the first start-of-scan marker to the end-of-image marker. */
  scanBytes: number
  /** EXIF Orientation (1 when absent or unreadable). */
  orientation: number
}

/** 8 × 8 blocks over all components (T.81 A.2: component i has ⌈X·Hi/Hmax⌉ × ⌈Y·Vi/Vmax⌉ samples) [from memory]. */
export function blockCount(header: Pick<JpegHeader, 'width' | 'height' | 'sampling'>): number {
  const hMax = Math.max(1, ...header.sampling.map((c) => c.h))
  const vMax = Math.max(1, ...header.sampling.map((c) => c.v))
  let blocks = 0
  for (const { h, v } of header.sampling) {
    blocks += Math.ceil(Math.ceil((header.width * h) / hMax) / 8) * Math.ceil(Math.ceil((header.height * v) / vMax) / 8)
  }
  return blocks
}

/** Fewest bytes of scan data that can hold the frame: one bit per block for Huffman coding, no bound for arithmetic. */
export function minimumScanBytes(header: Pick<JpegHeader, 'width' | 'height' | 'sampling' | 'arithmetic'>): number {
  return header.arithmetic ? 0 : Math.floor(blockCount(header) / 8)
}

/** EXIF Orientation from an APP1 segment body (`start`..`end`), or 1. Every read is bounds-checked. */
function exifOrientation(bytes: Uint8Array, start: number, end: number): number {
  const exif = [0x45, 0x78, 0x69, 0x66, 0, 0]
  if (end - start < 14 || exif.some((b, i) => bytes[start + i] !== b)) return 1
  const tiff = start + 6
  const le = bytes[tiff] === 0x49
  const u16 = (at: number) => (le ? bytes[at] | (bytes[at + 1] << 8) : (bytes[at] << 8) | bytes[at + 1])
  const u32 = (at: number) => (le ? u16(at) + u16(at + 2) * 65536 : u16(at) * 65536 + u16(at + 2))
  const ifd = tiff + u32(tiff + 4)
  if (ifd + 2 > end) return 1
  const count = u16(ifd)
  for (let i = 0; i < count; i++) {
    const entry = ifd + 2 + 12 * i
    if (entry + 12 > end) return 1
    if (u16(entry) === 274) {
      const value = u16(entry + 8)
      return value >= 1 && value <= 8 ? value : 1
    }
  }
  return 1
}

const isFrameMarker = (m: number): boolean => m >= 0xc0 && m <= 0xcf && m !== 0xc4 && m !== 0xc8 && m !== 0xcc

/**
 * Find the frame header and check that the file carries scan data and an end-of-image marker after it.
 * @throws ImageDecodeError corrupt-image (damaged or truncated) or unsupported-type (precision ≠ 8, DNL height).
 */
export function readJpegHeader(bytes: Uint8Array, fileName: string): JpegHeader {
  const corrupt = (detail: string) => new ImageDecodeError('corrupt-image', fileName, `the JPEG is damaged: ${detail}`)
  const u16 = (at: number) => (bytes[at] << 8) | bytes[at + 1]
  let at = 2
  let header: Omit<JpegHeader, 'orientation' | 'scanBytes'> | null = null
  let orientation = 1
  for (;;) {
    if (at + 2 > bytes.length) throw corrupt('the file ends before the image data (truncated?).')
    if (bytes[at] !== 0xff) throw corrupt(`expected a marker at byte ${at}.`)
    let marker = bytes[at + 1]
    // Any number of 0xFF fill bytes may precede a marker.
    while (marker === 0xff && at + 2 < bytes.length) {
      at++
      marker = bytes[at + 1]
    }
    at += 2
    if ((marker >= 0xd0 && marker <= 0xd7) || marker === 0x01) continue
    if (marker === 0xd9) throw corrupt('the end-of-image marker comes before any image data.')
    if (at + 2 > bytes.length) throw corrupt('the file ends inside a marker segment (truncated?).')
    const length = u16(at)
    if (length < 2 || at + length > bytes.length) throw corrupt(`the segment at byte ${at - 2} runs past the end of the file (truncated?).`)
    if (isFrameMarker(marker)) {
      if (length < 8) throw corrupt('the frame header is too short.')
      const components = bytes[at + 7]
      if (components === 0) throw corrupt('the frame header lists no colour components.')
      if (length < 8 + 3 * components) throw corrupt(`the frame header is too short for its ${components} components.`)
      const sampling: { h: number; v: number }[] = []
      for (let c = 0; c < components; c++) {
        const factors = bytes[at + 9 + 3 * c]
        const h = factors >> 4
        const v = factors & 15
        if (h < 1 || h > 4 || v < 1 || v > 4) throw corrupt(`component ${c + 1} has sampling factors ${h} × ${v}; they must be 1 to 4.`)
        sampling.push({ h, v })
      }
      const arithmetic = marker >= 0xc9
      header = { precision: bytes[at + 2], height: u16(at + 3), width: u16(at + 5), components, sampling, arithmetic }
    }
    if (marker === 0xe1 && orientation === 1) orientation = exifOrientation(bytes, at + 2, at + length)
    if (marker === 0xda) {
      if (header === null) throw corrupt('image data starts before the frame header.')
      break
    }
    at += length
  }
  if (header.width < 1) throw corrupt('the frame header declares a width of 0.')
  if (header.height === 0) {
    throw new ImageDecodeError('unsupported-type', fileName, 'the JPEG defines its height after the first scan (DNL marker); re-save it.')
  }
  if (header.precision !== 8) {
    throw new ImageDecodeError(
      'unsupported-type',
      fileName,
      `${header.precision}-bit JPEG is not supported; save the image as a 16-bit TIFF instead.`,
    )
  }
  let end = bytes.length - 2
  while (end > at && !(bytes[end] === 0xff && bytes[end + 1] === 0xd9)) end--
  if (end <= at) throw corrupt('the end-of-image marker is missing (truncated?).')
  return { ...header, scanBytes: end - at, orientation }
}
