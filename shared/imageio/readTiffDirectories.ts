/**
 * Walks the IFD chain of a classic TIFF and reads the layout tags of every page, without touching pixel data.
 *
 * Source: TIFF Revision 6.0 (Adobe, 1992), sections 2 (file structure: 8-byte header, IFDs of 12-byte entries, next-IFD
 * offset), 3 and 8 (baseline tags) and 15 (tiles) [from memory]. Field type sizes: BYTE/ASCII/SBYTE/UNDEFINED 1, SHORT/
 * SSHORT 2, LONG/SLONG/FLOAT/IFD 4, RATIONAL/SRATIONAL/DOUBLE 8 [from memory]; unknown types are skipped, as the spec asks.
 * Checked against: files written by tifffile 2023.2.3 and Pillow 9.4.0 (tests/fixtures) and by encodeTiff.
 * Why our own walk when geotiff parses IFDs too: the page count and every page's size must be known and checked against
 * the limits before geotiff allocates anything, and a hostile chain (a loop, or thousands of pages) must cost at most
 * `maxDirectories` small reads. Every offset is bounds-checked; strip and tile byte ranges must lie inside the file and
 * be long enough to decode to the block's size (see MAX_EXPANSION).
 * The walk reads ranges from a ByteSource (the header, each IFD, each out-of-line tag value), never pixel data, so a
 * stack on disk is checked without loading it.
 */
import type { ByteSource } from './byteSource'
import { ImageDecodeError } from './imageDecodeError'

/** Layout of one IFD (page). */
export interface TiffPage {
  /** Position in the IFD chain (0-based), what geotiff's `getImage(index)` expects. */
  ifdIndex: number
  width: number
  height: number
  samplesPerPixel: number
  /** Bits of each sample (all samples must agree). */
  bitsPerSample: number
  /** SampleFormat: 1 unsigned integer, 2 signed integer, 3 IEEE float, 4 undefined. */
  sampleFormat: number
  /** PhotometricInterpretation: 0 WhiteIsZero, 1 BlackIsZero, 2 RGB, 3 palette, … */
  photometric: number
  compression: number
  planarConfiguration: number
  /** NewSubfileType bit 0 (reduced-resolution copy, e.g. a thumbnail) or bit 2 (transparency mask). */
  auxiliary: boolean
  /**
   * Where an uncompressed, stripped, one-sample page keeps its rows (strip k holds rows k·rowsPerStrip …), checked to
   * lie inside the file and to be complete; absent for every other layout. Lets the decoder copy rows directly.
   */
  rawStrips?: { offsets: number[]; rowsPerStrip: number }
}

export interface TiffLayout {
  littleEndian: boolean
  pages: TiffPage[]
}

/** Bounds checked while walking, before anything is read that scales with them. */
export interface TiffWalkLimits {
  /** IFDs read at most; a longer chain throws too-many-frames. */
  maxDirectories: number
  /** Pixels per page (width × height). */
  maxPixelsPerPage: number
  /** Pixels summed over all pages. */
  maxTotalPixels: number
}

/** More samples per pixel than any microscope image has; larger counts mark a damaged directory. */
const MAX_SAMPLES_PER_PIXEL = 16

const TYPE_SIZE: Record<number, number> = { 1: 1, 2: 1, 3: 2, 4: 4, 5: 8, 6: 1, 7: 1, 8: 2, 9: 4, 10: 8, 11: 4, 12: 8, 13: 4 }

const TAG = {
  newSubfileType: 254,
  imageWidth: 256,
  imageLength: 257,
  bitsPerSample: 258,
  compression: 259,
  photometric: 262,
  stripOffsets: 273,
  samplesPerPixel: 277,
  rowsPerStrip: 278,
  stripByteCounts: 279,
  planarConfiguration: 284,
  tileWidth: 322,
  tileLength: 323,
  tileOffsets: 324,
  tileByteCounts: 325,
  sampleFormat: 339,
} as const

interface Entry {
  type: number
  count: number
  /** Byte offset of the value (inline values point into the entry itself). */
  valueOffset: number
  /** The entry's 4-byte value field when the values fit in it (TIFF 6.0: then they are stored there), else null. */
  inline: DataView | null
}

/** Compressions decoded (with bounded decoders, see registerBoundedTiffDecoders): none, LZW, Deflate, PackBits. */
export const SUPPORTED_TIFF_COMPRESSIONS: ReadonlyMap<number, string> = new Map([
  [1, 'none'],
  [5, 'LZW'],
  [8, 'Deflate'],
  [32946, 'Deflate'],
  [32773, 'PackBits'],
])

