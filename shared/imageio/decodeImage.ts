/**
 * Reads uploaded microscope images (PNG, JPEG, TIFF stacks) into greyscale frames, in Node, workers and the browser.
 *
 * Formats: PNG and JPEG through jimp 1.6.1 (always 8-bit: jimp's PNG codec rescales 16-bit samples to 8 bits, and the
 * header says so in `notes`; JPEG pictures are turned upright by their EXIF orientation, as jimp does); TIFF through geotiff 3.0.5: 8/16-bit unsigned and 32-bit float samples,
 * greyscale or RGB, one frame per page, uncompressed, LZW, Deflate or PackBits (decompressed with the bounded decoders
 * of registerBoundedTiffDecoders). Colour becomes luminance with the ITU-R BT.601 luma weights
 * Y = 0.299 R + 0.587 G + 0.114 B (ITU-R Rec. BT.601; the weights JPEG's YCbCr uses, so a colour JPEG gives back its
 * stored luma) [from memory]; integer results are rounded, and R = G = B gives the
 * same value back exactly. Alpha and other extra samples are ignored. TIFF PhotometricInterpretation 0 (WhiteIsZero)
 * is inverted to black-is-zero (v → 2^bits − 1 − v).
 * Pixel size: TIFF XResolution / YResolution / ResolutionUnit (METHODS §9.1) via pixelSizeFromTiffResolution; with
 * ResolutionUnit 1 (no unit) a `unit=<length>` entry in ImageDescription gives the unit of XResolution; an explicit
 * `pixel_size=<number> <unit>` (or `pixel_size_nm=`, `pixel_size_um=`) entry is read too. Placeholders (72, 96, 300 dpi, …)
 * and implausible values give null with the reason in `pixelSizeNote` (METHODS §9.1: calibration unknown ⇒ report px).
 * `spacing=` entries are not used: in key=value descriptions they conventionally give the distance between slices of
 * a z-stack, not the in-plane pixel pitch.
 * Safety: sizes are read from the headers (PNG IHDR, JPEG SOFn, every TIFF IFD) and checked against DecodeLimits
 * before any pixel buffer exists; the TIFF page walk is capped at `maxFrames` directories and detects loops. A header
 * must also be plausible for the data behind it (PNG: Deflate's 1032:1 bound; JPEG: a bit per 8 × 8 block; TIFF:
 * each block's coding bound), so a small file cannot make a decoder allocate a large declared size; jimp's JPEG
 * decoder gets a memory cap derived from the checked frame header.
 * Frame numbering: frames are 0-based, in file order; TIFF pages flagged as reduced-resolution copies or transparency
 * masks (NewSubfileType bits 0 and 2) are skipped.
 * Input: the file's bytes, or a ByteSource that reads them range by range. From a ByteSource a TIFF is probed by
 * reading its header and directories only, and each frame by reading that page's strips or tiles only, so memory
 * follows one frame, not the file; PNG and JPEG are single frames whose decoder takes the whole file, which is read.
 */
import type { GeoTIFF, GeoTIFFImage } from 'geotiff'
import type { GrayImage } from '../analysis/types'
import { formatLength, pixelSizeFromTiffResolution, parseLength } from '../units/lengthUnits'
import { bytesSource, wholeFile, type ByteSource } from './byteSource'
import { ImageDecodeError } from './imageDecodeError'
import { blockCount, minimumScanBytes, readJpegHeader, type JpegHeader } from './readJpegHeader'
import { minimumImageDataBytes, readPngHeader } from './readPngHeader'
import { readTiffDirectories, SUPPORTED_TIFF_COMPRESSIONS, type TiffPage } from './readTiffDirectories'

export { ImageDecodeError, type ImageDecodeErrorCode } from './imageDecodeError'
export type { ByteSource } from './byteSource'

export type ImageFormat = 'png' | 'jpeg' | 'tiff'

/** A whole file in memory, or random access to one (e.g. an upload on the server's disk). */
export type ImageInput = Uint8Array | ByteSource

