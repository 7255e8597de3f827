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
 * Buffers: per-pixel working arrays are kept for the last image size, so the frames of a stack allocate only their
 * results.
 */
import { featureTransformBothPhases } from './distanceTransform'
import type { BinaryMask } from './types'

export interface LocalWidthOptions {
  /** 'ray' (default, sub-pixel) or 'centre' (2·d − 1 on the pixel-centre ridge). */
  estimator?: 'ray' | 'centre'
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

/** What a ray needs besides its direction. */
interface RayContext {
  data: Uint8Array
  ignore: Uint8Array | undefined
  width: number
  height: number
  value: number
}

/** Bilinear interpolation of the indicator (pixel == value) at a point inside the image. */
function indicatorAt(c: RayContext, sx: number, sy: number): number {
  const { data, width, height, value } = c
  const x0 = Math.min(Math.floor(sx), Math.max(0, width - 2))
  const y0 = Math.min(Math.floor(sy), Math.max(0, height - 2))
  const x1 = Math.min(x0 + 1, width - 1)
  const y1 = Math.min(y0 + 1, height - 1)
  const fx = sx - x0
  const fy = sy - y0
  const v00 = data[y0 * width + x0] === value ? 1 : 0
  const v01 = data[y0 * width + x1] === value ? 1 : 0
  const v10 = data[y1 * width + x0] === value ? 1 : 0
  const v11 = data[y1 * width + x1] === value ? 1 : 0
  return (v00 * (1 - fx) + v01 * fx) * (1 - fy) + (v10 * (1 - fx) + v11 * fx) * fy
}

/**
 * Distance from pixel centre (x, y) along the unit direction (ux, uy) to the first point where the bilinear
 * indicator drops to 0.5 (the sub-pixel wall), or −1 when the ray leaves the image, meets an ignored pixel or passes
 * `limit` first. The march starts at `start`, before which no crossing is possible.
 */
function crossingDistance(
  c: RayContext,
  x: number,
  y: number,
  ux: number,
  uy: number,
  start: number,
  limit: number,
): number {
  const { width, height, ignore, data, value } = c
  const maxX = width - 1
  const maxY = height - 1
  const x0 = x + start * ux
  const y0 = y + start * uy
  if (x0 < 0 || y0 < 0 || x0 > maxX || y0 > maxY) return -1
  let previous = start > 0 ? indicatorAt(c, x0, y0) : 1
  // Rounding can put the start exactly on the level; the crossing is then the start itself.
  if (previous <= 0.5) return start
  // indicatorAt inlined (same arithmetic): the march is the hot loop of the width measurement.
  const cellMaxX = Math.max(0, width - 2)
  const cellMaxY = Math.max(0, height - 2)
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
    const fx = sx - cx
    const fy = sy - cy
    const top = cy * width
    const bottom = cy1 * width
    const v00 = data[top + cx] === value ? 1 : 0
    const v01 = data[top + cx1] === value ? 1 : 0
    const v10 = data[bottom + cx] === value ? 1 : 0
    const v11 = data[bottom + cx1] === value ? 1 : 0
    const current = (v00 * (1 - fx) + v01 * fx) * (1 - fy) + (v10 * (1 - fx) + v11 * fx) * fy
    if (current <= 0.5) return t - RAY_STEP + (RAY_STEP * (previous - 0.5)) / (previous - current)
    previous = current
  }
  return -1
}

/** Facing-wall structure of one phase: EDT, unit vectors from the nearest wall, and each pixel's facing partner. */
interface FacingPairs {
  distance: Float32Array
  nearest: Int32Array
  nx: Float32Array
  ny: Float32Array
  /** Neighbour whose wall vector is most opposite (cosine < FACING_COS), or −1: the medial-axis candidates. */
  partner: Int32Array
}

/** Facing test of one neighbour pair of the same phase; each pair is visited once and may update both pixels. */
function comparePair(
  p: number,
  q: number,
  data: Uint8Array,
  nx: Float32Array,
  ny: Float32Array,
  bestDot: Float32Array,
  partner: Int32Array,
): void {
  if (data[q] !== data[p]) return
  const dot = nx[p] * nx[q] + ny[p] * ny[q]
  if (dot < bestDot[p]) {
    bestDot[p] = dot
    partner[p] = q
  }
  if (dot < bestDot[q]) {
    bestDot[q] = dot
    partner[q] = p
  }
}

/** Per-pixel working arrays, kept for the last image size (frames of a stack share them; results are copied out). */
interface Scratch {
  distance: Float32Array
  nearest: Int32Array
  nx: Float32Array
  ny: Float32Array
  bestDot: Float32Array
  partner: Int32Array
  widths: Float32Array
  index: Int32Array
}

