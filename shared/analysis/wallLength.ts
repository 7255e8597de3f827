/**
 * Domain-wall length and wall density of a binary domain map: Crofton, crack and chain-code estimators.
 *
 * Methods (METHODS §4):
 * - Crofton (integral geometry, L = ½∫∫ n(p, θ) dp dθ) with 4 directions, line spacing 1 px (axial) and 1/√2 px
 *   (diagonal): L ≈ (π/8)·[N0 + N90 + (N45 + N135)/√2], N_θ = transitions between neighbouring pixels in direction θ.
 *   Unbiased on average over orientations; for a straight wall at angle θ its factor is
 *   (π/8)(|sin θ| + |cos θ| + |sin(θ−45°)| + |cos(θ−45°)|): 0.9481 (−5.2 %) along the pixel axes, 1.026 at 22.5°,
 *   1.017 at 30° [D]. scikit-image 0.26 `perimeter_crofton(directions=4)` gives the same value on the disk check.
 * - Crack length: number of pixel edges between phases (N0 + N90); ×π/4 for random orientations.
 * - Chain codes of the outer boundary of the largest up component (8-connected inner-boundary tracing, M. Sonka,
 *   V. Hlavac & R. Boyle, *Image Processing, Analysis, and Machine Vision*, boundary-tracing algorithm [from memory]):
 *   even steps n_e, odd steps n_o, code changes n_c counted cyclically; Freeman n_e + √2·n_o; Kulpa-type isotropic
 *   correction π(√2+1)/8·(n_e + √2·n_o) (Z. Kulpa 1977, CGIP 6:434–451, published as 0.948/1.343 [from memory]);
 *   Vossepoel & Smeulders 1982 (CGIP 20:347–364) 0.980·n_e + 1.406·n_o − 0.091·n_c.
 * Checked against: METHODS.md checks #22–#28 (digital disk R = 50: 7845 px, crack 404, n_e 160, n_o 120, n_c 148,
 * Freeman 329.71, Kulpa 312.58, V–S 312.05, Crofton 315.26; axis-aligned walls ×0.9481), reproduced by the tests.
 * Conventions: x = column, y = row; N45 counts pairs (x, y)–(x+1, y+1) and N135 pairs (x, y)–(x−1, y+1) (angles
 * from +x towards +y). A wall is counted once (a transition is between an up and a down pixel, not two perimeters);
 * the image border is never a wall, and pairs with an ignored pixel are skipped.
 * Output: lengths in px (pixel pitch units along x = y; square pixels assumed), density in px⁻¹ per analysed pixel.
 */
import { labelComponents } from './connectedComponents'
import type { BinaryMask } from './types'

/** Transition counts per test-line direction. */
export interface CroftonCrossings {
  n0: number
  n90: number
  n45: number
  n135: number
}

export interface CroftonLength {
  lengthPx: number
  crossings: CroftonCrossings
}

export interface CrackLength {
  /** Pixel edges between an up and a down pixel (N0 + N90). */
  edges: number
  /** Uncorrected crack length, px (exact for walls along the axes). */
  lengthPx: number
  /** Crack length × π/4, the correction for walls of random orientation, px. */
  isotropicPx: number
}

export interface ChainCodeCounts {
  /** Even (axial) chain steps. */
  ne: number
  /** Odd (diagonal) chain steps. */
  no: number
  /** Code changes between consecutive steps, counted cyclically. */
  nc: number
  /** Pixel count of the traced component (0 if there is none). */
  areaPx: number
  /** n_e + √2·n_o, px. */
  freemanPx: number
  /** π(√2+1)/8·(n_e + √2·n_o), px. */
  kulpaPx: number
  /** 0.980·n_e + 1.406·n_o − 0.091·n_c, px. */
  vossepoelSmeuldersPx: number
}

export interface WallDensityOptions {
  /**
   * Wall direction of aligned stripes (degrees, from §3.3 `wallAngleDeg`). When given, the Crofton length is divided
   * by its bias factor for that direction, which removes the −5.2 % of axis-aligned walls. Use only for well-ordered
   * stripes (order parameter S close to 1): for labyrinths the isotropic average is already unbiased.
   */
  wallAngleDeg?: number
}