export interface ImageHeader {
  format: ImageFormat
  mediaType: string
  width: number
  height: number
  frameCount: number
  bitDepth: 8 | 16 | 32
  sampleFormat: 'uint' | 'float'
  pixelSizeNm: number | null
  pixelSizeSource: 'tiff-resolution' | 'tiff-description' | null
  /** Where the pixel size came from, or why none was taken. */
  pixelSizeNote?: string
  /** What the reader changed or dropped (colour to luminance, alpha ignored, 16-bit PNG reduced, pages skipped). */
  notes?: string[]
}

export interface DecodeLimits {
  /** Largest width × height of one frame. */
  maxPixelsPerFrame: number
  /** Most frames (TIFF pages, thumbnails included) in one file. */
  maxFrames: number
  /** Largest width × height × frames. */
  maxTotalPixels: number
}

export const DEFAULT_DECODE_LIMITS: Readonly<DecodeLimits> = {
  maxPixelsPerFrame: 8192 * 8192,
  maxFrames: 2000,
  maxTotalPixels: 600e6,
}

const MEDIA_TYPE: Record<ImageFormat, string> = { png: 'image/png', jpeg: 'image/jpeg', tiff: 'image/tiff' }

/** BT.601 luma weights in thousandths, so integer inputs are converted with integer arithmetic. */
const LUMA_R = 299
const LUMA_G = 587
const LUMA_B = 114
const LUMA_NOTE = 'colour converted to luminance with the BT.601 weights 0.299 R + 0.587 G + 0.114 B'

/**
 * Recognise the format from the first bytes only (the file name and stated media type are not trusted).
 * @returns 'png' for the 8-byte PNG signature, 'jpeg' for FF D8 FF, 'tiff' for a classic TIFF header (II*\0 or
 *   MM\0*); null otherwise, including BigTIFF (version 43), which probeImage rejects with its own message.
 */
export function sniffFormat(bytes: Uint8Array): ImageFormat | null {
  const starts = (...b: number[]) => bytes.length >= b.length && b.every((v, i) => bytes[i] === v)
  if (starts(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a)) return 'png'
  if (starts(0xff, 0xd8, 0xff)) return 'jpeg'
  if (starts(0x49, 0x49, 0x2a, 0x00) || starts(0x4d, 0x4d, 0x00, 0x2a)) return 'tiff'
  return null
}

function resolveLimits(limits?: Partial<DecodeLimits>): DecodeLimits {
  return { ...DEFAULT_DECODE_LIMITS, ...limits }
}

function unsupportedFormat(bytes: Uint8Array, fileName: string): ImageDecodeError {
  const starts = (...b: number[]) => bytes.length >= b.length && b.every((v, i) => bytes[i] === v)
  if (starts(0x49, 0x49, 0x2b, 0x00) || starts(0x4d, 0x4d, 0x00, 0x2b)) {
    return new ImageDecodeError(
      'unsupported-type',
      fileName,
      'this is a BigTIFF (64-bit offsets), which is not supported; save the stack as a classic TIFF under 4 GB or split it.',
    )
  }
  const head = bytes.subarray(0, 64)
  const looksLikeText = head.every((b) => b === 9 || b === 10 || b === 13 || (b >= 32 && b < 127) || b >= 0xc2)
  const what = looksLikeText ? 'it contains text' : 'its first bytes match none of these formats'
  return new ImageDecodeError('unsupported-type', fileName, `this is not a PNG, JPEG or TIFF image (${what}).`)
}

function checkFrameSize(width: number, height: number, fileName: string, limits: DecodeLimits): void {
  if (width * height > limits.maxPixelsPerFrame) {
    throw new ImageDecodeError(
      'image-too-large',
      fileName,
      `the image declares ${width} × ${height} pixels; the limit is ${limits.maxPixelsPerFrame.toLocaleString('en')} pixels per frame.`,
    )
  }
  if (width * height > limits.maxTotalPixels) {
    throw new ImageDecodeError('image-too-large', fileName, `the image declares ${width} × ${height} pixels, over the total limit.`)
  }
}

/** An ArrayBuffer holding exactly `bytes`, for decoders that take one (copied only when `bytes` is a view into more). */
function ownBuffer(bytes: Uint8Array): ArrayBuffer {
  // A SharedArrayBuffer (the analysis pool shares one file with every worker) is read in place: the decoders only read
  // it, and copying it would give every worker thread its own copy of a whole stack.
  const shared = typeof SharedArrayBuffer !== 'undefined' && bytes.buffer instanceof SharedArrayBuffer
  const whole = bytes.byteOffset === 0 && bytes.byteLength === bytes.buffer.byteLength && (bytes.buffer instanceof ArrayBuffer || shared)
  return whole ? (bytes.buffer as ArrayBuffer) : (bytes.slice().buffer as ArrayBuffer)
}

