/**
 * A small baseline TIFF writer: uncompressed, little-endian, greyscale, one page per frame, in strips.
 *
 * Source: TIFF Revision 6.0 (Adobe, 1992): header "II", 42, offset of the first IFD; IFD entries sorted by tag;
 * values longer than 4 bytes stored outside the IFD, at word (even) offsets; baseline greyscale tags ImageWidth (256),
 * ImageLength (257), BitsPerSample (258), Compression (259) = 1, PhotometricInterpretation (262) = 1 (BlackIsZero),
 * StripOffsets (273), SamplesPerPixel (277), RowsPerStrip (278), StripByteCounts (279), XResolution (282),
 * YResolution (283), ResolutionUnit (296: 1 none, 2 inch, 3 centimetre), SampleFormat (339: 1 uint, 3 float), and
 * ImageDescription (270, ASCII, NUL-terminated) [from memory; resolution semantics R per METHODS §9.1].
 * Checked against: decodeImage (geotiff 3.0.5) and tifffile 2023.2.3 read the files back exactly (tests).
 * Input: 8-bit (Uint8Array), 16-bit (Uint16Array) or 32-bit float (Float32Array) frames. Strips of about 64 KiB, the
 * size the TIFF 6.0 text recommends ("about 8K" then, larger is common now) [P].
 * Used by tests, the demo-sample generator and fixtures; not for users' data.
 */
import type { GrayImage } from '../analysis/types'

export interface EncodeTiffOptions {
  /** Square pixel pitch in nm, written as XResolution = YResolution in pixels per centimetre (ResolutionUnit 3). */
  pixelSizeNm?: number
  /** Raw resolution tags instead of `pixelSizeNm` (e.g. a 72-dpi placeholder), for tests of the calibration rules. */
  resolution?: { x: readonly [number, number]; y?: readonly [number, number]; unit: 1 | 2 | 3 }
  /** ImageDescription of the first page (UTF-8 bytes; keep it ASCII for readers that expect 7-bit text). */
  description?: string
}

const STRIP_TARGET_BYTES = 64 * 1024

const TYPE = { ascii: 2, short: 3, long: 4, rational: 5 } as const
const TYPE_SIZE: Record<number, number> = { 2: 1, 3: 2, 4: 4, 5: 8 }

interface TagEntry {
  tag: number
  type: number
  values: number[] | Uint8Array
}

/** The largest power-of-ten denominator that keeps value × denominator within 32 bits (at most 10⁶). */
export function toRational(value: number): [number, number] {
  if (!(value > 0) || !Number.isFinite(value)) throw new RangeError(`A TIFF resolution must be positive and finite; got ${value}.`)
  let denominator = 1
  while (denominator < 1e6 && !Number.isInteger(value * denominator) && value * denominator * 10 < 0xffffffff) denominator *= 10
  const numerator = Math.round(value * denominator)
  if (numerator > 0xffffffff) throw new RangeError(`The resolution ${value} does not fit a TIFF RATIONAL.`)
  return [numerator, denominator]
}

function bitsOf(frame: GrayImage): 8 | 16 | 32 {
  if (frame.data instanceof Uint8Array) return 8
  if (frame.data instanceof Uint16Array) return 16
  return 32
}

/**
 * Encode frames as a multi-page baseline TIFF.
 * @throws RangeError for an empty frame list, a frame whose data length is not width × height, or a file over 4 GB.
 * @example const bytes = encodeTiff([{ width: 2, height: 1, data: new Uint16Array([0, 65535]) }], { pixelSizeNm: 80 })
 */