export interface WallDensityResult {
  /** Wall length per analysed area, px⁻¹ (0 when nothing is analysed). */
  perPx: number
  lengthPx: number
  analysedAreaPx: number
  crossings: CroftonCrossings
  /** 'crofton' (isotropic) or 'crofton-oriented' (divided by the bias factor of `wallAngleDeg`). */
  estimator: 'crofton' | 'crofton-oriented'
}

/** Count phase transitions between analysed neighbours in the four Crofton directions. */
export function croftonCrossings(mask: BinaryMask): CroftonCrossings {
  const { width, height, data, ignore } = mask
  if (ignore === undefined) {
    const byWords = countWithWords(data, width, height)
    if (byWords !== null) return byWords
  }
  const counts: CroftonCrossings = { n0: 0, n90: 0, n45: 0, n135: 0 }
  for (let y = 0; y < height; y++) {
    const row = y * width
    if (ignore !== undefined) countRowWithIgnore(data, ignore, row, width, y + 1 < height, counts)
    else if (y + 1 < height) countRowPair(data, row, width, counts)
    else counts.n0 += countRowSteps(data, row, width)
  }
  return counts
}

/** 1 when two bytes differ, else 0, without a branch: (a XOR b) is 0..255 and only 0 stays 0 after + 255 >> 8. */
function differ(a: number, b: number): number {
  return ((a ^ b) + 255) >> 8
}

/** Horizontal transitions (x, y)–(x+1, y) along one row. */
function countRowSteps(data: Uint8Array, row: number, width: number): number {
  let n = 0
  for (let i = row; i < row + width - 1; i++) n += differ(data[i], data[i + 1])
  return n
}

/**
 * Transitions from the pixels of row y (no ignore map) to their right neighbour (N0) and to the three neighbours
 * in row y + 1: straight down (N90), down-right (N45), down-left (N135).
 */
function countRowPair(data: Uint8Array, row: number, width: number, counts: CroftonCrossings): void {
  const next = row + width
  let left = data[row]
  let leftBelow = data[next]
  let n90 = differ(left, leftBelow)
  let n45 = 0
  let n135 = 0
  for (let x = 1; x < width; x++) {
    const v = data[row + x]
    const below = data[next + x]
    n90 += differ(v, below)
    // Pair (x−1, y)–(x, y+1) is N45 of the left pixel; (x, y)–(x−1, y+1) is N135 of this one.
    n45 += differ(left, below)
    n135 += differ(v, leftBelow)
    left = v
    leftBelow = below
  }
  counts.n0 += countRowSteps(data, row, width)
  counts.n90 += n90
  counts.n45 += n45
  counts.n135 += n135
}

/** Byte order of typed arrays on this platform: word counting needs byte k of a word at bits 8k..8k+7. */
const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1

/** Number of bytes set in a word whose bytes are each 0 or 1 (their sum lands in the top byte of w·0x01010101). */
function bytesSet(word: number): number {
  return Math.imul(word, 0x01010101) >>> 24
}

/**
 * The four counts four pixels at a time, for a 0/1 mask whose rows are whole 32-bit words: XOR of a word with the
 * word of its neighbours (shifted by one byte for the horizontal and diagonal neighbours) has a 1 byte per
 * transition. Returns null when the rows are not word-aligned or a byte is not 0 or 1 (the caller then counts
 * pixel by pixel).
 */
function countWithWords(data: Uint8Array, width: number, height: number): CroftonCrossings | null {
  if (!LITTLE_ENDIAN || width % 4 !== 0 || data.byteOffset % 4 !== 0 || width * height === 0) return null
  const words = new Uint32Array(data.buffer, data.byteOffset, (width * height) / 4)
  const perRow = width / 4
  const counts: CroftonCrossings = { n0: 0, n90: 0, n45: 0, n135: 0 }
  let bits = 0
  for (let y = 0; y < height; y++) bits |= countWordRow(words, y * perRow, perRow, y + 1 < height, counts)
  return (bits & 0xfefefefe) === 0 ? counts : null
}