let scratch: Scratch | null = null

function scratchFor(n: number): Scratch {
  if (scratch === null || scratch.distance.length < n) {
    scratch = {
      distance: new Float32Array(n),
      nearest: new Int32Array(n),
      nx: new Float32Array(n),
      ny: new Float32Array(n),
      bestDot: new Float32Array(n),
      partner: new Int32Array(n),
      widths: new Float32Array(n),
      index: new Int32Array(n),
    }
  }
  return scratch
}

/**
 * Facing-wall structure of both phases at once (a pixel's wall is the other phase, its partner is of its own phase):
 * one feature transform, one pass for the unit vectors and one over the forward half of the 8-neighbourhood.
 */
function facingPairs(mask: BinaryMask, buffers: Scratch): FacingPairs {
  const { width, height, data } = mask
  const n = width * height
  const { distance, nearest } = featureTransformBothPhases(data, width, height, {
    out: buffers.distance,
    nearestOut: buffers.nearest,
  })
  const { nx, ny, bestDot, partner } = buffers
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x
      const f = nearest[i]
      if (f < 0) {
        nx[i] = 0
        ny[i] = 0
        continue
      }
      const fy = (f / width) | 0
      const d = distance[i]
      nx[i] = (x - (f - fy * width)) / d
      ny[i] = (y - fy) / d
    }
  }
  bestDot.fill(FACING_COS, 0, n)
  partner.fill(-1, 0, n)
  // Forward half of the 8-neighbourhood: right, and the three pixels of the next row.
  for (let y = 0; y < height; y++) {
    const lastRow = y === height - 1
    for (let x = 0; x < width; x++) {
      const p = y * width + x
      if (x + 1 < width) comparePair(p, p + 1, data, nx, ny, bestDot, partner)
      if (lastRow) continue
      const below = p + width
      if (x > 0) comparePair(p, below - 1, data, nx, ny, bestDot, partner)
      comparePair(p, below, data, nx, ny, bestDot, partner)
      if (x + 1 < width) comparePair(p, below + 1, data, nx, ny, bestDot, partner)
    }
  }
  return { distance, nearest, nx, ny, partner }
}

/** True when pixel p, its partner or either of their nearest walls is ignored. */
function touchesIgnored(ignore: Uint8Array | undefined, f: FacingPairs, p: number): boolean {
  if (ignore === undefined) return false
  const q = f.partner[p]
  return ignore[p] !== 0 || ignore[q] !== 0 || ignore[f.nearest[p]] !== 0 || ignore[f.nearest[q]] !== 0
}

/** Growable output of ridge widths shared by both phases. */
interface RidgeOutput {
  widths: Float32Array
  index: Int32Array
  count: number
}

/** 'centre' estimator: w = 2·d − 1 at medial pixels that are not closer to their wall than their partner. */
function centreWidths(mask: BinaryMask, value: 0 | 1, f: FacingPairs, out: RidgeOutput): void {
  const n = mask.width * mask.height
  for (let p = 0; p < n; p++) {
    const q = f.partner[p]
    if (q < 0 || mask.data[p] !== value || f.distance[p] < f.distance[q] || touchesIgnored(mask.ignore, f, p)) continue
    out.widths[out.count] = 2 * f.distance[p] - 1
    out.index[out.count] = p
    out.count++
  }
}

/**
 * Medial pixels chosen for the 'ray' estimator: in every run of consecutive candidates along a row (wall normal
 * closer to x) or a column (closer to y), the pixel nearest the midline. The midline offset is estimated from the
 * EDT, ½·(d(q) + (q − p)·n̂_p − d(p)); its exact value only decides which pixel of the run is used, not how many.
 * Both phases in one sweep: a pixel of one phase ends the other phase's runs. Returns [up pixels, down pixels].
 */
