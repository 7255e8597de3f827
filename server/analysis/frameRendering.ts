/**
 * Display derivatives of a frame, made once at ingest with jimp (in the analysis worker threads): an 8-bit greyscale
 * rendering contrast-stretched between the 0.5th and 99.5th intensity percentiles (so a few hot pixels do not flatten
 * the contrast), and a thumbnail of at most THUMBNAIL_SIZE px on its longer side, both PNG.
 */
import type { GrayImage } from '../../shared/analysis/types'
import { solveLinearSystem } from '../../shared/analysis/linearSolve'

export const THUMBNAIL_SIZE = 160

/** Bins of the histogram of float frames, whose values have no natural bins (exact enough for display). */
const FLOAT_BINS = 4096

/**
 * Greyscale PNG (a quarter of RGBA's bytes to filter and deflate), every row with the Sub filter: on domain images it
 * compresses within a few per cent of trying all five filters per row (pngjs's default), in about a third of the time.
 */
const PNG_OPTIONS = { colorType: 0, filterType: 1 } as const

/** The value at `fraction` of the pixels: the first bin where the running count reaches fraction × total. */
function percentileBin(counts: Uint32Array, total: number, fraction: number): number {
  const target = fraction * total
  let running = 0
  for (let bin = 0; bin < counts.length; bin++) {
    running += counts[bin]
    if (running >= target) return bin
  }
  return counts.length - 1
}

/** Integer frames: exact percentiles from the count of every possible value (256 or 65,536 bins, one pass). */
function integerRange(data: Uint8Array | Uint16Array, lowPercent: number, highPercent: number): { low: number; high: number } {
  const counts = new Uint32Array(data instanceof Uint8Array ? 256 : 65536)
  for (let i = 0; i < data.length; i++) counts[data[i]]++
  return { low: percentileBin(counts, data.length, lowPercent / 100), high: percentileBin(counts, data.length, highPercent / 100) }
}

function floatRange(data: Float32Array, lowPercent: number, highPercent: number): { low: number; high: number } {
  let min = Infinity
  let max = -Infinity
  for (let i = 0; i < data.length; i++) {
    const v = data[i]
    if (v < min) min = v
    if (v > max) max = v
  }
  if (!(max > min)) return { low: min, high: min }
  const counts = new Uint32Array(FLOAT_BINS)
  const scale = (FLOAT_BINS - 1) / (max - min)
  for (let i = 0; i < data.length; i++) counts[Math.round((data[i] - min) * scale)]++
  const valueAt = (fraction: number) => min + percentileBin(counts, data.length, fraction) / scale
  return { low: valueAt(lowPercent / 100), high: valueAt(highPercent / 100) }
}

/** Intensity percentiles of a frame: exact for 8- and 16-bit data, from a 4096-bin histogram for float data. */
export function displayRange(frame: GrayImage, lowPercent = 0.5, highPercent = 99.5): { low: number; high: number } {
  const { data } = frame
  return data instanceof Float32Array ? floatRange(data, lowPercent, highPercent) : integerRange(data, lowPercent, highPercent)
}

/** One stretched display value; a constant frame (no range) shows as mid-grey. */
function stretched(value: number, low: number, span: number): number {
  return span ? Math.min(255, Math.max(0, Math.round((value - low) * span))) : 128
}

/**
 * The frame as opaque grey RGBA (jimp's bitmap layout), one 32-bit store per pixel. Integer frames go through a
 * look-up table of every possible value, so each pixel costs one read instead of the arithmetic.
 */
function toGreyRgba(frame: GrayImage, low: number, high: number): Buffer {
  const { data } = frame
  const span = high > low ? 255 / (high - low) : 0
  const out = Buffer.alloc(data.length * 4)
  // RGBA bytes as one little-endian word: alpha 255 on top, the grey value in red, green and blue.
  const words = new Uint32Array(out.buffer, out.byteOffset, data.length)
  const rgba = (grey: number) => (0xff000000 | (grey * 0x010101)) >>> 0
  if (data instanceof Float32Array) {
    for (let i = 0; i < data.length; i++) words[i] = rgba(stretched(data[i], low, span))
  } else {
    const table = new Uint32Array(data instanceof Uint8Array ? 256 : 65536)
    for (let v = 0; v < table.length; v++) table[v] = rgba(stretched(v, low, span))
    for (let i = 0; i < data.length; i++) words[i] = table[data[i]]
  }
  return out
}

