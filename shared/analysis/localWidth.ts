/**
 * Local domain widths across the medial axis of both phases, from the Euclidean distance/feature transform.
 *
 * Method (METHODS §2.3): exact EDT and feature transform of both phases (./distanceTransform, one pass). A pixel p lies on the
 * medial axis between two facing walls when an 8-neighbour q of the same phase has its nearest wall on the opposite
 * side: unit vectors n̂ from the nearest other-phase pixel, n̂_p·n̂_q < −0.5 (more than 120° apart). This is the
 * feature-transform medial-axis criterion (cf. W. H. Hesselink & J. B. T. M. Roerdink 2008, "Euclidean skeletons of
 * digital image and volume data in linear time by the integer medial axis transform", IEEE TPAMI 30:2204–2217
 * [from memory]); corner and Y-junction branches, whose walls meet at ≤ 120°, are left out.
 * Width estimators:
 * - 'ray' (default, sub-pixel): along the local wall normal u (mean of the sign-aligned n̂ over 3×3) the walls are
 *   located where the bilinearly interpolated phase indicator crosses 0.5; w = distance between the two crossings.
 *   In every run of consecutive medial pixels along a row (ridges steeper than 45°) or a column (flatter ridges)
 *   only the pixel nearest the midline is kept, so each row or column crossing of a ridge gives exactly one width
 *   and the staircase phases of oblique walls are sampled evenly (keeping the local maxima of d instead biases
 *   oblique widths by up to −2.5 %). Straight stripes of period P give P/2 (tests:
 *   within 2 % for P ≥ 20 at any angle, worst seen 0.9 %; exact for axis-aligned walls, even widths included).
 * - 'centre': w = 2·d − 1 at the local maxima of d across the ridge, the raw METHODS §2.3 rule: the ridge is sampled
 *   on pixel centres, exact for odd widths, 1 px low for even ones (check #15: 9-px and 10-px stripes both give 9);
 *   both pixels of an even-width tie count.
 * Checked against: METHODS.md check #15; synthetic straight stripes at 0–90° and digital disks (tests).
 * Input: BinaryMask (1 = up, 0 = down), square pixels. Ignored pixels never carry a width, and a width is dropped
 * when a wall it uses is an ignored pixel or its ray leaves the image (truncated domain).
 * Output: widths in px, one per ridge pixel, up phase first; sampling density is one per row or column crossing of
 * the ridge, so ridges at 45° are weighted 1/√2 per unit length relative to axis-parallel ones.
 * Standard error: sd/√n over ridge pixels, which are correlated along the ridge, so it is a lower bound.
 * Order of work: after the feature transform, one sweep down the rows computes the unit vectors one row ahead of the
 * facing tests, selects the ridge pixels of the finished row and measures them at once, while the rows they read are
 * still in cache.
 * Buffers: the distance and feature transform are kept for the last image size; the unit vectors and facing
 * partners for the last RING_ROWS (8) rows only (the facing tests of row y read rows y and y + 1, the ridge selection
 * row y, and a ray measured right after its pixel was chosen reads the rows around it; an older neighbourhood is
 * recomputed from the feature transform, to the same float32 values); the ridge and width lists at their largest. So
 * the frames of a stack allocate only their results, and eight rows instead of four full arrays spare 16 bytes per
 * pixel of memory to fault in, fill and hold.
 */
import { featureTransformBothPhases } from './distanceTransform'
import type { BinaryMask } from './types'

export interface LocalWidthOptions {
  /** 'ray' (default, sub-pixel) or 'centre' (2·d − 1 on the pixel-centre ridge). */
  estimator?: 'ray' | 'centre'
  /**
   * Rows of unit vectors and partners kept (a power of two ≥ 2, default RING_ROWS). It changes only speed and
   * memory, never a result: the tests compare 2 with the default.
   */
  ringRows?: number
}

export interface LocalWidthResult {
  /** One width per ridge pixel, px: up-phase ridge pixels first, then down. */
  widthsPx: Float32Array
  meanPx: number | null
  medianPx: number | null
  /** sd/√n over ridge pixels (a lower bound: neighbouring ridge pixels are correlated); null for n < 2. */
  stdErrPx: number | null
  upMeanPx: number | null
  downMeanPx: number | null
  /** Pixel index of each width. */
  ridgeIndex?: Int32Array
  /** Phase (1 up, 0 down) of each width. */
  ridgePhase?: Uint8Array
}