export function encodeTiff(frames: GrayImage[], options: EncodeTiffOptions = {}): Uint8Array {
  if (frames.length === 0) throw new RangeError('encodeTiff needs at least one frame.')
  for (const [i, f] of frames.entries()) {
    if (!(f.width >= 1 && f.height >= 1) || f.data.length !== f.width * f.height) {
      throw new RangeError(`Frame ${i} has ${f.data.length} values for ${f.width} × ${f.height} pixels.`)
    }
  }
  const resolution =
    options.resolution ??
    (options.pixelSizeNm !== undefined ? { x: toRational(1e7 / options.pixelSizeNm), unit: 3 as const } : undefined)
  const description = options.description !== undefined ? new TextEncoder().encode(`${options.description}\0`) : null

  // First pass: lay out every page (pixel strips, then its IFD and out-of-line values) to know the offsets.
  const pages = frames.map((frame, index) => {
    const bits = bitsOf(frame)
    const rowBytes = frame.width * (bits / 8)
    const rowsPerStrip = Math.max(1, Math.min(frame.height, Math.floor(STRIP_TARGET_BYTES / rowBytes)))
    const stripCount = Math.ceil(frame.height / rowsPerStrip)
    const stripBytes = Array.from({ length: stripCount }, (_, s) => Math.min(rowsPerStrip, frame.height - s * rowsPerStrip) * rowBytes)
    const entries: TagEntry[] = [
      { tag: 256, type: TYPE.long, values: [frame.width] },
      { tag: 257, type: TYPE.long, values: [frame.height] },
      { tag: 258, type: TYPE.short, values: [bits] },
      { tag: 259, type: TYPE.short, values: [1] },
      { tag: 262, type: TYPE.short, values: [1] },
      ...(index === 0 && description !== null ? [{ tag: 270, type: TYPE.ascii, values: description }] : []),
      { tag: 273, type: TYPE.long, values: new Array<number>(stripCount).fill(0) },
      { tag: 277, type: TYPE.short, values: [1] },
      { tag: 278, type: TYPE.long, values: [rowsPerStrip] },
      { tag: 279, type: TYPE.long, values: stripBytes },
      ...(resolution !== undefined
        ? [
            { tag: 282, type: TYPE.rational, values: [...resolution.x] },
            { tag: 283, type: TYPE.rational, values: [...(resolution.y ?? resolution.x)] },
            { tag: 296, type: TYPE.short, values: [resolution.unit] },
          ]
        : []),
      { tag: 339, type: TYPE.short, values: [bits === 32 ? 3 : 1] },
    ]
    return { frame, stripBytes, entries }
  })

  let offset = 8
  const layout = pages.map((page) => {
    const pixelOffset = offset
    offset += page.stripBytes.reduce((a, b) => a + b, 0)
    offset += offset % 2
    const ifdOffset = offset
    offset += 2 + page.entries.length * 12 + 4
    const valueOffsets = page.entries.map((entry) => {
      const size = TYPE_SIZE[entry.type] * (entry.type === TYPE.rational ? entry.values.length / 2 : entry.values.length)
      if (size <= 4) return -1
      const at = offset
      offset += size + (size % 2)
      return at
    })
    return { pixelOffset, ifdOffset, valueOffsets }
  })
  if (offset > 0xffffffff) throw new RangeError('The TIFF would exceed 4 GB; write fewer frames per file.')

  const out = new Uint8Array(offset)
  const view = new DataView(out.buffer)
  out.set([0x49, 0x49])
  view.setUint16(2, 42, true)
  view.setUint32(4, layout[0].ifdOffset, true)

  pages.forEach((page, p) => {
    const { pixelOffset, ifdOffset, valueOffsets } = layout[p]
    writePixels(view, page.frame, pixelOffset)
    let stripOffset = pixelOffset
    const stripOffsets = page.stripBytes.map((bytes) => {
      const at = stripOffset
      stripOffset += bytes
      return at
    })
    page.entries.find((e) => e.tag === 273)!.values = stripOffsets
    view.setUint16(ifdOffset, page.entries.length, true)
    page.entries.forEach((entry, e) => {
      const at = ifdOffset + 2 + e * 12
      const count = entry.type === TYPE.rational ? entry.values.length / 2 : entry.values.length
      view.setUint16(at, entry.tag, true)
      view.setUint16(at + 2, entry.type, true)
      view.setUint32(at + 4, count, true)
      const valueAt = valueOffsets[e] === -1 ? at + 8 : valueOffsets[e]
      if (valueOffsets[e] !== -1) view.setUint32(at + 8, valueOffsets[e], true)
      writeValues(view, out, entry, valueAt)
    })
    view.setUint32(ifdOffset + 2 + page.entries.length * 12, p + 1 < pages.length ? layout[p + 1].ifdOffset : 0, true)
  })
  return out
}

function writeValues(view: DataView, out: Uint8Array, entry: TagEntry, at: number): void {
  if (entry.values instanceof Uint8Array) {
    out.set(entry.values, at)
    return
  }
  const size = entry.type === TYPE.short ? 2 : 4
  entry.values.forEach((v, i) => {
    if (size === 2) view.setUint16(at + i * 2, v, true)
    else view.setUint32(at + i * 4, v, true)
  })
}

function writePixels(view: DataView, frame: GrayImage, at: number): void {
  const { data } = frame
  if (data instanceof Uint8Array) {
    new Uint8Array(view.buffer, at, data.length).set(data)
  } else if (data instanceof Uint16Array) {
    for (let i = 0; i < data.length; i++) view.setUint16(at + 2 * i, data[i], true)
  } else {
    for (let i = 0; i < data.length; i++) view.setFloat32(at + 4 * i, data[i], true)
  }
}