/** Terms of the background surface fitted under a thumbnail: 1, u, v, u², uv, v² (u, v in [−1, 1]). */
const BACKGROUND_TERMS = 6

function backgroundTerms(u: number, v: number, out: Float64Array): void {
  out[0] = 1
  out[1] = u
  out[2] = v
  out[3] = u * u
  out[4] = u * v
  out[5] = v * v
}

/**
 * How much domain pattern an opaque grey RGBA thumbnail shows: the standard deviation of its grey levels about a
 * least-squares quadratic surface (the uneven illumination of a Kerr image), times `rawPerGrey` so that frames
 * stretched to different display ranges compare in the camera's own units. A saturated frame leaves only noise, which
 * the thumbnail's area averaging has mostly removed; domains leave their contrast (c·√(f(1−f)) for a phase of area
 * fraction f), and the coldest frames of a temperature ramp the most. It only chooses the frame that stands for an
 * image in lists (a field sweep starts saturated); it is never a measurement.
 */
export function patternAboveBackground(rgba: Uint8Array, width: number, height: number, rawPerGrey: number): number {
  const n = width * height
  if (n < BACKGROUND_TERMS * 2) return 0
  const normal = new Float64Array(BACKGROUND_TERMS * BACKGROUND_TERMS)
  const rhs = new Float64Array(BACKGROUND_TERMS)
  const terms = new Float64Array(BACKGROUND_TERMS)
  const uOf = (x: number) => (width > 1 ? (2 * x) / (width - 1) - 1 : 0)
  const vOf = (y: number) => (height > 1 ? (2 * y) / (height - 1) - 1 : 0)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      backgroundTerms(uOf(x), vOf(y), terms)
      const grey = rgba[4 * (y * width + x)]
      for (let i = 0; i < BACKGROUND_TERMS; i++) {
        rhs[i] += terms[i] * grey
        for (let j = 0; j < BACKGROUND_TERMS; j++) normal[i * BACKGROUND_TERMS + j] += terms[i] * terms[j]
      }
    }
  }
  const fit = solveLinearSystem(normal, rhs, 1e-12)
  if (fit === null) return 0
  let squares = 0
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      backgroundTerms(uOf(x), vOf(y), terms)
      let background = 0
      for (let i = 0; i < BACKGROUND_TERMS; i++) background += fit[i] * terms[i]
      const residual = rgba[4 * (y * width + x)] - background
      squares += residual * residual
    }
  }
  return Math.sqrt(squares / n) * rawPerGrey
}

/** Both derivatives of one frame as PNG bytes, with the display range used and the thumbnail's patternAboveBackground. */
export async function renderFrame(frame: GrayImage): Promise<{ preview: Uint8Array; thumbnail: Uint8Array; low: number; high: number; pattern: number }> {
  const { Jimp } = await import('jimp')
  const { low, high } = displayRange(frame)
  // The constructor takes the bitmap as it is (fromBitmap would copy it).
  const image = new Jimp({ width: frame.width, height: frame.height, data: toGreyRgba(frame, low, high) })
  const preview = await image.getBuffer('image/png', PNG_OPTIONS)
  const scale = Math.min(1, THUMBNAIL_SIZE / Math.max(frame.width, frame.height))
  // jimp's default resize averages over each target pixel's area when shrinking (no aliasing of fine stripes); the
  // preview is already encoded, so the bitmap is resized in place rather than copied.
  image.resize({ w: Math.max(1, Math.round(frame.width * scale)), h: Math.max(1, Math.round(frame.height * scale)) })
  const thumbnail = await image.getBuffer('image/png', PNG_OPTIONS)
  const rawPerGrey = high > low ? (high - low) / 255 : 0
  return { preview, thumbnail, low, high, pattern: patternAboveBackground(image.bitmap.data, image.bitmap.width, image.bitmap.height, rawPerGrey) }
}