/** Largest cosine between opposite wall normals that still counts as "facing walls" (angle > 120°). */
const FACING_COS = -0.5

/**
 * Step along a ray, px. The bilinear indicator is piecewise quadratic along the ray, so linear interpolation between
 * samples 0.25 px apart locates its 0.5 crossing to about 0.01 px.
 */
const RAY_STEP = 0.25

/**
 * Distance below d(p) at which a ray can first meet the 0.5 level: that level needs an other-phase pixel corner of
 * the bilinear cell, hence an other-phase centre within √2/2 of the ray point, and all of them are ≥ d(p) away.
 */
const RAY_HEAD_START = 0.75

/**
 * Facing-wall structure of both phases: EDT and feature transform of the image, and for the last ringRows rows
 * (slot (y mod ringRows)·width + x) the unit vectors from the nearest wall and each pixel's facing partner.
 */
interface FacingPairs {
  width: number
  /** ringRows − 1 (ringRows is a power of two). */
  ringMask: number
  distance: Float32Array
  nearest: Int32Array
  nx: Float32Array
  ny: Float32Array
  /** Most opposite cosine found so far per pixel; starts at FACING_COS and only decreases. */
  bestDot: Float32Array
  /** Pixel index of the neighbour whose wall vector is most opposite (cosine < FACING_COS), or −1: the medial-axis candidates. */
  partner: Int32Array
}

/**
 * Rows held by the ring arrays of FacingPairs. Two would do for the facing tests; with eight, a ray measured right
 * after its ridge pixel was chosen (a few rows back at most, nearly always) finds the unit vectors around it still
 * held, in cache, and only older ones are recomputed.
 */
const RING_ROWS = 8

/** Ring slot of row y in the ring arrays of FacingPairs (add x for the pixel). */
function slotOf(f: FacingPairs, y: number): number {
  return (y & f.ringMask) * f.width
}

/** Phase values, down and up: also the index of per-phase lists. */
const PHASES = [0, 1] as const

/** Growable list of ridge pixels with their facing partners, kept across frames. */
class RidgeList {
  items = new Int32Array(1024)
  partners = new Int32Array(1024)
  length = 0

  push(p: number, q: number): void {
    if (this.length === this.items.length) {
      const items = new Int32Array(2 * this.items.length)
      const partners = new Int32Array(2 * this.partners.length)
      items.set(this.items)
      partners.set(this.partners)
      this.items = items
      this.partners = partners
    }
    this.items[this.length] = p
    this.partners[this.length] = q
    this.length++
  }
}

/** Growable list of widths and their pixels, kept across frames. */
class WidthList {
  widths = new Float32Array(1024)
  index = new Int32Array(1024)
  length = 0

  push(p: number, width: number): void {
    if (this.length === this.widths.length) {
      const widths = new Float32Array(2 * this.widths.length)
      const index = new Int32Array(2 * this.index.length)
      widths.set(this.widths)
      index.set(this.index)
      this.widths = widths
      this.index = index
    }
    this.widths[this.length] = width
    this.index[this.length] = p
    this.length++
  }
}

/** Working arrays, kept for the last image size (frames of a stack share them; results are copied out). */
interface Scratch extends FacingPairs {
  /** Ridge pixels chosen for the 'ray' estimator, per phase (index = phase value), in the order their runs end. */
  chosen: [RidgeList, RidgeList]
  /** Widths per phase (index = phase value). */
  measured: [WidthList, WidthList]
}

let scratch: Scratch | null = null

function scratchFor(width: number, n: number, ringRows: number): Scratch {
  const ring = ringRows * width
  if (scratch === null || scratch.distance.length < n || scratch.nx.length < ring) {
    scratch = {
      width,
      ringMask: ringRows - 1,
      distance: new Float32Array(n),
      nearest: new Int32Array(n),
      nx: new Float32Array(ring),
      ny: new Float32Array(ring),
      bestDot: new Float32Array(ring),
      partner: new Int32Array(ring),
      chosen: [new RidgeList(), new RidgeList()],
      measured: [new WidthList(), new WidthList()],
    }
  }
  scratch.width = width
  scratch.ringMask = ringRows - 1
  return scratch
}

/** Unit vectors n̂ = (p − nearest wall pixel) / d(p) of row y into its ring slot; (0, 0) where the wall phase is absent. */
function unitVectorsRow(f: FacingPairs, y: number): void {
  const { width, distance, nearest, nx, ny } = f
  const row = y * width
  const slot = slotOf(f, y)
  for (let x = 0; x < width; x++) {
    const i = row + x
    const fi = nearest[i]
    if (fi < 0) {
      nx[slot + x] = 0
      ny[slot + x] = 0
      continue
    }
    const fy = (fi / width) | 0
    const d = distance[i]
    nx[slot + x] = (x - (fi - fy * width)) / d
    ny[slot + x] = (y - fy) / d
  }
}

