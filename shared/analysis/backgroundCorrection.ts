/**
 * Background correction of Kerr frames: difference imaging against a saturated reference, large-scale flat-fielding,
 * and pixelwise normalisation between the two saturated references.
 *
 * Methods (METHODS §8.1, §8.2, §5.1):
 * - Difference imaging: I − I_ref or I/I_ref − 1 with a domain-free reference taken with the sample saturated removes
 *   topography and optics structure and leaves domain contrast (digital Kerr microscopy since F. Schmidt, W. Rave &
 *   A. Hubert (1985), IEEE Trans. Magn. 21(5):1596 [R, secondary: Soldatov & Schäfer, arXiv:1612.02027; journal
 *   reference from memory]).
 * - Flat-fielding without a flat frame: subtract a Gaussian low-pass (σ well above the domain size) and add back its
 *   mean, so illumination gradients go and the mean grey level stays [P]. Large σ are computed on a decimated grid
 *   (anti-alias blur evaluated only at the samples, sample every 4 px, blur, bilinear back), which is 6× faster and
 *   matches the full-resolution low-pass to under 1 % of the domain contrast more than 2σ from the border (nearer,
 *   both are edge-replication guesses and differ by more; tests).
 * - Saturated references: m = (2I − I+ − I−)/(I+ − I−), clipped to [−1, 1] (linear Kerr response assumed) [P].
 * Checked against: METHODS.md check #32 (I+ 120, I− 80, I 110 → m = 0.50) and #31 (70 % of pixels at I+, 30 % at
 * I− → mean m = 0.40 = 2·0.70 − 1) [D]; synthetic ramp + stripes in the tests.
 * Input: GrayImage/FloatImage frames of equal size (register them first, §8.3); σ in pixels.
 * Output: new FloatImages; differences in input intensity units, ratios and m dimensionless.
 */
import { gaussianBlur, gaussianKernel } from './gaussianBlur'
import type { FloatImage, GrayImage } from './types'

type Frame = GrayImage | FloatImage

function assertSameSize(what: string, image: Frame, other: Frame): void {
  if (image.width !== other.width || image.height !== other.height) {
    throw new Error(
      `${what}: image is ${image.width}×${image.height} px but the reference is ${other.width}×${other.height} px; ` +
        'references must be taken at the same size and registered to the frame',
    )
  }
}

/**
 * Difference imaging against a saturated (domain-free) reference.
 * @param mode 'difference' → I − I_ref (intensity units); 'ratio' → I/I_ref − 1 (dimensionless, also removes
 *   multiplicative illumination). Where I_ref = 0 the ratio is undefined and 0 (no contrast) is returned.
 * @throws Error when the sizes differ.
 * @example subtractReference(frame, saturatedFrame, 'difference')
 */
export function subtractReference(image: Frame, reference: Frame, mode: 'difference' | 'ratio'): FloatImage {
  assertSameSize('subtractReference', image, reference)
  const { width, height } = image
  const n = width * height
  const a = image.data
  const b = reference.data
  const out = new Float32Array(n)
  if (mode === 'ratio') {
    for (let i = 0; i < n; i++) {
      const ref = b[i]
      out[i] = ref !== 0 ? a[i] / ref - 1 : 0
    }
  } else {
    for (let i = 0; i < n; i++) out[i] = a[i] - b[i]
  }
  return { width, height, data: out }
}

/** Sampling step of the decimated background grid, in pixels. */
const DECIMATION = 4
/** Anti-alias pre-blur σ before sampling every DECIMATION px: leaves ≤ 2e-5 of any pattern aliased towards DC. */
const PRE_BLUR_SIGMA = 0.75 * DECIMATION
const MIN_DECIMATED_SIGMA = 2 * DECIMATION
const MIN_DECIMATED_SIZE = 16 * DECIMATION

/** Sample positions 0 … n−1 (both ends included) spaced at most DECIMATION apart. */
function samplePositions(n: number): Int32Array {
  const count = Math.ceil((n - 1) / DECIMATION) + 1
  return Int32Array.from({ length: count }, (_, i) => Math.min(n - 1, i * DECIMATION))
}

/** For each pixel coordinate: index of the sample interval holding it and the linear weight of its right end. */
function interpolationTable(positions: Int32Array, n: number): { index: Int32Array; weight: Float32Array } {
  const index = new Int32Array(n)
  const weight = new Float32Array(n)
  let i = 0
  for (let p = 0; p < n; p++) {
    while (i < positions.length - 2 && p > positions[i + 1]) i++
    index[p] = i
    weight[p] = (p - positions[i]) / (positions[i + 1] - positions[i])
  }
  return { index, weight }
}

/**
 * Sample grid, interpolation tables and work buffers of the decimated low-pass for one frame size, kept for the last
 * size seen (stacks repeat one size); none of them ever leaves this module.
 */