/** Counts of one row of words (and the row below when there is one); returns the OR of the row's words. */
function countWordRow(words: Uint32Array, row: number, perRow: number, hasNext: boolean, counts: CroftonCrossings): number {
  const next = row + perRow
  let n0 = 0
  let n90 = 0
  let n45 = 0
  let n135 = 0
  let bits = 0
  let previousBelow = 0
  for (let k = 0; k < perRow; k++) {
    const last = k === perRow - 1
    const a = words[row + k]
    const aNext = last ? 0 : words[row + k + 1]
    bits |= a
    // The last pixel of a row has no right or down-right neighbour, the first no down-left one.
    const rowEnd = last ? 0x00ffffff : -1
    n0 += bytesSet((a ^ ((a >>> 8) | (aNext << 24))) & rowEnd)
    if (!hasNext) continue
    const b = words[next + k]
    const bNext = last ? 0 : words[next + k + 1]
    n90 += bytesSet(a ^ b)
    n45 += bytesSet((a ^ ((b >>> 8) | (bNext << 24))) & rowEnd)
    n135 += bytesSet((a ^ ((b << 8) | (previousBelow >>> 24))) & (k === 0 ? 0xffffff00 : -1))
    previousBelow = b
  }
  counts.n0 += n0
  counts.n90 += n90
  counts.n45 += n45
  counts.n135 += n135
  return bits
}

/** The same counts for one row when pixels may be ignored: a pair with an ignored pixel is skipped. */
function countRowWithIgnore(data: Uint8Array, ignore: Uint8Array, row: number, width: number, hasNext: boolean, counts: CroftonCrossings): void {
  const next = row + width
  for (let x = 0; x < width; x++) {
    const i = row + x
    if (ignore[i] !== 0) continue
    const v = data[i]
    if (x + 1 < width && ignore[i + 1] === 0 && data[i + 1] !== v) counts.n0++
    if (!hasNext) continue
    const j = next + x
    if (ignore[j] === 0 && data[j] !== v) counts.n90++
    if (x + 1 < width && ignore[j + 1] === 0 && data[j + 1] !== v) counts.n45++
    if (x > 0 && ignore[j - 1] === 0 && data[j - 1] !== v) counts.n135++
  }
}

/**
 * Total wall length by the 4-direction Crofton formula, px.
 * @returns 0 for an empty mask or a single phase.
 */
export function wallLengthCrofton(mask: BinaryMask): CroftonLength {
  const crossings = croftonCrossings(mask)
  const { n0, n90, n45, n135 } = crossings
  return { lengthPx: (Math.PI / 8) * (n0 + n90 + (n45 + n135) / Math.SQRT2), crossings }
}

/**
 * Ratio of the 4-direction Crofton estimate to the true length for a straight wall at `wallAngleDeg`
 * (0.9481 along the axes, 1.0262 at 22.5°, 1 on average over directions).
 */
export function croftonBiasFactor(wallAngleDeg: number): number {
  const t = (wallAngleDeg * Math.PI) / 180
  const u = t - Math.PI / 4
  return (Math.PI / 8) * (Math.abs(Math.sin(t)) + Math.abs(Math.cos(t)) + Math.abs(Math.sin(u)) + Math.abs(Math.cos(u)))
}

/** Crack length: pixel edges between up and down pixels (analysed pixels only). */
export function crackLength(mask: BinaryMask): CrackLength {
  const { n0, n90 } = croftonCrossings(mask)
  const edges = n0 + n90
  return { edges, lengthPx: edges, isotropicPx: (edges * Math.PI) / 4 }
}

/** Chain-code step (dx, dy) by code 0..7, counter-clockwise on screen starting east (y grows downwards). */
const STEP_DX = [1, 1, 0, -1, -1, -1, 0, 1]
const STEP_DY = [0, -1, -1, -1, 0, 1, 1, 1]

/**
 * Trace the outer boundary of the component containing `start` (its first pixel in raster order) and return the
 * chain codes. Inner-boundary tracing for 8-connectivity: from direction d, search the 8 neighbours counter-clockwise
 * starting at (d + 7) mod 8 for even d, (d + 6) mod 8 for odd d; stop when the move P0 → P1 repeats.
 */