/** The unit vector of pixel r at (x, y) as unitVectorsRow stores it (float32), in UNIT[0], UNIT[1]. */
const UNIT = new Float32Array(2)

function unitVectorAt(f: FacingPairs, r: number, x: number, y: number): void {
  const fi = f.nearest[r]
  if (fi < 0) {
    UNIT[0] = 0
    UNIT[1] = 0
    return
  }
  const fy = (fi / f.width) | 0
  const d = f.distance[r]
  UNIT[0] = (x - (fi - fy * f.width)) / d
  UNIT[1] = (y - fy) / d
}

/**
 * Facing test of one neighbour pair of the same phase (pixels p and q, ring slots rp and rq); each pair is visited
 * once and may update both pixels.
 */
function comparePair(
  p: number,
  q: number,
  rp: number,
  rq: number,
  dot: number,
  data: Uint8Array,
  bestDot: Float32Array,
  partner: Int32Array,
): void {
  if (data[q] !== data[p]) return
  if (dot < bestDot[rp]) {
    bestDot[rp] = dot
    partner[rp] = q
  }
  if (dot < bestDot[rq]) {
    bestDot[rq] = dot
    partner[rq] = p
  }
}

/**
 * Facing tests of row y with the forward half of each pixel's 8-neighbourhood: right, and the three pixels of the
 * next row. Every best is already ≤ FACING_COS, so a pair with a larger cosine (most pairs) cannot change anything
 * and skips the phase test and both updates. Inside the row the unit vectors of the right and lower neighbours are
 * carried from pixel to pixel, so each is loaded once.
 */
function facingRow(f: FacingPairs, data: Uint8Array, y: number, hasNextRow: boolean): void {
  const { width, nx, ny, bestDot, partner } = f
  if (!hasNextRow || width < 3) {
    for (let x = 0; x < width; x++) facingPixel(f, data, y, x, hasNextRow)
    return
  }
  const row = y * width
  const slot = slotOf(f, y)
  const next = slotOf(f, y + 1)
  facingPixel(f, data, y, 0, true)
  let px = nx[slot + 1]
  let py = ny[slot + 1]
  let belowLeftX = nx[next]
  let belowLeftY = ny[next]
  let belowX = nx[next + 1]
  let belowY = ny[next + 1]
  for (let x = 1; x < width - 1; x++) {
    const p = row + x
    const below = p + width
    const rp = slot + x
    const rb = next + x
    const rightX = nx[rp + 1]
    const rightY = ny[rp + 1]
    const belowRightX = nx[rb + 1]
    const belowRightY = ny[rb + 1]
    let dot = px * rightX + py * rightY
    if (dot < FACING_COS) comparePair(p, p + 1, rp, rp + 1, dot, data, bestDot, partner)
    dot = px * belowLeftX + py * belowLeftY
    if (dot < FACING_COS) comparePair(p, below - 1, rp, rb - 1, dot, data, bestDot, partner)
    dot = px * belowX + py * belowY
    if (dot < FACING_COS) comparePair(p, below, rp, rb, dot, data, bestDot, partner)
    dot = px * belowRightX + py * belowRightY
    if (dot < FACING_COS) comparePair(p, below + 1, rp, rb + 1, dot, data, bestDot, partner)
    px = rightX
    py = rightY
    belowLeftX = belowX
    belowLeftY = belowY
    belowX = belowRightX
    belowY = belowRightY
  }
  facingPixel(f, data, y, width - 1, true)
}