/** Refusal of a header whose declared size its data cannot hold (checked after the limits, which answer 413 first). */
function tooLittleData(format: string, fileName: string, dataBytes: number, width: number, height: number): ImageDecodeError {
  return new ImageDecodeError(
    'corrupt-image',
    fileName,
    `the ${format} is damaged: ${dataBytes.toLocaleString('en')} bytes of image data cannot hold the declared ` +
      `${width} × ${height} pixels (the file is cut short or its header is wrong).`,
  )
}

function probePng(bytes: Uint8Array, fileName: string, limits: DecodeLimits): ImageHeader {
  const png = readPngHeader(bytes, fileName)
  checkFrameSize(png.width, png.height, fileName, limits)
  if (png.imageDataBytes < minimumImageDataBytes(png)) throw tooLittleData('PNG', fileName, png.imageDataBytes, png.width, png.height)
  const notes: string[] = []
  if (png.bitDepth === 16) {
    notes.push('16-bit PNG read with 8 bits per sample (the PNG decoder keeps the high byte); use TIFF to keep 16 bits')
  }
  if (png.colorType === 2 || png.colorType === 3 || png.colorType === 6) notes.push(LUMA_NOTE)
  if (png.colorType === 4 || png.colorType === 6) notes.push('alpha channel ignored')
  return baseHeader('png', png.width, png.height, notes)
}

function probeJpeg(bytes: Uint8Array, fileName: string, limits: DecodeLimits): ImageHeader {
  const jpeg = readJpegHeader(bytes, fileName)
  checkFrameSize(jpeg.width, jpeg.height, fileName, limits)
  if (jpeg.scanBytes < minimumScanBytes(jpeg)) throw tooLittleData('JPEG', fileName, jpeg.scanBytes, jpeg.width, jpeg.height)
  const notes = jpeg.components >= 3 ? [LUMA_NOTE] : []
  // jimp turns the picture upright by its EXIF orientation; 5–8 include a quarter turn, swapping width and height.
  if (jpeg.orientation !== 1) notes.push(`EXIF orientation ${jpeg.orientation} applied (picture turned upright)`)
  const swap = jpeg.orientation > 4
  return baseHeader('jpeg', swap ? jpeg.height : jpeg.width, swap ? jpeg.width : jpeg.height, notes)
}

function baseHeader(format: 'png' | 'jpeg', width: number, height: number, notes: string[]): ImageHeader {
  const header: ImageHeader = {
    format,
    mediaType: MEDIA_TYPE[format],
    width,
    height,
    frameCount: 1,
    bitDepth: 8,
    sampleFormat: 'uint',
    pixelSizeNm: null,
    pixelSizeSource: null,
  }
  if (notes.length > 0) header.notes = notes
  return header
}

/**
 * Memory cap for jpeg-js (jimp's JPEG decoder), from the checked frame header. jpeg-js counts 256 bytes per allocated
 * 8 × 8 block (blocks padded to whole MCUs: up to Hmax × Vmax more per component), 64 per block for the component
 * planes and width × height × (components + 4) for its output; twice that plus 16 MB leaves room for the padding.
 * Its default, 512 MB whatever the header says, would let a second frame header hidden after the first scan (read by
 * jpeg-js, never by readJpegHeader) make a 1 kB file allocate that much.
 */
function jpegMemoryCapMB(jpeg: JpegHeader): number {
  const accounted = blockCount(jpeg) * (256 + 64) + jpeg.width * jpeg.height * (jpeg.components + 4)
  return Math.min(512, Math.ceil((2 * accounted) / 2 ** 20) + 16)
}