function selectRidge(mask: BinaryMask, f: FacingPairs): [Int32Array, Int32Array] {
  const { width, height, ignore, data } = mask
  const { distance, nx, ny, partner } = f
  const chosen: [number[], number[]] = [[], []]
  // Per phase (index = phase value): best pixel of the open row run and of each column's open run.
  const rowBest = [-1, -1]
  const rowBestOffset = [0, 0]
  const colBest = [new Int32Array(width).fill(-1), new Int32Array(width).fill(-1)]
  const colBestOffset = [new Float64Array(width), new Float64Array(width)]
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) {
      const p = row + x
      const value = data[p] !== 0 ? 1 : 0
      const q = partner[p]
      let axis = 0
      let offset = 0
      if (q >= 0 && !touchesIgnored(ignore, f, p)) {
        const qy = (q / width) | 0
        const qx = q - qy * width
        offset = Math.abs(0.5 * (distance[q] + (qx - x) * nx[p] + (qy - y) * ny[p] - distance[p]))
        axis = Math.abs(nx[p]) >= Math.abs(ny[p]) ? 1 : 2
      }
      const other = 1 - value
      // The other phase has no candidate here: its open runs end.
      if (rowBest[other] >= 0) {
        chosen[other].push(rowBest[other])
        rowBest[other] = -1
      }
      const otherCol = colBest[other]
      if (otherCol[x] >= 0) {
        chosen[other].push(otherCol[x])
        otherCol[x] = -1
      }
      if (axis === 1) {
        if (rowBest[value] < 0 || offset < rowBestOffset[value]) {
          rowBest[value] = p
          rowBestOffset[value] = offset
        }
      } else if (rowBest[value] >= 0) {
        chosen[value].push(rowBest[value])
        rowBest[value] = -1
      }
      const col = colBest[value]
      const colOffset = colBestOffset[value]
      if (axis === 2) {
        if (col[x] < 0 || offset < colOffset[x]) {
          col[x] = p
          colOffset[x] = offset
        }
      } else if (col[x] >= 0) {
        chosen[value].push(col[x])
        col[x] = -1
      }
    }
    for (const value of [0, 1]) {
      if (rowBest[value] >= 0) chosen[value].push(rowBest[value])
      rowBest[value] = -1
    }
  }
  for (const value of [0, 1]) for (let x = 0; x < width; x++) if (colBest[value][x] >= 0) chosen[value].push(colBest[value][x])
  return [Int32Array.from(chosen[1]), Int32Array.from(chosen[0])]
}

/**
 * 'ray' estimator at the chosen pixels. Wall normal: mean of the 3×3 same-phase unit vectors, each flipped onto
 * n̂_p's side of the ridge (one vector is quantised to the direction of a single pixel; the mean roughly halves the
 * angular error, and a residual error δ only lengthens the chord by 1/cos δ).
 */
function rayWidths(mask: BinaryMask, value: 0 | 1, f: FacingPairs, chosen: Int32Array, out: RidgeOutput): void {
  const { width, height, data, ignore } = mask
  const { distance, nx, ny, partner } = f
  const ray: RayContext = { data, ignore, width, height, value }
  for (const p of chosen) {
    const y = (p / width) | 0
    const x = p - y * width
    let ux = 0
    let uy = 0
    for (let yy = Math.max(0, y - 1); yy <= Math.min(height - 1, y + 1); yy++) {
      for (let xx = Math.max(0, x - 1); xx <= Math.min(width - 1, x + 1); xx++) {
        const r = yy * width + xx
        if (data[r] !== value) continue
        const sign = nx[r] * nx[p] + ny[r] * ny[p] >= 0 ? 1 : -1
        ux += sign * nx[r]
        uy += sign * ny[r]
      }
    }
    const norm = Math.hypot(ux, uy)
    ux /= norm
    uy /= norm
    const dp = distance[p]
    const start = Math.max(0, dp - RAY_HEAD_START)
    const limit = 2 * (dp + distance[partner[p]]) + 4
    // u points away from p's own wall, towards the facing one; every wall point is at least d(p) − √2/2 away.
    const toFacingWall = crossingDistance(ray, x, y, ux, uy, start, limit)
    if (toFacingWall < 0) continue
    const toOwnWall = crossingDistance(ray, x, y, -ux, -uy, start, limit)
    if (toOwnWall < 0) continue
    out.widths[out.count] = toFacingWall + toOwnWall
    out.index[out.count] = p
    out.count++
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
  const work = Float64Array.from(values)
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
  const centre = options.estimator === 'centre'
  // Degenerate input needs no branch: with one phase absent the feature transform has no nearest wall (−1), so no
  // pixel gets a facing partner and the statistics below come out empty/null; an empty mask has no pixel at all.
  // A pixel is a ridge pixel of at most one phase, so width·height slots hold both phases.
  const buffers = scratchFor(width * height)
  const out: RidgeOutput = { widths: buffers.widths, index: buffers.index, count: 0 }
  let upCount = 0
  const pairs = facingPairs(mask, buffers)
  const ridges = centre ? null : selectRidge(mask, pairs)
  for (const value of [1, 0] as const) {
    if (ridges === null) centreWidths(mask, value, pairs, out)
    else rayWidths(mask, value, pairs, ridges[1 - value], out)
    if (value === 1) upCount = out.count
  }
  const total = out.count
  const widthsPx = out.widths.slice(0, total)
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
    ridgeIndex: out.index.slice(0, total),
    ridgePhase,
  }
}