/** Facing tests of pixel (x, y) with its forward neighbours, for the ends of a row and the last row. */
function facingPixel(f: FacingPairs, data: Uint8Array, y: number, x: number, hasNextRow: boolean): void {
  const { width, nx, ny, bestDot, partner } = f
  const p = y * width + x
  const rp = slotOf(f, y) + x
  const px = nx[rp]
  const py = ny[rp]
  const hasRight = x + 1 < width
  if (hasRight) {
    const dot = px * nx[rp + 1] + py * ny[rp + 1]
    if (dot < FACING_COS) comparePair(p, p + 1, rp, rp + 1, dot, data, bestDot, partner)
  }
  if (!hasNextRow) return
  const below = p + width
  const rb = slotOf(f, y + 1) + x
  if (x > 0) {
    const dot = px * nx[rb - 1] + py * ny[rb - 1]
    if (dot < FACING_COS) comparePair(p, below - 1, rp, rb - 1, dot, data, bestDot, partner)
  }
  const dot = px * nx[rb] + py * ny[rb]
  if (dot < FACING_COS) comparePair(p, below, rp, rb, dot, data, bestDot, partner)
  if (hasRight) {
    const dot = px * nx[rb + 1] + py * ny[rb + 1]
    if (dot < FACING_COS) comparePair(p, below + 1, rp, rb + 1, dot, data, bestDot, partner)
  }
}

/** Starts the facing structure: the feature transform of both phases, no partners yet, the unit vectors of row 0. */
function startFacingPairs(mask: BinaryMask, buffers: Scratch): void {
  const { width, height, data } = mask
  featureTransformBothPhases(data, width, height, { out: buffers.distance, nearestOut: buffers.nearest })
  buffers.bestDot.fill(FACING_COS, 0, (buffers.ringMask + 1) * width)
  buffers.partner.fill(-1, 0, (buffers.ringMask + 1) * width)
  if (height > 0) unitVectorsRow(buffers, 0)
}

/**
 * Facing tests of row y, after the unit vectors of row y + 1 they need (into the slot of row y + 1 − ringRows, whose
 * partners start afresh): the partners of row y are then final.
 */
function facingPairsRow(mask: BinaryMask, f: FacingPairs, y: number): void {
  const { width, height, data } = mask
  const hasNextRow = y + 1 < height
  if (hasNextRow) {
    unitVectorsRow(f, y + 1)
    const next = slotOf(f, y + 1)
    f.bestDot.fill(FACING_COS, next, next + width)
    f.partner.fill(-1, next, next + width)
  }
  facingRow(f, data, y, hasNextRow)
}

/** True when pixel p, its partner q or either of their nearest walls is ignored. */
function touchesIgnored(ignore: Uint8Array | undefined, nearest: Int32Array, p: number, q: number): boolean {
  if (ignore === undefined) return false
  return ignore[p] !== 0 || ignore[q] !== 0 || ignore[nearest[p]] !== 0 || ignore[nearest[q]] !== 0
}

/**
 * 'centre' estimator on row y (partners final): w = 2·d − 1 at medial pixels that are not closer to their wall than
 * their partner, into out[1] for pixels of value 1 and out[0] for value 0.
 */
function centreWidthsRow(mask: BinaryMask, f: FacingPairs, y: number, out: [WidthList, WidthList]): void {
  const { width, data, ignore } = mask
  const row = y * width
  const slot = slotOf(f, y)
  for (let x = 0; x < width; x++) {
    const p = row + x
    const q = f.partner[slot + x]
    const value = data[p]
    if (q < 0 || (value !== 0 && value !== 1) || f.distance[p] < f.distance[q] || touchesIgnored(ignore, f.nearest, p, q)) continue
    out[value].push(p, 2 * f.distance[p] - 1)
  }
}

/** Open runs of the ridge selection carried from row to row: the best pixel (−1: none) of each column's run. */
interface ColumnRuns {
  best: Int32Array
  offset: Float64Array
  /** Facing partner of each best pixel. */
  partner: Int32Array
}

/**
 * Medial pixels chosen for the 'ray' estimator, one row at a time: in every run of consecutive candidates along a
 * row (wall normal closer to x) or a column (closer to y), the pixel nearest the midline. The midline offset is
 * estimated from the EDT, ½·(d(q) + (q − p)·n̂_p − d(p)); its exact value only decides which pixel of the run is used,
 * not how many. Both phases in one sweep: a pixel of one phase ends the other phase's runs, so at most one run (of
 * either phase) is open along the row and in each column, and its phase is that of its best pixel. A run's pixel
 * joins `chosen[phase]` when the run ends.
 */