interface DecimatedGrid {
  width: number
  height: number
  xs: Int32Array
  ys: Int32Array
  /** 0 … nx−1 and 0 … ny−1: every position of the small grid. */
  allColumns: Int32Array
  allRows: Int32Array
  col: { index: Int32Array; weight: Float32Array }
  row: { index: Int32Array; weight: Float32Array }
  /** Row passes (every input row at the sampled columns) of the anti-alias blur and of the small-grid blur. */
  rowPass: Float32Array
  smallRowPass: Float32Array
  small: Float32Array
  blurred: Float32Array
  /** Each blurred grid row interpolated along x to every pixel column (double, as the bilinear sum uses it). */
  columnInterpolated: Float64Array
}

let gridCache: DecimatedGrid | null = null

function decimatedGrid(width: number, height: number): DecimatedGrid {
  if (gridCache && gridCache.width === width && gridCache.height === height) return gridCache
  const xs = samplePositions(width)
  const ys = samplePositions(height)
  const nx = xs.length
  const ny = ys.length
  gridCache = {
    width,
    height,
    xs,
    ys,
    allColumns: Int32Array.from({ length: nx }, (_, i) => i),
    allRows: Int32Array.from({ length: ny }, (_, j) => j),
    col: interpolationTable(xs, width),
    row: interpolationTable(ys, height),
    rowPass: new Float32Array(height * nx),
    smallRowPass: new Float32Array(ny * nx),
    small: new Float32Array(nx * ny),
    blurred: new Float32Array(nx * ny),
    columnInterpolated: new Float64Array(ny * width),
  }
  return gridCache
}

/** One image row as doubles, with edge-replicated margins for the row pass (grown as needed, never leaves the module). */
let rowScratch = new Float64Array(0)

function rowBuffer(length: number): Float64Array {
  if (rowScratch.length < length) rowScratch = new Float64Array(length)
  return rowScratch
}

/**
 * Row pass of gaussianBlur at the columns xs of every row into `rowPass` (height × xs.length): taps in kernel order
 * summed in double from +0, stored as float32. Each row is first copied into a double buffer with `radius` replicated
 * edge samples on each side (exact for 8-bit, 16-bit and float32 samples), so the tap loop sees one array type
 * whatever the frame's and needs no edge clamp. Four samples are summed side by side (independent sums).
 */
function rowPassAt(data: Frame['data'], width: number, height: number, kernel: Float64Array, xs: Int32Array, rowPass: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  const taps = kernel.length
  const nx = xs.length
  const padded = rowBuffer(width + 2 * radius)
  const lastPadded = radius + width - 1
  for (let y = 0; y < height; y++) {
    const row = y * width
    padded.set(data.subarray(row, row + width), radius)
    const left = padded[radius]
    const right = padded[lastPadded]
    for (let k = 0; k < radius; k++) {
      padded[k] = left
      padded[lastPadded + 1 + k] = right
    }
    // Sample x reads input pixels x − radius … x + radius, i.e. padded[x … x + 2·radius].
    const first = y * nx
    let i = 0
    for (; i + 4 <= nx; i += 4) {
      const a = xs[i]
      const b = xs[i + 1]
      const c = xs[i + 2]
      const d = xs[i + 3]
      let acc0 = 0
      let acc1 = 0
      let acc2 = 0
      let acc3 = 0
      for (let k = 0; k < taps; k++) {
        const weight = kernel[k]
        acc0 += padded[a + k] * weight
        acc1 += padded[b + k] * weight
        acc2 += padded[c + k] * weight
        acc3 += padded[d + k] * weight
      }
      rowPass[first + i] = acc0
      rowPass[first + i + 1] = acc1
      rowPass[first + i + 2] = acc2
      rowPass[first + i + 3] = acc3
    }
    for (; i < nx; i++) {
      const a = xs[i]
      let acc = 0
      for (let k = 0; k < taps; k++) acc += padded[a + k] * kernel[k]
      rowPass[first + i] = acc
    }
  }
}

/**
 * Column pass of gaussianBlur at the rows ys of the row-pass output (height × nx) into `out` (ys.length × nx): taps
 * in kernel order from +0, edge rows repeated, rounded to float32 after every tap. Eight columns are summed side by
 * side: the rounding chain of one sum is long, eight independent ones hide its latency.
 */