/**
 * Most bytes one compressed byte can decode to, per compression: LZW emits at most 4096 bytes (its longest table
 * string) per code of at least 9 bits; Deflate at most 1032 (a 258-byte match for 2 bits) [from memory, zlib technical
 * details]; PackBits 128 per 2-byte run. A block whose byte count times this is below its decoded size cannot hold it,
 * so a small file cannot declare a large page (an empty block, byte count 0, holds nothing). Source for the codings:
 * TIFF 6.0 sections 9 and 13 [from memory].
 */
const MAX_EXPANSION: ReadonlyMap<number, number> = new Map([
  [1, 1],
  [5, Math.ceil((4096 * 8) / 9)],
  [8, 1032],
  [32946, 1032],
  [32773, 64],
])

class TiffReader {
  constructor(
    private readonly source: ByteSource,
    readonly littleEndian: boolean,
    readonly fileName: string,
  ) {}

  get length(): number {
    return this.source.byteLength
  }

  corrupt(detail: string): ImageDecodeError {
    return new ImageDecodeError('corrupt-image', this.fileName, `the TIFF structure is damaged: ${detail}`)
  }

  /** `length` bytes at `offset`, which the caller has checked lie inside the file. */
  async view(offset: number, length: number): Promise<DataView> {
    const bytes = await this.source.read(offset, length)
    if (bytes.byteLength < length) throw this.corrupt(`the file ends at byte ${offset + bytes.byteLength} (truncated?).`)
    return new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength)
  }

  u16(view: DataView, at: number): number {
    return view.getUint16(at, this.littleEndian)
  }

  u32(view: DataView, at: number): number {
    return view.getUint32(at, this.littleEndian)
  }

  /** Unsigned integer values of a BYTE, SHORT or LONG entry. */
  async integers(entry: Entry, tag: number, page: number): Promise<number[]> {
    const size = TYPE_SIZE[entry.type]
    if (entry.type !== 1 && entry.type !== 3 && entry.type !== 4) {
      throw this.corrupt(`tag ${tag} on page ${page + 1} has field type ${entry.type}, expected an unsigned integer.`)
    }
    if (entry.valueOffset + entry.count * size > this.length) {
      throw this.corrupt(`the values of tag ${tag} on page ${page + 1} lie past the end of the file (truncated?).`)
    }
    const view = entry.inline ?? (await this.view(entry.valueOffset, entry.count * size))
    const values = new Array<number>(entry.count)
    for (let i = 0; i < entry.count; i++) {
      const at = i * size
      values[i] = entry.type === 1 ? view.getUint8(at) : entry.type === 3 ? this.u16(view, at) : this.u32(view, at)
    }
    return values
  }
}

/**
 * Read the page layouts of a classic (32-bit offset) TIFF.
 * Work is bounded by the limits and the file length: at most `maxDirectories` IFDs, and at most one strip or tile
 * entry per 8 bytes of file (each block needs its own offset and byte count in a well-formed file). Reads are a few
 * per page: the IFD, and the tag values stored outside it.
 * @throws ImageDecodeError corrupt-image (bad header, offsets outside the file, a looping chain, missing required
 *   tags, strips past the end), too-many-frames or image-too-large.
 */
export async function readTiffDirectories(source: ByteSource, fileName: string, limits: TiffWalkLimits): Promise<TiffLayout> {
  const { maxDirectories } = limits
  const head = await source.read(0, 8)
  if (head.byteLength < 8) {
    throw new ImageDecodeError('corrupt-image', fileName, `the TIFF header is cut short (${head.byteLength} bytes).`)
  }
  const littleEndian = head[0] === 0x49
  const reader = new TiffReader(source, littleEndian, fileName)
  const headView = new DataView(head.buffer, head.byteOffset, 8)
  if (reader.u16(headView, 2) !== 42) throw reader.corrupt('the version number is not 42.')

  const pages: TiffPage[] = []
  const visited = new Set<number>()
  const budget = { pixels: limits.maxTotalPixels, blocks: Math.floor(source.byteLength / 8) + 1 }
  let offset = reader.u32(headView, 4)
  if (offset === 0) throw reader.corrupt('the file contains no image directory.')
  while (offset !== 0) {
    if (pages.length >= maxDirectories) {
      throw new ImageDecodeError(
        'too-many-frames',
        fileName,
        `the file has more than ${maxDirectories} pages; the limit is ${maxDirectories}. Split the stack into smaller files.`,
      )
    }
    if (visited.has(offset)) throw reader.corrupt(`the chain of image directories loops back to byte ${offset}.`)
    visited.add(offset)
    if (offset + 2 > reader.length) {
      throw reader.corrupt(`image directory ${pages.length + 1} starts at byte ${offset}, past the end of the file (truncated?).`)
    }
    const entryCount = reader.u16(await reader.view(offset, 2), 0)
    const end = offset + 2 + entryCount * 12
    if (end + 4 > reader.length) {
      throw reader.corrupt(`image directory ${pages.length + 1} runs past the end of the file (truncated?).`)
    }
    // The whole directory (entries and next-IFD offset) in one read; positions below are relative to `offset`.
    const directory = await reader.view(offset, end + 4 - offset)
    const entries = new Map<number, Entry>()
    for (let i = 0; i < entryCount; i++) {
      const at = 2 + i * 12
      const tag = reader.u16(directory, at)
      const type = reader.u16(directory, at + 2)
      const count = reader.u32(directory, at + 4)
      const size = TYPE_SIZE[type]
      // Unknown field types are skipped (TIFF 6.0 asks readers to ignore them); so are tags we do not use.
      if (size === undefined) continue
      const inline = count * size <= 4
      entries.set(tag, {
        type,
        count,
        valueOffset: inline ? offset + at + 8 : reader.u32(directory, at + 8),
        inline: inline ? new DataView(directory.buffer, directory.byteOffset + at + 8, 4) : null,
      })
    }
    pages.push(await readPage(reader, entries, pages.length, limits, budget))
    offset = reader.u32(directory, end - offset)
  }
  return { littleEndian, pages }
}