function selectRidgeRow(
  mask: BinaryMask,
  f: FacingPairs,
  y: number,
  columns: ColumnRuns,
  chosen: [RidgeList, RidgeList],
): void {
  const { width, ignore, data } = mask
  const { distance, nearest, nx, ny, partner } = f
  const colBest = columns.best
  const colBestOffset = columns.offset
  const colBestPartner = columns.partner
  const row = y * width
  const slot = slotOf(f, y)
  let rowBest = -1
  let rowBestOffset = 0
  let rowBestPartner = -1
  for (let x = 0; x < width; x++) {
    const p = row + x
    const q = partner[slot + x]
    if (q < 0) {
      // Not a candidate (most pixels): both open runs end here.
      if (rowBest >= 0) {
        endRun(chosen, data, rowBest, rowBestPartner)
        rowBest = -1
      }
      if (colBest[x] >= 0) {
        endRun(chosen, data, colBest[x], colBestPartner[x])
        colBest[x] = -1
      }
      continue
    }
    const value = phaseOf(data, p)
    let axis = 0
    let offset = 0
    if (!touchesIgnored(ignore, nearest, p, q)) {
      const qy = (q / width) | 0
      const qx = q - qy * width
      const npx = nx[slot + x]
      const npy = ny[slot + x]
      offset = Math.abs(0.5 * (distance[q] + (qx - x) * npx + (qy - y) * npy - distance[p]))
      axis = Math.abs(npx) >= Math.abs(npy) ? 1 : 2
    }
    if (rowBest >= 0 && (axis !== 1 || phaseOf(data, rowBest) !== value)) {
      endRun(chosen, data, rowBest, rowBestPartner)
      rowBest = -1
    }
    if (axis === 1 && (rowBest < 0 || offset < rowBestOffset)) {
      rowBest = p
      rowBestOffset = offset
      rowBestPartner = q
    }
    const c = colBest[x]
    if (c >= 0 && (axis !== 2 || phaseOf(data, c) !== value)) {
      endRun(chosen, data, c, colBestPartner[x])
      colBest[x] = -1
    }
    if (axis === 2 && (colBest[x] < 0 || offset < colBestOffset[x])) {
      colBest[x] = p
      colBestOffset[x] = offset
      colBestPartner[x] = q
    }
  }
  if (rowBest >= 0) endRun(chosen, data, rowBest, rowBestPartner)
}

/** Phase of pixel p, 1 (up, any nonzero byte) or 0, without a branch: the sign bit of −byte. */
function phaseOf(data: Uint8Array, p: number): number {
  return -data[p] >>> 31
}

/** A run ends: its best pixel (with its partner) joins the chosen pixels of its phase. */
function endRun(chosen: [RidgeList, RidgeList], data: Uint8Array, best: number, partner: number): void {
  chosen[phaseOf(data, best)].push(best, partner)
}

/** Ends the column runs still open after the last row. */
function endColumnRuns(data: Uint8Array, columns: ColumnRuns, chosen: [RidgeList, RidgeList]): void {
  for (let x = 0; x < columns.best.length; x++) {
    if (columns.best[x] >= 0) endRun(chosen, data, columns.best[x], columns.partner[x])
  }
}

/**
 * Distance from pixel centre (x, y) along the unit direction (ux, uy) to the first point where the bilinear
 * indicator (pixel == value) drops to 0.5 (the sub-pixel wall), or −1 when the ray leaves the image, meets an
 * ignored pixel or passes `limit` first. The march starts at `start`, before which no crossing is possible.
 */
function crossingDistance(
  mask: BinaryMask,
  value: number,
  x: number,
  y: number,
  ux: number,
  uy: number,
  start: number,
  limit: number,
): number {
  const { width, height, data, ignore } = mask
  // A ray that ends more than a pixel inside the image (|ux|, |uy| ≤ 1) needs no bounds or edge-cell checks.
  const reach = limit + 1
  if (ignore === undefined && x > reach && y > reach && x + reach < width - 1 && y + reach < height - 1) {
    return interiorCrossing(data, width, value, x, y, ux, uy, start, limit)
  }
  const maxX = width - 1
  const maxY = height - 1
  const x0 = x + start * ux
  const y0 = y + start * uy
  if (x0 < 0 || y0 < 0 || x0 > maxX || y0 > maxY) return -1
  const cellMaxX = Math.max(0, width - 2)
  const cellMaxY = Math.max(0, height - 2)
  let previous = 1
  if (start > 0) {
    const cx = Math.min(Math.floor(x0), cellMaxX)
    const cy = Math.min(Math.floor(y0), cellMaxY)
    previous = bilinearAt(data, width, value, cx, cy, Math.min(cx + 1, maxX), Math.min(cy + 1, maxY), x0 - cx, y0 - cy)
  }
  // Rounding can put the start exactly on the level; the crossing is then the start itself.
  if (previous <= 0.5) return start
  for (let t = start + RAY_STEP; t <= limit; t += RAY_STEP) {
    const sx = x + t * ux
    const sy = y + t * uy
    if (sx < 0 || sy < 0 || sx > maxX || sy > maxY) return -1
    if (ignore !== undefined && ignore[Math.round(sy) * width + Math.round(sx)] !== 0) return -1
    const fx0 = Math.floor(sx)
    const fy0 = Math.floor(sy)
    const cx = fx0 < cellMaxX ? fx0 : cellMaxX
    const cy = fy0 < cellMaxY ? fy0 : cellMaxY
    const cx1 = cx + 1 < maxX ? cx + 1 : maxX
    const cy1 = cy + 1 < maxY ? cy + 1 : maxY
    const current = bilinearAt(data, width, value, cx, cy, cx1, cy1, sx - cx, sy - cy)
    if (current <= 0.5) return t - RAY_STEP + (RAY_STEP * (previous - 0.5)) / (previous - current)
    previous = current
  }
  return -1
}