function columnPassAt(rowPass: Float32Array, height: number, nx: number, kernel: Float64Array, ys: Int32Array, out: Float32Array): void {
  const radius = (kernel.length - 1) >> 1
  const taps = kernel.length
  const f = Math.fround
  const tapRows = new Int32Array(taps)
  for (let j = 0; j < ys.length; j++) {
    for (let k = 0; k < taps; k++) {
      const yy = ys[j] + k - radius
      tapRows[k] = (yy < 0 ? 0 : yy >= height ? height - 1 : yy) * nx
    }
    const first = j * nx
    let i = 0
    for (; i + 8 <= nx; i += 8) {
      let acc0 = 0
      let acc1 = 0
      let acc2 = 0
      let acc3 = 0
      let acc4 = 0
      let acc5 = 0
      let acc6 = 0
      let acc7 = 0
      for (let k = 0; k < taps; k++) {
        const source = tapRows[k] + i
        const weight = kernel[k]
        acc0 = f(acc0 + rowPass[source] * weight)
        acc1 = f(acc1 + rowPass[source + 1] * weight)
        acc2 = f(acc2 + rowPass[source + 2] * weight)
        acc3 = f(acc3 + rowPass[source + 3] * weight)
        acc4 = f(acc4 + rowPass[source + 4] * weight)
        acc5 = f(acc5 + rowPass[source + 5] * weight)
        acc6 = f(acc6 + rowPass[source + 6] * weight)
        acc7 = f(acc7 + rowPass[source + 7] * weight)
      }
      out[first + i] = acc0
      out[first + i + 1] = acc1
      out[first + i + 2] = acc2
      out[first + i + 3] = acc3
      out[first + i + 4] = acc4
      out[first + i + 5] = acc5
      out[first + i + 6] = acc6
      out[first + i + 7] = acc7
    }
    for (; i < nx; i++) {
      let acc = 0
      for (let k = 0; k < taps; k++) acc = f(acc + rowPass[tapRows[k] + i] * kernel[k])
      out[first + i] = acc
    }
  }
}

/**
 * gaussianBlur of a width×height image with `kernel`, read only at the pixels (xs[i], ys[j]) into `out` (row-major
 * ys.length × xs.length), without computing the others: the row pass at the sampled columns of every row, then the
 * column pass at the sampled rows. Same taps, tap order, edge replication and rounding as gaussianBlur, so the values
 * are identical to sampling its full-resolution result.
 */
function sampledGaussian(
  data: Frame['data'],
  width: number,
  height: number,
  kernel: Float64Array,
  xs: Int32Array,
  ys: Int32Array,
  rowPass: Float32Array,
  out: Float32Array,
): void {
  rowPassAt(data, width, height, kernel, xs, rowPass)
  columnPassAt(rowPass, height, xs.length, kernel, ys, out)
}

/** The low-pass of flattenField at full resolution, kept for the largest frame seen (it never leaves flattenField). */
let backgroundScratch = new Float32Array(0)

function backgroundBuffer(n: number): Float32Array {
  if (backgroundScratch.length < n) backgroundScratch = new Float32Array(n)
  return backgroundScratch.subarray(0, n)
}

/** The input as a new Float32Array of its first n samples (exact for 8-bit, 16-bit and float32 data). */
function floatCopy(data: Frame['data'], n: number): Float32Array {
  return new Float32Array(data.length === n ? data : data.subarray(0, n))
}

/** Every row of the blurred grid (nx × ny) linearly interpolated along x to all `width` pixel columns, in double. */
function interpolateAlongRows(blurred: Float32Array, nx: number, ny: number, col: DecimatedGrid['col'], width: number, across: Float64Array): void {
  const colIndex = col.index
  const colWeight = col.weight
  for (let j = 0; j < ny; j++) {
    const source = j * nx
    const out = j * width
    for (let x = 0; x < width; x++) {
      const i = source + colIndex[x]
      const tx = colWeight[x]
      across[out + x] = blurred[i] + tx * (blurred[i + 1] - blurred[i])
    }
  }
}

/**
 * The full-resolution low-pass: the x-interpolated grid rows interpolated along y, as float32, into `out`; returns
 * their sum in pixel order (double).
 */
function interpolateAlongColumns(across: Float64Array, row: DecimatedGrid['row'], width: number, height: number, out: Float32Array): number {
  const f = Math.fround
  let sum = 0
  for (let y = 0; y < height; y++) {
    const upper = row.index[y] * width
    const lower = upper + width
    const ty = row.weight[y]
    const first = y * width
    for (let x = 0; x < width; x++) {
      const top = across[upper + x]
      const background = f(top + ty * (across[lower + x] - top))
      out[first + x] = background
      sum += background
    }
  }
  return sum
}

/** out ← input − out + mean, row by row (each input row read as doubles, exact). */
function subtractFromInput(data: Frame['data'], width: number, height: number, mean: number, out: Float32Array): void {
  const input = rowBuffer(width)
  for (let y = 0; y < height; y++) {
    const first = y * width
    input.set(data.subarray(first, first + width))
    for (let x = 0; x < width; x++) out[first + x] = input[x] - out[first + x] + mean
  }
}