async function decodeWithJimp(bytes: Uint8Array, fileName: string, limits: DecodeLimits, jpeg: JpegHeader | null): Promise<GrayImage> {
  const { Jimp } = await import('jimp')
  let bitmap: { width: number; height: number; data: Uint8Array }
  try {
    const image = await Jimp.fromBuffer(ownBuffer(bytes), {
      'image/jpeg': {
        maxResolutionInMP: limits.maxPixelsPerFrame / 1e6,
        ...(jpeg !== null ? { maxMemoryUsageInMB: jpegMemoryCapMB(jpeg) } : {}),
      },
    })
    bitmap = image.bitmap
  } catch (err) {
    throw new ImageDecodeError('corrupt-image', fileName, `the image data could not be decoded (${(err as Error).message}).`)
  }
  const { width, height, data: rgba } = bitmap
  const data = new Uint8Array(width * height)
  for (let i = 0, j = 0; i < data.length; i++, j += 4) {
    data[i] = Math.floor((LUMA_R * rgba[j] + LUMA_G * rgba[j + 1] + LUMA_B * rgba[j + 2] + 500) / 1000)
  }
  return { width, height, data }
}

interface TiffFrameLayout {
  pages: TiffPage[]
  /** 0 WhiteIsZero, 1 BlackIsZero, 2 RGB (after inferring a missing tag). */
  photometric: 0 | 1 | 2
}

interface TiffContext {
  limits: DecodeLimits
  header: ImageHeader
  frames: TiffFrameLayout
  tiff: GeoTIFF
  source: ByteSource
  littleEndian: boolean
}

/** Parsed TIFF structure per input, so decoding frame after frame does not walk the IFD chain each time. */
const tiffContexts = new WeakMap<ImageInput, Promise<TiffContext>>()

function sameLimits(a: DecodeLimits, b: DecodeLimits): boolean {
  return a.maxFrames === b.maxFrames && a.maxPixelsPerFrame === b.maxPixelsPerFrame && a.maxTotalPixels === b.maxTotalPixels
}

async function tiffContext(input: ImageInput, fileName: string, limits: DecodeLimits): Promise<TiffContext> {
  const cached = tiffContexts.get(input)
  if (cached !== undefined) {
    const context = await cached.catch(() => null)
    if (context !== null && sameLimits(context.limits, limits)) return context
  }
  const created = createTiffContext(asSource(input), fileName, limits)
  tiffContexts.set(input, created)
  return created
}

function asSource(input: ImageInput): ByteSource {
  return input instanceof Uint8Array ? bytesSource(input) : input
}

type GeoTiffSource = Parameters<typeof GeoTIFF.fromSource>[0]

/** geotiff's source interface over a ByteSource: every range geotiff asks for is read when it asks. */
function geotiffSource(source: ByteSource): GeoTiffSource {
  const fetchSlice = async (slice: { offset: number; length: number }) => ({
    ...slice,
    data: ownBuffer(await source.read(slice.offset, slice.length)),
  })
  return {
    fetchSlice,
    fetch: (slices: { offset: number; length: number }[]) => Promise.all(slices.map(async (slice) => (await fetchSlice(slice)).data)),
    get fileSize() {
      return source.byteLength
    },
    close: async () => {},
  }
}

async function createTiffContext(source: ByteSource, fileName: string, limits: DecodeLimits): Promise<TiffContext> {
  const layout = await readTiffDirectories(source, fileName, {
    maxDirectories: limits.maxFrames,
    maxPixelsPerPage: limits.maxPixelsPerFrame,
    maxTotalPixels: limits.maxTotalPixels,
  })
  const frames = checkTiffPages(layout.pages, fileName)
  const first = frames.pages[0]
  const notes: string[] = []
  const skipped = layout.pages.length - frames.pages.length
  if (skipped > 0) notes.push(`${skipped} reduced-resolution or mask page(s) skipped`)
  if (frames.photometric === 2) notes.push(LUMA_NOTE)
  if (frames.photometric === 0) notes.push('WhiteIsZero page inverted to black-is-zero')
  const extra = first.samplesPerPixel - (frames.photometric === 2 ? 3 : 1)
  if (extra > 0) notes.push(`${extra} extra sample(s) per pixel (e.g. alpha) ignored`)

  const [{ GeoTIFF }, { registerBoundedTiffDecoders }] = await Promise.all([import('geotiff'), import('./registerBoundedTiffDecoders')])
  registerBoundedTiffDecoders()
  let tiff: GeoTIFF
  let resolution: TiffResolutionTags
  try {
    tiff = await GeoTIFF.fromSource(geotiffSource(source))
    resolution = await readResolutionTags(await tiff.getImage(first.ifdIndex))
  } catch (err) {
    throw new ImageDecodeError('corrupt-image', fileName, `the TIFF tags could not be read (${(err as Error).message}).`)
  }
  const calibration = tiffPixelSize(resolution)
  const header: ImageHeader = {
    format: 'tiff',
    mediaType: MEDIA_TYPE.tiff,
    width: first.width,
    height: first.height,
    frameCount: frames.pages.length,
    bitDepth: first.bitsPerSample as 8 | 16 | 32,
    sampleFormat: first.sampleFormat === 3 ? 'float' : 'uint',
    ...calibration,
  }
  if (notes.length > 0) header.notes = notes
  return { limits, header, frames, tiff, source, littleEndian: layout.littleEndian }
}