/**
 * `crossingDistance` for a ray known to stay inside the image, off its last row and column: every cell is whole and
 * its coordinates are positive, so truncation is the floor. A step whose four cell corners all equal `value`
 * interpolates to about 1 and cannot cross 0.5; its value is needed only as the `previous` of a crossing at the next
 * step, so it is interpolated then, from the remembered sample point.
 */
function interiorCrossing(
  data: Uint8Array,
  width: number,
  value: number,
  x: number,
  y: number,
  ux: number,
  uy: number,
  start: number,
  limit: number,
): number {
  let previous = 1
  if (start > 0) {
    const x0 = x + start * ux
    const y0 = y + start * uy
    const cx = x0 | 0
    const cy = y0 | 0
    previous = bilinearAt(data, width, value, cx, cy, cx + 1, cy + 1, x0 - cx, y0 - cy)
  }
  if (previous <= 0.5) return start
  let previousKnown = true
  let previousX = 0
  let previousY = 0
  for (let t = start + RAY_STEP; t <= limit; t += RAY_STEP) {
    const sx = x + t * ux
    const sy = y + t * uy
    const cx = sx | 0
    const cy = sy | 0
    const top = cy * width + cx
    const bottom = top + width
    const b00 = data[top] ^ value
    const b01 = data[top + 1] ^ value
    const b10 = data[bottom] ^ value
    const b11 = data[bottom + 1] ^ value
    if ((b00 | b01 | b10 | b11) === 0) {
      previousKnown = false
      previousX = sx
      previousY = sy
      continue
    }
    const current = bilinear(indicator(b00), indicator(b01), indicator(b10), indicator(b11), sx - cx, sy - cy)
    if (current <= 0.5) {
      if (!previousKnown) {
        const px = previousX | 0
        const py = previousY | 0
        previous = bilinearAt(data, width, value, px, py, px + 1, py + 1, previousX - px, previousY - py)
      }
      return t - RAY_STEP + (RAY_STEP * (previous - 0.5)) / (previous - current)
    }
    previous = current
    previousKnown = true
  }
  return -1
}

/** Indicator from byte ^ value (0…255): 1 where the byte equals value, the sign bit of (byte ^ value) − 1. */
function indicator(difference: number): number {
  return (difference - 1) >>> 31
}

/** Bilinear interpolation of the corner indicators i00 (top left), i01, i10, i11 at fractions (fx, fy). */
function bilinear(i00: number, i01: number, i10: number, i11: number, fx: number, fy: number): number {
  return (i00 * (1 - fx) + i01 * fx) * (1 - fy) + (i10 * (1 - fx) + i11 * fx) * fy
}

/** Bilinear interpolation of the indicator (pixel == value) in the cell (cx…cx1, cy…cy1) at fractions (fx, fy). */
function bilinearAt(
  data: Uint8Array,
  width: number,
  value: number,
  cx: number,
  cy: number,
  cx1: number,
  cy1: number,
  fx: number,
  fy: number,
): number {
  const top = cy * width
  const bottom = cy1 * width
  return bilinear(
    indicator(data[top + cx] ^ value),
    indicator(data[top + cx1] ^ value),
    indicator(data[bottom + cx] ^ value),
    indicator(data[bottom + cx1] ^ value),
    fx,
    fy,
  )
}

/**
 * 'ray' estimator at a chosen pixel p of phase `value` with facing partner q, or −1 when a ray is dropped. Wall
 * normal: mean of the 3×3 same-phase unit vectors, each flipped onto n̂_p's side of the ridge (one vector is
 * quantised to the direction of a single pixel; the mean roughly halves the angular error, and a residual error δ
 * only lengthens the chord by 1/cos δ).
 */