/**
 * flattenField for σ ≥ MIN_DECIMATED_SIGMA: large-σ Gaussian low-pass computed on a grid decimated by DECIMATION
 * (anti-alias blur (σ1) evaluated only at the samples, blur of the small grid with √(σ² − σ1²)/DECIMATION, bilinear
 * interpolation back), equivalent to the full-resolution blur for a background that is smooth on the DECIMATION
 * scale, at about 1/6 of the cost for σ ≈ 20. The low-pass is written straight into the new output, then replaced by
 * input − low-pass + mean.
 */
function flattenDecimated(image: Frame, sigma: number): FloatImage {
  const { width, height } = image
  const grid = decimatedGrid(width, height)
  const { xs, ys } = grid
  const nx = xs.length
  const ny = ys.length
  const preBlur = Float64Array.from(gaussianKernel(PRE_BLUR_SIGMA))
  sampledGaussian(image.data, width, height, preBlur, xs, ys, grid.rowPass, grid.small)
  // gaussianBlur of the small grid is the same routine sampled at every grid position.
  const smallSigma = Math.sqrt(sigma * sigma - PRE_BLUR_SIGMA * PRE_BLUR_SIGMA) / DECIMATION
  const smallKernel = Float64Array.from(gaussianKernel(smallSigma))
  sampledGaussian(grid.small, nx, ny, smallKernel, grid.allColumns, grid.allRows, grid.smallRowPass, grid.blurred)
  interpolateAlongRows(grid.blurred, nx, ny, grid.col, width, grid.columnInterpolated)
  const out = new Float32Array(width * height)
  const sum = interpolateAlongColumns(grid.columnInterpolated, grid.row, width, height, out)
  subtractFromInput(image.data, width, height, sum / (width * height), out)
  return { width, height, data: out }
}

/**
 * Remove large-scale illumination: I − G_σ * I + ⟨G_σ * I⟩, which keeps the mean grey level exactly.
 * For σ ≥ 8 px on frames of at least 64×64 the low-pass is computed on a grid decimated by 4 (see flattenDecimated).
 * @param sigma Gaussian σ in pixels; choose several domain widths so domains are not flattened. σ ≤ 0 returns a copy.
 * @returns a new FloatImage; a constant image is returned unchanged (its low-pass equals itself).
 */
export function flattenField(image: Frame, sigma: number): FloatImage {
  const { width, height } = image
  const n = width * height
  // Nothing to level for σ ≤ 0 or an empty image: a float copy.
  if (!(sigma > 0) || n === 0) return { width, height, data: floatCopy(image.data, n) }
  if (sigma >= MIN_DECIMATED_SIGMA && width >= MIN_DECIMATED_SIZE && height >= MIN_DECIMATED_SIZE) {
    return flattenDecimated(image, sigma)
  }
  const background = gaussianBlur(image, sigma, undefined, backgroundBuffer(n)).data
  let sum = 0
  for (let i = 0; i < n; i++) sum += background[i]
  const mean = sum / n
  const out = floatCopy(image.data, n)
  for (let i = 0; i < n; i++) out[i] = out[i] - background[i] + mean
  return { width, height, data: out }
}

/**
 * Pixelwise reduced magnetisation from the two saturated references: m = (2I − I+ − I−)/(I+ − I−), clipped to
 * [−1, 1] (METHODS §5.1). Average m over the analysed area for M/Ms.
 * @param iUp reference at positive saturation (I+): a frame of the same size or one value for all pixels.
 * @param iDown reference at negative saturation (I−): a frame or one value.
 * @returns a new FloatImage of m. Pixels where I+ = I− carry no magnetic contrast and get m = 0.
 * @throws Error when a reference frame has a different size.
 * @example normalizeWithSaturatedReferences(frame, 120, 80) // I = 110 → m = 0.5
 */
export function normalizeWithSaturatedReferences(image: Frame, iUp: Frame | number, iDown: Frame | number): FloatImage {
  if (typeof iUp !== 'number') assertSameSize('normalizeWithSaturatedReferences', image, iUp)
  if (typeof iDown !== 'number') assertSameSize('normalizeWithSaturatedReferences', image, iDown)
  const { width, height } = image
  const n = width * height
  const src = image.data
  const out = new Float32Array(n)
  const upData = typeof iUp === 'number' ? null : iUp.data
  const downData = typeof iDown === 'number' ? null : iDown.data
  const upValue = typeof iUp === 'number' ? iUp : 0
  const downValue = typeof iDown === 'number' ? iDown : 0
  for (let i = 0; i < n; i++) {
    const up = upData ? upData[i] : upValue
    const down = downData ? downData[i] : downValue
    const span = up - down
    if (span === 0) continue
    let m = (2 * src[i] - up - down) / span
    if (m > 1) m = 1
    else if (m < -1) m = -1
    // A non-finite pixel (NaN input) carries no information: m = 0 rather than NaN.
    else if (m !== m) m = 0
    out[i] = m
  }
  return { width, height, data: out }
}