interface WalkBudget {
  pixels: number
  blocks: number
}

async function readPage(
  reader: TiffReader,
  entries: Map<number, Entry>,
  index: number,
  limits: TiffWalkLimits,
  budget: WalkBudget,
): Promise<TiffPage> {
  const page = index + 1
  const single = async (tag: number, fallback?: number): Promise<number> => {
    const entry = entries.get(tag)
    if (entry === undefined || entry.count === 0) {
      if (fallback === undefined) throw reader.corrupt(`page ${page} lacks the required tag ${tag}.`)
      return fallback
    }
    return (await reader.integers({ ...entry, count: 1 }, tag, index))[0]
  }

  const width = await single(TAG.imageWidth)
  const height = await single(TAG.imageLength)
  if (width < 1 || height < 1) throw reader.corrupt(`page ${page} declares a size of ${width} × ${height} pixels.`)
  const pixels = width * height
  if (pixels > limits.maxPixelsPerPage) {
    throw new ImageDecodeError(
      'image-too-large',
      reader.fileName,
      `page ${page} is ${width} × ${height} pixels; the limit is ${limits.maxPixelsPerPage.toLocaleString('en')} pixels per frame.`,
    )
  }
  budget.pixels -= pixels
  if (budget.pixels < 0) {
    throw new ImageDecodeError(
      'image-too-large',
      reader.fileName,
      `the pages hold more than ${limits.maxTotalPixels.toLocaleString('en')} pixels in total (the limit); split the stack.`,
    )
  }
  const samplesPerPixel = await single(TAG.samplesPerPixel, 1)
  if (samplesPerPixel < 1 || samplesPerPixel > MAX_SAMPLES_PER_PIXEL) {
    throw reader.corrupt(`page ${page} declares ${samplesPerPixel} samples per pixel.`)
  }
  // BitsPerSample and SampleFormat carry one value per sample; read no more than that.
  const perSample = async (entry: Entry | undefined, tag: number, fallback: number): Promise<number[]> =>
    entry ? reader.integers({ ...entry, count: Math.min(entry.count, samplesPerPixel) }, tag, index) : [fallback]
  const bitsList = await perSample(entries.get(TAG.bitsPerSample), TAG.bitsPerSample, 1)
  const bitsPerSample = bitsList[0]
  const formatList = await perSample(entries.get(TAG.sampleFormat), TAG.sampleFormat, 1)
  const sampleFormat = formatList[0]
  const mixed = bitsList.some((b) => b !== bitsPerSample) || formatList.some((f) => f !== sampleFormat)
  const newSubfileType = await single(TAG.newSubfileType, 0)
  const result: TiffPage = {
    ifdIndex: index,
    width,
    height,
    samplesPerPixel,
    // Mixed sample sizes are reported as bit depth 0 so that the caller rejects them as unsupported.
    bitsPerSample: mixed ? 0 : bitsPerSample,
    sampleFormat,
    photometric: await single(TAG.photometric, -1),
    compression: await single(TAG.compression, 1),
    planarConfiguration: await single(TAG.planarConfiguration, 1),
    auxiliary: (newSubfileType & 0b101) !== 0,
  }
  await checkDataBlocks(reader, entries, result, budget)
  return result
}