function rayWidth(mask: BinaryMask, value: 0 | 1, f: FacingPairs, p: number, q: number, heldFrom: number): number {
  const { width, height, data } = mask
  const { distance, nx, ny } = f
  const y = (p / width) | 0
  const x = p - y * width
  const yFrom = y > 0 ? y - 1 : 0
  // The ring holds rows heldFrom … (the current row + 1 ≥ y + 1); older neighbourhoods are recomputed.
  const held = yFrom >= heldFrom
  let npx: number
  let npy: number
  if (held) {
    npx = nx[slotOf(f, y) + x]
    npy = ny[slotOf(f, y) + x]
  } else {
    unitVectorAt(f, p, x, y)
    npx = UNIT[0]
    npy = UNIT[1]
  }
  let ux = 0
  let uy = 0
  const xFrom = x > 0 ? x - 1 : 0
  const xTo = x < width - 1 ? x + 1 : width - 1
  const yTo = y < height - 1 ? y + 1 : height - 1
  for (let yy = yFrom; yy <= yTo; yy++) {
    const row = yy * width
    const slot = slotOf(f, yy)
    for (let xx = xFrom; xx <= xTo; xx++) {
      const r = row + xx
      if (data[r] !== value) continue
      let rx: number
      let ry: number
      if (held) {
        rx = nx[slot + xx]
        ry = ny[slot + xx]
      } else {
        unitVectorAt(f, r, xx, yy)
        rx = UNIT[0]
        ry = UNIT[1]
      }
      // The sign of n̂_r·n̂_p (+1 for ±0) as a quotient, not a branch (which mispredicts here). Adding 1e-300 only
      // turns ±0 positive: a nonzero dot of two of these float32 unit vectors is above 1e-25.
      const dot = rx * npx + ry * npy + 1e-300
      const sign = dot / Math.abs(dot)
      ux += sign * rx
      uy += sign * ry
    }
  }
  const norm = hypot(ux, uy)
  ux /= norm
  uy /= norm
  const dp = distance[p]
  const start = Math.max(0, dp - RAY_HEAD_START)
  const limit = 2 * (dp + distance[q]) + 4
  // u points away from p's own wall, towards the facing one; every wall point is at least d(p) − √2/2 away.
  const toFacingWall = crossingDistance(mask, value, x, y, ux, uy, start, limit)
  if (toFacingWall < 0) return -1
  const toOwnWall = crossingDistance(mask, value, x, y, -ux, -uy, start, limit)
  if (toOwnWall < 0) return -1
  return toFacingWall + toOwnWall
}

/**
 * √(a² + b²) computed as V8's Math.hypot does for two finite arguments (both scaled by the larger magnitude, squares
 * summed in argument order), so the widths stay bit-identical; inline, it avoids the cost of the builtin call.
 */
function hypot(a: number, b: number): number {
  const absA = Math.abs(a)
  const absB = Math.abs(b)
  const max = absB > absA ? absB : absA
  if (max === 0) return 0
  const scaledA = absA / max
  const scaledB = absB / max
  return Math.sqrt(scaledA * scaledA + scaledB * scaledB) * max
}

/**
 * Measures the pixels chosen since the last call (`measuredUpTo` per phase) with the 'ray' estimator, after the
 * facing tests of row y (the ring then holds the unit vectors of rows y + 2 − ringRows … y + 1).
 */
function measureChosen(
  mask: BinaryMask,
  f: FacingPairs,
  y: number,
  chosen: [RidgeList, RidgeList],
  measuredUpTo: [number, number],
  out: [WidthList, WidthList],
): void {
  const heldFrom = y + 1 - f.ringMask
  for (const value of PHASES) {
    const { items, partners, length } = chosen[value]
    for (let k = measuredUpTo[value]; k < length; k++) {
      const w = rayWidth(mask, value, f, items[k], partners[k], heldFrom)
      if (w >= 0) out[value].push(items[k], w)
    }
    measuredUpTo[value] = length
  }
}

function mean(values: Float32Array, from: number, to: number): number | null {
  if (to <= from) return null
  let s = 0
  for (let i = from; i < to; i++) s += values[i]
  return s / (to - from)
}