/** Check that every frame page can be decoded and that all frames agree in size and sample type. */
function checkTiffPages(allPages: TiffPage[], fileName: string): TiffFrameLayout {
  const unsupported = (detail: string) => new ImageDecodeError('unsupported-type', fileName, detail)
  const pages = allPages.filter((p) => !p.auxiliary)
  if (pages.length === 0) {
    throw new ImageDecodeError('corrupt-image', fileName, 'the TIFF holds only reduced-resolution or mask pages, no full image.')
  }
  const first = pages[0]
  let photometric: 0 | 1 | 2 = 1
  for (const page of pages) {
    const number = page.ifdIndex + 1
    const supportedSamples =
      (page.sampleFormat === 1 && (page.bitsPerSample === 8 || page.bitsPerSample === 16)) ||
      (page.sampleFormat === 3 && page.bitsPerSample === 32)
    if (!supportedSamples) {
      const kind =
        page.bitsPerSample === 0
          ? 'samples of different sizes'
          : `${page.bitsPerSample}-bit ${sampleFormatName(page.sampleFormat)} samples`
      throw unsupported(`page ${number} has ${kind}; supported are 8- and 16-bit unsigned integers and 32-bit floats.`)
    }
    const name = SUPPORTED_TIFF_COMPRESSIONS.get(page.compression)
    if (name === undefined) {
      throw unsupported(
        `page ${number} uses TIFF compression ${page.compression}, which is not supported; save it uncompressed or with LZW or Deflate.`,
      )
    }
    const inferred = page.photometric === -1 ? (page.samplesPerPixel >= 3 ? 2 : 1) : page.photometric
    if (inferred !== 0 && inferred !== 1 && inferred !== 2) {
      const what = inferred === 3 ? 'palette colour' : `photometric interpretation ${inferred}`
      throw unsupported(`page ${number} uses ${what}; save it as greyscale (or RGB).`)
    }
    if (inferred === 2 && page.samplesPerPixel < 3) {
      throw unsupported(`page ${number} is RGB with ${page.samplesPerPixel} samples per pixel.`)
    }
    if (inferred === 0 && page.sampleFormat === 3) throw unsupported(`page ${number} is a WhiteIsZero float image; save it as BlackIsZero.`)
    if (page === first) photometric = inferred
    const differs =
      page.width !== first.width ||
      page.height !== first.height ||
      page.bitsPerSample !== first.bitsPerSample ||
      page.sampleFormat !== first.sampleFormat ||
      inferred !== photometric ||
      page.samplesPerPixel !== first.samplesPerPixel
    if (differs) {
      throw unsupported(
        `page ${number} (${page.width} × ${page.height}, ${page.bitsPerSample}-bit) differs from page ${first.ifdIndex + 1} ` +
          `(${first.width} × ${first.height}, ${first.bitsPerSample}-bit); a stack's pages must share size and sample type.`,
      )
    }
  }
  return { pages, photometric }
}

function sampleFormatName(format: number): string {
  return format === 1 ? 'unsigned' : format === 2 ? 'signed integer' : format === 3 ? 'float' : 'untyped'
}

/** The calibration-related tags of one TIFF page, as read by geotiff. */
export interface TiffResolutionTags {
  xResolution: [number, number] | null
  yResolution: [number, number] | null
  unit: number | null
  description: string | null
}