/** Strip or tile offsets and byte counts: the right number of blocks, each inside the file, raw blocks complete. */
async function checkDataBlocks(reader: TiffReader, entries: Map<number, Entry>, page: TiffPage, budget: WalkBudget): Promise<void> {
  const tiled = entries.has(TAG.tileOffsets)
  const planes = page.planarConfiguration === 2 ? page.samplesPerPixel : 1
  let blockWidth: number
  let blockHeight: number
  let blocksAcross: number
  let blocksDown: number
  const number = page.ifdIndex + 1
  const single = async (tag: number, fallback: number): Promise<number> => {
    const entry = entries.get(tag)
    return entry && entry.count > 0 ? (await reader.integers({ ...entry, count: 1 }, tag, page.ifdIndex))[0] : fallback
  }
  if (tiled) {
    blockWidth = await single(TAG.tileWidth, 0)
    blockHeight = await single(TAG.tileLength, 0)
    if (blockWidth < 1 || blockHeight < 1) throw reader.corrupt(`page ${number} declares tiles of ${blockWidth} × ${blockHeight}.`)
    blocksAcross = Math.ceil(page.width / blockWidth)
    blocksDown = Math.ceil(page.height / blockHeight)
  } else {
    // RowsPerStrip defaults to 2³²−1 ("the whole image in one strip").
    blockWidth = page.width
    blockHeight = Math.min(page.height, Math.max(1, await single(TAG.rowsPerStrip, page.height)))
    blocksAcross = 1
    blocksDown = Math.ceil(page.height / blockHeight)
  }
  const expectedBlocks = blocksAcross * blocksDown * planes
  budget.blocks -= expectedBlocks
  if (budget.blocks < 0) throw reader.corrupt(`the pages list more data blocks than a file of ${reader.length} bytes can hold.`)
  const offsetsEntry = entries.get(tiled ? TAG.tileOffsets : TAG.stripOffsets)
  if (offsetsEntry === undefined) throw reader.corrupt(`page ${number} has no strip or tile offsets.`)
  if (offsetsEntry.count < expectedBlocks) {
    throw reader.corrupt(`page ${number} lists ${offsetsEntry.count} data blocks; its size needs ${expectedBlocks}.`)
  }
  const offsets = await reader.integers({ ...offsetsEntry, count: expectedBlocks }, tiled ? TAG.tileOffsets : TAG.stripOffsets, page.ifdIndex)
  const countsEntry = entries.get(tiled ? TAG.tileByteCounts : TAG.stripByteCounts)
  const bitsPerPixelPlane = page.bitsPerSample * (page.planarConfiguration === 2 ? 1 : page.samplesPerPixel)
  const rawBytes = (rows: number): number => Math.ceil((blockWidth * bitsPerPixelPlane) / 8) * rows
  let counts: number[]
  if (countsEntry === undefined) {
    // Some writers omit StripByteCounts for uncompressed single-strip pages; the size then follows from the layout.
    if (page.compression !== 1 || tiled) throw reader.corrupt(`page ${number} has no strip byte counts.`)
    counts = offsets.map((_, i) => rawBytes(Math.min(blockHeight, page.height - (i % blocksDown) * blockHeight)))
  } else {
    if (countsEntry.count < expectedBlocks) {
      throw reader.corrupt(`page ${number} lists ${countsEntry.count} byte counts; its size needs ${expectedBlocks}.`)
    }
    counts = await reader.integers({ ...countsEntry, count: expectedBlocks }, tiled ? TAG.tileByteCounts : TAG.stripByteCounts, page.ifdIndex)
  }
  if (page.compression === 1 && !tiled && page.samplesPerPixel === 1) page.rawStrips = { offsets, rowsPerStrip: blockHeight }
  for (let i = 0; i < expectedBlocks; i++) {
    if (offsets[i] + counts[i] > reader.length) {
      throw reader.corrupt(
        `data block ${i + 1} of page ${number} ends at byte ${offsets[i] + counts[i]}, ` +
          `but the file has ${reader.length} bytes (truncated?).`,
      )
    }
    const expansion = MAX_EXPANSION.get(page.compression)
    if (expansion !== undefined && page.bitsPerSample > 0) {
      const rows = tiled ? blockHeight : Math.min(blockHeight, page.height - (i % blocksDown) * blockHeight)
      const needed = rawBytes(rows)
      if (expansion === 1 && counts[i] < needed) {
        throw reader.corrupt(`uncompressed data block ${i + 1} of page ${number} holds ${counts[i]} bytes; it needs ${needed}.`)
      }
      if (counts[i] * expansion < needed) {
        throw reader.corrupt(
          `data block ${i + 1} of page ${number} holds ${counts[i]} bytes of ${SUPPORTED_TIFF_COMPRESSIONS.get(page.compression)} data, ` +
            `too few for the ${needed} bytes its size needs (truncated, or the header is wrong).`,
        )
      }
    }
  }
}