function traceBoundary(labels: Int32Array, width: number, height: number, label: number, start: number): number[] {
  const codes: number[] = []
  let x = start % width
  let y = (start - x) / width
  const inside = (xx: number, yy: number): boolean =>
    xx >= 0 && yy >= 0 && xx < width && yy < height && labels[yy * width + xx] === label
  let dir = 7
  let firstCode = -1
  let secondX = -1
  let secondY = -1
  // Each boundary pixel is left at most 4 times (once per side it bounds), so 4·pixels + 8 moves always suffice.
  const maxMoves = 4 * width * height + 8
  for (let move = 0; move < maxMoves; move++) {
    let found = -1
    const first = dir % 2 === 0 ? (dir + 7) % 8 : (dir + 6) % 8
    for (let k = 0; k < 8; k++) {
      const d = (first + k) % 8
      if (inside(x + STEP_DX[d], y + STEP_DY[d])) {
        found = d
        break
      }
    }
    // Degenerate: an isolated pixel has no boundary steps.
    if (found < 0) return codes
    const fromStart = x + y * width === start
    x += STEP_DX[found]
    y += STEP_DY[found]
    dir = found
    if (move === 0) {
      firstCode = found
      secondX = x
      secondY = y
    } else if (fromStart && found === firstCode && x === secondX && y === secondY) {
      return codes
    }
    codes.push(found)
  }
  return codes
}

/**
 * Chain-code counts and length estimators for the outer boundary of the largest up component (8-connected; ties
 * keep the first in raster order). Holes are not traced.
 * @returns all zeros when there is no up pixel; zero steps for a single-pixel component.
 */
export function chainCodeCounts(mask: BinaryMask): ChainCodeCounts {
  const { width, height, data, ignore } = mask
  const zero: ChainCodeCounts = { ne: 0, no: 0, nc: 0, areaPx: 0, freemanPx: 0, kulpaPx: 0, vossepoelSmeuldersPx: 0 }
  // Degenerate: no pixel or no up component ⇒ no boundary, all counts 0.
  if (width * height === 0) return zero
  const components = labelComponents(data, width, height, 8, 1, { ignore })
  if (components.count === 0) return zero
  let largest = 1
  for (let l = 2; l <= components.count; l++) if (components.sizes[l] > components.sizes[largest]) largest = l
  const start = components.labels.indexOf(largest)
  const codes = traceBoundary(components.labels, width, height, largest, start)
  let ne = 0
  let no = 0
  let nc = 0
  for (let i = 0; i < codes.length; i++) {
    if (codes[i] % 2 === 0) ne++
    else no++
    if (codes[i] !== codes[(i + codes.length - 1) % codes.length]) nc++
  }
  const freemanPx = ne + Math.SQRT2 * no
  return {
    ne,
    no,
    nc,
    areaPx: components.sizes[largest],
    freemanPx,
    kulpaPx: ((Math.PI * (Math.SQRT2 + 1)) / 8) * freemanPx,
    vossepoelSmeuldersPx: 0.98 * ne + 1.406 * no - 0.091 * nc,
  }
}

/**
 * Wall density L_A = wall length / analysed area (METHODS §4), by the 4-direction Crofton estimator.
 * Bias: none on average over wall directions; −5.2 % for walls along the pixel axes and up to +2.6 % at 22.5° —
 * pass `wallAngleDeg` for aligned stripes to remove it.
 * @returns perPx = 0 for an empty mask, all one phase, or no analysed pixel.
 */
export function wallDensity(mask: BinaryMask, options: WallDensityOptions = {}): WallDensityResult {
  const { width, height, ignore } = mask
  let analysedAreaPx = width * height
  if (ignore !== undefined) for (let i = 0; i < width * height; i++) if (ignore[i] !== 0) analysedAreaPx--
  const crofton = wallLengthCrofton(mask)
  const oriented = options.wallAngleDeg !== undefined && Number.isFinite(options.wallAngleDeg)
  const lengthPx = oriented ? crofton.lengthPx / croftonBiasFactor(options.wallAngleDeg as number) : crofton.lengthPx
  return {
    perPx: analysedAreaPx > 0 ? lengthPx / analysedAreaPx : 0,
    lengthPx,
    analysedAreaPx,
    crossings: crofton.crossings,
    estimator: oriented ? 'crofton-oriented' : 'crofton',
  }
}