/** XResolution, YResolution, ResolutionUnit and ImageDescription of one page (geotiff's async loadValue, gotcha 16). */
async function readResolutionTags(image: GeoTIFFImage): Promise<TiffResolutionTags> {
  const directory = image.fileDirectory
  const rational = (value: unknown): [number, number] | null => {
    if (Array.isArray(value) || ArrayBuffer.isView(value)) {
      const list = Array.from(value as ArrayLike<number>)
      if (list.length >= 2) return [Number(list[0]), Number(list[1])]
    }
    return typeof value === 'number' ? [value, 1] : null
  }
  const unit = await directory.loadValue('ResolutionUnit')
  const description = await directory.loadValue('ImageDescription')
  return {
    xResolution: rational(await directory.loadValue('XResolution')),
    yResolution: rational(await directory.loadValue('YResolution')),
    unit: typeof unit === 'number' ? unit : null,
    description: typeof description === 'string' ? description : null,
  }
}

type Calibration = Pick<ImageHeader, 'pixelSizeNm' | 'pixelSizeSource' | 'pixelSizeNote'>

/** Same plausible range as pixelSizeFromTiffResolution (0.1 nm … 50 µm per pixel). */
function plausiblePitch(nm: number): boolean {
  return nm >= 0.1 && nm <= 50_000
}

/**
 * Pixel size from the resolution tags, falling back to ImageDescription hints (see the file header).
 * @example tiffPixelSize({ xResolution: [10000, 1], yResolution: [10000, 1], unit: 3, description: null }).pixelSizeNm // 1000
 */
export function tiffPixelSize(tags: TiffResolutionTags): Calibration {
  const unit = tags.unit ?? 2
  let reason: string
  if (tags.xResolution === null) {
    reason = 'the TIFF has no XResolution tag'
  } else if (unit !== 1 && unit !== 2 && unit !== 3) {
    reason = `ResolutionUnit ${unit} is not defined by TIFF 6.0`
  } else {
    const fromTags = pixelSizeFromTiffResolution(tags.xResolution, unit, tags.yResolution ?? undefined)
    if (fromTags.plausible && fromTags.pixelSizeNm !== null) {
      const perUnit = tags.xResolution[0] / tags.xResolution[1]
      return {
        pixelSizeNm: fromTags.pixelSizeNm,
        pixelSizeSource: 'tiff-resolution',
        pixelSizeNote: `XResolution ${perUnit} pixels per ${unit === 3 ? 'centimetre' : 'inch'}; confirm before measuring.`,
      }
    }
    reason = (fromTags.reason ?? 'the resolution tags are not usable').replace(/\.$/, '')
    if (fromTags.pixelSizeNm !== null) reason += ` (the tags would give ${formatLength(fromTags.pixelSizeNm)} per pixel)`
  }
  const hint = tags.description === null ? null : descriptionPixelSize(tags.description, unit === 1 ? tags.xResolution : null)
  if (hint !== null) return { pixelSizeNm: hint.nm, pixelSizeSource: 'tiff-description', pixelSizeNote: `${hint.note}; ${reason}.` }
  return {
    pixelSizeNm: null,
    pixelSizeSource: null,
    pixelSizeNote: `No pixel size: ${reason}. Calibrate with a scale bar or type the pixel size.`,
  }
}

const LENGTH_UNIT_TEXT = '(nm|um|µm|μm|microns?|mm|cm|m)'

/**
 * Pixel size from ImageDescription text: an explicit `pixel_size` entry, else `unit=<length>` giving the unit of
 * XResolution (only passed when ResolutionUnit is 1). Returns null when neither is present or the value is implausible.
 */