/** Median by selection (Hoare's quickselect, C. A. R. Hoare 1961, Algorithm 65 "Find", CACM 4:321 [from memory]). */
function median(values: Float32Array): number | null {
  const n = values.length
  if (n === 0) return null
  const work = new Float64Array(values)
  const m = n >> 1
  const upper = selectKth(work, m)
  if (n % 2 === 1) return upper
  // After selecting the m-th value, everything left of m is ≤ it: the (m−1)-th is their maximum.
  let lower = -Infinity
  for (let i = 0; i < m; i++) if (work[i] > lower) lower = work[i]
  return 0.5 * (lower + upper)
}

/** The k-th smallest value (0-based); rearranges `a` so that a[i] ≤ a[k] for i < k and a[i] ≥ a[k] for i > k. */
function selectKth(a: Float64Array, k: number): number {
  let lo = 0
  let hi = a.length - 1
  while (hi > lo) {
    // Median of three as pivot keeps sorted and reversed input linear.
    const mid = (lo + hi) >> 1
    const x = a[lo]
    const y = a[mid]
    const z = a[hi]
    const pivot = x < y ? (y < z ? y : x < z ? z : x) : x < z ? x : y < z ? z : y
    let i = lo
    let j = hi
    while (i <= j) {
      while (a[i] < pivot) i++
      while (a[j] > pivot) j--
      if (i <= j) {
        const t = a[i]
        a[i] = a[j]
        a[j] = t
        i++
        j--
      }
    }
    if (k <= j) hi = j
    else if (k >= i) lo = i
    else return a[k]
  }
  return a[k]
}

/**
 * Local widths of up and down domains along their medial axes (METHODS §2.3).
 * @returns empty widths and null statistics when the mask is empty, all one phase, or has no facing walls.
 * @example localDomainWidths(stripesOfPeriod20).meanPx // 10
 */
export function localDomainWidths(mask: BinaryMask, options: LocalWidthOptions = {}): LocalWidthResult {
  const { width, height } = mask
  // Degenerate input needs no branch: with one phase absent the feature transform has no nearest wall (−1), so no
  // pixel gets a facing partner and the statistics below come out empty/null; an empty mask has no pixel at all.
  const ringRows = options.ringRows ?? RING_ROWS
  if (!(ringRows >= 2 && (ringRows & (ringRows - 1)) === 0)) throw new RangeError(`ringRows must be a power of two ≥ 2, got ${ringRows}`)
  const f = scratchFor(width, width * height, ringRows)
  const [down, up] = f.measured
  down.length = 0
  up.length = 0
  startFacingPairs(mask, f)
  if (options.estimator === 'centre') {
    for (let y = 0; y < height; y++) {
      facingPairsRow(mask, f, y)
      centreWidthsRow(mask, f, y, f.measured)
    }
  } else {
    f.chosen[0].length = 0
    f.chosen[1].length = 0
    const measuredUpTo: [number, number] = [0, 0]
    const columns: ColumnRuns = { best: new Int32Array(width).fill(-1), offset: new Float64Array(width), partner: new Int32Array(width) }
    for (let y = 0; y < height; y++) {
      facingPairsRow(mask, f, y)
      selectRidgeRow(mask, f, y, columns, f.chosen)
      measureChosen(mask, f, y, f.chosen, measuredUpTo, f.measured)
    }
    endColumnRuns(mask.data, columns, f.chosen)
    measureChosen(mask, f, height - 1, f.chosen, measuredUpTo, f.measured)
  }
  const upCount = up.length
  const total = upCount + down.length
  const widthsPx = new Float32Array(total)
  widthsPx.set(up.widths.subarray(0, upCount))
  widthsPx.set(down.widths.subarray(0, down.length), upCount)
  const ridgeIndex = new Int32Array(total)
  ridgeIndex.set(up.index.subarray(0, upCount))
  ridgeIndex.set(down.index.subarray(0, down.length), upCount)
  const ridgePhase = new Uint8Array(total)
  ridgePhase.fill(1, 0, upCount)
  const meanPx = mean(widthsPx, 0, total)
  let stdErrPx: number | null = null
  if (meanPx !== null && total >= 2) {
    let ss = 0
    for (let i = 0; i < total; i++) ss += (widthsPx[i] - meanPx) ** 2
    stdErrPx = Math.sqrt(ss / (total - 1) / total)
  }
  return {
    widthsPx,
    meanPx,
    medianPx: median(widthsPx),
    stdErrPx,
    upMeanPx: mean(widthsPx, 0, upCount),
    downMeanPx: mean(widthsPx, upCount, total),
    ridgeIndex,
    ridgePhase,
  }
}