function descriptionPixelSize(description: string, xResolution: [number, number] | null): { nm: number; note: string } | null {
  const text = description.replace(/\\u00b5/gi, 'µ')
  const explicit = new RegExp(
    `(?:^|[\\s;,{])["']?pixel[ _-]?size(?:[ _-]?${LENGTH_UNIT_TEXT})?["']?` +
      `\\s*[=:]\\s*([0-9.]+(?:e[+-]?\\d+)?)\\s*${LENGTH_UNIT_TEXT}?(?![a-z])`,
    'i',
  ).exec(text)
  if (explicit !== null) {
    const [, keyUnit, value, valueUnit] = explicit
    const unit = valueUnit ?? keyUnit
    if (unit !== undefined) {
      const nm = safeLength(`${value} ${unit}`)
      if (nm !== null && plausiblePitch(nm)) return { nm, note: `from "${explicit[0].trim()}" in ImageDescription` }
    }
  }
  const unitEntry = new RegExp(`(?:^|[\\s;,])unit\\s*[=:]\\s*${LENGTH_UNIT_TEXT}(?![a-z])`, 'i').exec(text)
  if (unitEntry !== null && xResolution !== null) {
    const perUnit = xResolution[0] / xResolution[1]
    const unitNm = safeLength(`1 ${unitEntry[1]}`)
    if (perUnit > 0 && Number.isFinite(perUnit) && unitNm !== null) {
      const nm = unitNm / perUnit
      if (plausiblePitch(nm)) {
        return {
          nm,
          note:
            `ResolutionUnit is 1 (none); ImageDescription says "${unitEntry[0].trim()}", ` +
            `so XResolution ${perUnit} is pixels per ${unitEntry[1]}`,
        }
      }
    }
  }
  return null
}

function safeLength(text: string): number | null {
  try {
    return parseLength(text.replace(/microns?$/i, 'µm'))
  } catch {
    return null
  }
}

/**
 * Uncompressed one-sample strips (what most microscope software writes) are copied row by row from the file, byte
 * order swapped where needed: the same pixels as geotiff's readRasters at a small fraction of its cost, which matters
 * because a stack's frames are decoded once per analysis pass. Returns null for any other layout.
 */
async function decodeRawStrips(source: ByteSource, page: TiffPage, littleEndian: boolean, photometric: 0 | 1 | 2): Promise<GrayImage | null> {
  const strips = page.rawStrips
  const float = page.sampleFormat === 3 && page.bitsPerSample === 32
  const unsigned = page.sampleFormat === 1 && (page.bitsPerSample === 8 || page.bitsPerSample === 16)
  if (strips === undefined || photometric === 2 || page.planarConfiguration !== 1 || !(float || unsigned)) return null
  const { width, height } = page
  const bytesPerSample = page.bitsPerSample / 8
  const rowBytes = width * bytesPerSample
  const data = float ? new Float32Array(width * height) : bytesPerSample === 2 ? new Uint16Array(width * height) : new Uint8Array(width * height)
  const hostLittleEndian = new Uint8Array(new Uint16Array([1]).buffer)[0] === 1
  const out = new Uint8Array(data.buffer)
  for (let k = 0; k * strips.rowsPerStrip < height; k++) {
    const rows = Math.min(strips.rowsPerStrip, height - k * strips.rowsPerStrip)
    const bytes = await source.read(strips.offsets[k], rows * rowBytes)
    // The directory check guarantees complete strips; a source that still comes up short means the file changed.
    if (bytes.byteLength < rows * rowBytes) return null
    out.set(bytes, k * strips.rowsPerStrip * rowBytes)
  }
  if (bytesPerSample > 1 && littleEndian !== hostLittleEndian) {
    for (let i = 0; i < out.length; i += bytesPerSample) out.subarray(i, i + bytesPerSample).reverse()
  }
  if (photometric === 0) {
    if (float) return null
    const max = bytesPerSample === 2 ? 65535 : 255
    for (let i = 0; i < data.length; i++) data[i] = max - data[i]
  }
  return { width, height, data }
}

async function decodeTiffFrame(context: TiffContext, fileName: string, index: number): Promise<GrayImage> {
  const page = context.frames.pages[index]
  const { width, height } = page
  const direct = await decodeRawStrips(context.source, page, context.littleEndian, context.frames.photometric)
  if (direct !== null) return direct
  const rgb = context.frames.photometric === 2
  let bands: ArrayLike<number>[]
  try {
    const image = await context.tiff.getImage(page.ifdIndex)
    const rasters = await image.readRasters({ samples: rgb ? [0, 1, 2] : [0], interleave: false })
    bands = Array.from(rasters as unknown as ArrayLike<ArrayLike<number>>)
  } catch (err) {
    throw new ImageDecodeError('corrupt-image', fileName, `page ${page.ifdIndex + 1} could not be decoded (${(err as Error).message}).`)
  }
  const n = width * height
  if (bands.some((band) => band.length !== n)) {
    throw new ImageDecodeError('corrupt-image', fileName, `page ${page.ifdIndex + 1} decoded to the wrong number of pixels.`)
  }
  const data =
    page.sampleFormat === 3 ? new Float32Array(n) : page.bitsPerSample === 16 ? new Uint16Array(n) : new Uint8Array(n)
  if (rgb) {
    const [r, g, b] = bands
    if (data instanceof Float32Array) {
      for (let i = 0; i < n; i++) data[i] = (LUMA_R * r[i] + LUMA_G * g[i] + LUMA_B * b[i]) / 1000
    } else {
      for (let i = 0; i < n; i++) data[i] = Math.floor((LUMA_R * r[i] + LUMA_G * g[i] + LUMA_B * b[i] + 500) / 1000)
    }
  } else if (context.frames.photometric === 0) {
    const max = page.bitsPerSample === 16 ? 65535 : 255
    const grey = bands[0]
    for (let i = 0; i < n; i++) data[i] = max - grey[i]
  } else {
    data.set(bands[0])
  }
  return { width, height, data }
}

/** Bytes enough to recognise the format and to tell text from binary in the refusal message. */
const SNIFF_BYTES = 64

/**
 * Read the headers only and check them against the limits; no pixel data is decoded or allocated. From a ByteSource,
 * a TIFF is checked by reading its header and directories only.
 * @throws ImageDecodeError empty-file (400), unsupported-type (415), corrupt-image (400), image-too-large (413) or
 *   too-many-frames (413); each message names the file.
 * @example const header = await probeImage(bytes, 'KB24-A300.tif') // { format: 'tiff', frameCount: 1, ... }
 */
export async function probeImage(input: ImageInput, fileName: string, limits?: Partial<DecodeLimits>): Promise<ImageHeader> {
  const resolved = resolveLimits(limits)
  if (input.byteLength === 0) throw new ImageDecodeError('empty-file', fileName, 'the file is empty.')
  const head = await asSource(input).read(0, SNIFF_BYTES)
  const format = sniffFormat(head)
  if (format === null) throw unsupportedFormat(head, fileName)
  if (format === 'png') return probePng(await wholeFile(input), fileName, resolved)
  if (format === 'jpeg') return probeJpeg(await wholeFile(input), fileName, resolved)
  return { ...(await tiffContext(input, fileName, resolved)).header }
}

/**
 * Decode one frame (0-based) to greyscale: Uint8Array for 8-bit, Uint16Array for 16-bit, Float32Array for float TIFF.
 * TIFF stacks are parsed once per input (cached), so frame-by-frame decoding stays linear in the page count; from a
 * ByteSource only that page's data is read.
 * @throws ImageDecodeError as probeImage, or corrupt-image when the frame's data is damaged.
 * @throws RangeError when `index` is not a frame of the file.
 */
export async function decodeFrame(input: ImageInput, fileName: string, index: number, limits?: Partial<DecodeLimits>): Promise<GrayImage> {
  const resolved = resolveLimits(limits)
  const header = await probeImage(input, fileName, resolved)
  if (!Number.isInteger(index) || index < 0 || index >= header.frameCount) {
    throw new RangeError(`Frame ${index} does not exist in "${fileName}" (${header.frameCount} frame(s), numbered from 0).`)
  }
  if (header.format !== 'tiff') {
    const bytes = await wholeFile(input)
    return decodeWithJimp(bytes, fileName, resolved, header.format === 'jpeg' ? readJpegHeader(bytes, fileName) : null)
  }
  return decodeTiffFrame(await tiffContext(input, fileName, resolved), fileName, index)
}

/**
 * Decode every frame. Limits are checked on the headers before the first frame is decoded.
 * @throws ImageDecodeError as probeImage and decodeFrame.
 */
export async function decodeImage(
  input: ImageInput,
  fileName: string,
  limits?: Partial<DecodeLimits>,
): Promise<{ header: ImageHeader; frames: GrayImage[] }> {
  const resolved = resolveLimits(limits)
  const header = await probeImage(input, fileName, resolved)
  const frames: GrayImage[] = []
  for (let index = 0; index < header.frameCount; index++) frames.push(await decodeFrame(input, fileName, index, resolved))
  return { header, frames }
}
