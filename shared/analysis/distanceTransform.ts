/**
 * Exact Euclidean distance transform (and feature transform) of one phase of a domain map.
 *
 * Method: separable exact squared EDT. Along columns the 1-D problem with a 0/∞ input is just the distance to the
 * nearest feature above or below (two sweeps, done row by row for contiguous memory access); along rows the lower
 * envelope of parabolas of P. F. Felzenszwalb & D. P. Huttenlocher (2012), "Distance transforms of sampled
 * functions", Theory of Computing 8:415–428, DOI 10.4086/toc.2012.v008a019. Linear time in the pixel count.
 * The feature transform (index of the nearest other-phase pixel) comes for free from the argmins of both passes.
 * Both phases at once (`featureTransformBothPhases`): the same separable scheme with the row envelope taken run by
 * run, in the integer form of A. Meijster, J. B. T. M. Roerdink & W. H. Hesselink (2000), "A general algorithm for
 * computing distance transforms in linear time", ISMM 2000, pp. 331–340 [from memory]; same argmins (ties to the
 * leftmost column, then the upper row).
 * Checked against: brute-force nearest-pixel search on random masks (tests); scipy.ndimage.distance_transform_edt
 * convention (METHODS §2.3: distance between pixel centres; check #15: 9- and 10-px stripes both give d_max = 5).
 * Input: row-major phase array, the phase `value` whose pixels get a distance; every pixel whose value differs is
 * "the other phase" (distance 0). Optional anisotropic sampling {x: ax, y: ay} (distances then in those units).
 * Output: Float32Array of Euclidean distances in px (or sampling units). If the other phase is absent, every pixel of
 * the phase gets +Infinity (no distance to a virtual border is invented): callers must handle it.
 * Buffers: row scratch is cached per width and the column scratch for the last size (both phases at once need none:
 * the column pass is kept in the feature output), so a stack of equal frames allocates only the outputs (or nothing,
 * with `out` / `nearestOut`). Not re-entrant within one thread (it never
 * needs to be: the transform is synchronous).
 */

/** Pixel pitch along x (columns) and y (rows) for anisotropic pixels; default 1 and 1. */
export interface Sampling {
  x: number
  y: number
}

export interface DistanceTransformOptions {
  sampling?: Sampling
  /** Output buffer of width·height floats to reuse. */
  out?: Float32Array
  /** Feature-transform output buffer of width·height ints to reuse (`featureTransform` only). */
  nearestOut?: Int32Array
}

/** Distances plus, per pixel, the index of the nearest other-phase pixel (−1 when the other phase is absent). */
export interface FeatureTransformResult {
  distance: Float32Array
  nearest: Int32Array
}

/** Row buffers of the lower-envelope pass, cached per width. */
interface RowBuffers {
  /** Input samples f(q). */
  f: Float64Array
  /** Envelope parabola vertices. */
  v: Int32Array
  /** Envelope parabola heights f(v) + s²v², kept to avoid recomputing them in the pop loop. */
  h: Float64Array
  /** Envelope boundaries between parabola k−1 and k. */
  z: Float64Array
  /** Output squared distances. */
  d: Float64Array
  /** Output argmin positions. */
  arg: Int32Array
}

const rowBufferCache = new Map<number, RowBuffers>()

/** Column-pass scratch (nearest other-phase row per pixel), kept for the last image size. */
let columnScratch = new Int32Array(0)

function rowBuffers(width: number): RowBuffers {
  let b = rowBufferCache.get(width)
  if (b === undefined) {
    b = {
      f: new Float64Array(width),
      v: new Int32Array(width),
      h: new Float64Array(width),
      z: new Float64Array(width + 1),
      d: new Float64Array(width),
      arg: new Int32Array(width),
    }
    rowBufferCache.set(width, b)
  }
  return b
}

/**
 * 1-D squared distance transform d(q) = min_p [s²(q − p)² + f(p)] by the lower envelope of parabolas
 * (Felzenszwalb & Huttenlocher 2012, Algorithm 1); samples with f = +∞ are skipped so they never enter the envelope.
 * Returns false (outputs untouched) when every f is infinite.
 */
function envelope1d(
  n: number,
  s2: number,
  f: Float64Array,
  v: Int32Array,
  h: Float64Array,
  z: Float64Array,
  d: Float64Array,
  arg: Int32Array,
): boolean {
  const inv = 1 / (2 * s2)
  let k = -1
  for (let q = 0; q < n; q++) {
    const fq = f[q]
    if (fq === Infinity) continue
    const hq = fq + s2 * q * q
    if (k < 0) {
      k = 0
      v[0] = q
      h[0] = hq
      z[0] = -Infinity
      continue
    }
    // Intersection of parabolas q and v[k]; z[0] = −∞ ends the pop loop.
    let s = ((hq - h[k]) / (q - v[k])) * inv
    while (s <= z[k]) {
      k--
      s = ((hq - h[k]) / (q - v[k])) * inv
    }
    k++
    v[k] = q
    h[k] = hq
    z[k] = s
  }
  if (k < 0) return false
  z[k + 1] = Infinity
  k = 0
  for (let q = 0; q < n; q++) {
    while (z[k + 1] < q) k++
    const p = v[k]
    d[q] = s2 * (q - p) * (q - p) + f[p]
    arg[q] = p
  }
  return true
}

/**
 * Nearest other-phase row in the same column for every pixel (−1 if the column has none), by a downward and an
 * upward sweep over whole rows.
 */
function nearestInColumns(phase: Uint8Array, width: number, height: number, value: number, rowArg: Int32Array): void {
  const last = new Int32Array(width).fill(-1)
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) {
      if (phase[row + x] !== value) last[x] = y
      rowArg[row + x] = last[x]
    }
  }
  last.fill(-1)
  for (let y = height - 1; y >= 0; y--) {
    const row = y * width
    for (let x = 0; x < width; x++) {
      if (phase[row + x] !== value) last[x] = y
      const below = last[x]
      if (below < 0) continue
      const above = rowArg[row + x]
      if (above < 0 || below - y < y - above) rowArg[row + x] = below
    }
  }
}

function transform(
  phase: Uint8Array,
  width: number,
  height: number,
  value: number,
  sampling: Sampling,
  distance: Float32Array,
  nearest: Int32Array | null,
): void {
  const n = width * height
  if (columnScratch.length < n) columnScratch = new Int32Array(n)
  const rowArg = columnScratch
  nearestInColumns(phase, width, height, value, rowArg)
  const sy2 = sampling.y * sampling.y
  const sx2 = sampling.x * sampling.x
  const { f, v, h, z, d, arg } = rowBuffers(width)
  const last = width - 1
  for (let y = 0; y < height; y++) {
    const row = y * width
    let phasePixels = 0
    for (let x = 0; x < width; x++) {
      if (phase[row + x] === value) {
        const r = rowArg[row + x]
        f[x] = r < 0 ? Infinity : sy2 * (y - r) * (y - r)
        phasePixels++
      } else if ((x > 0 && phase[row + x - 1] === value) || (x < last && phase[row + x + 1] === value)) {
        // An end of an other-phase run: a feature pixel (f = 0) that can be nearest to the phase.
        f[x] = 0
      } else {
        // Inside an other-phase run the run's end is strictly nearer to every phase pixel of the row, so the
        // parabola is left out of the envelope (this cannot change the envelope over the phase pixels, nor a tie).
        f[x] = Infinity
      }
    }
    // A row without phase pixels is all feature pixels: distance 0, each its own nearest.
    if (phasePixels === 0) {
      distance.fill(0, row, row + width)
      if (nearest !== null) for (let x = 0; x < width; x++) nearest[row + x] = row + x
      continue
    }
    if (!envelope1d(width, sx2, f, v, h, z, d, arg)) {
      distance.fill(Infinity, row, row + width)
      if (nearest !== null) nearest.fill(-1, row, row + width)
      continue
    }
    // Other-phase pixels are their own nearest feature at distance 0 (exactly what the full envelope gives them).
    for (let x = 0; x < width; x++) distance[row + x] = phase[row + x] === value ? Math.sqrt(d[x]) : 0
    if (nearest !== null) {
      for (let x = 0; x < width; x++) {
        if (phase[row + x] !== value) {
          nearest[row + x] = row + x
          continue
        }
        const col = arg[x]
        nearest[row + x] = rowArg[row + col] * width + col
      }
    }
  }
}

function checkedSampling(sampling: Sampling | undefined): Sampling {
  if (sampling === undefined) return { x: 1, y: 1 }
  if (!(sampling.x > 0) || !(sampling.y > 0)) throw new RangeError('sampling must be positive')
  return sampling
}

/**
 * Euclidean distance from every pixel of phase `value` to the nearest pixel centre of the other phase
 * (scipy `distance_transform_edt` convention); other-phase pixels get 0.
 * @returns +Infinity for every pixel of the phase when the other phase is absent; an empty array for an empty image.
 * @example distanceTransform(new Uint8Array([0, 1, 1, 1]), 4, 1, 1) // [0, 1, 2, 3]
 */
export function distanceTransform(
  phase: Uint8Array,
  width: number,
  height: number,
  value: 0 | 1,
  options: DistanceTransformOptions = {},
): Float32Array {
  const n = width * height
  const out = options.out !== undefined && options.out.length >= n ? options.out : new Float32Array(n)
  // Degenerate: an empty image has nothing to measure; a missing other phase is handled in the passes (+Infinity).
  if (n === 0) return out
  transform(phase, width, height, value, checkedSampling(options.sampling), out, null)
  return out
}

/**
 * Distance transform plus feature transform: `nearest[i]` is the pixel index of (one of) the nearest other-phase
 * pixel centres of pixel i, i itself for other-phase pixels, −1 when the other phase is absent.
 */
export function featureTransform(
  phase: Uint8Array,
  width: number,
  height: number,
  value: 0 | 1,
  options: DistanceTransformOptions = {},
): FeatureTransformResult {
  const n = width * height
  const distance = options.out !== undefined && options.out.length >= n ? options.out : new Float32Array(n)
  const nearest =
    options.nearestOut !== undefined && options.nearestOut.length >= n ? options.nearestOut : new Int32Array(n)
  // Degenerate: an empty image has nothing to measure.
  if (n === 0) return { distance, nearest }
  transform(phase, width, height, value, checkedSampling(options.sampling), distance, nearest)
  return { distance, nearest }
}

/** Working rows of `featureTransformBothPhases`, cached per width. */
interface BothPhasesScratch {
  /** Last row of each phase met in each column by a column sweep, at 2·x + phase. */
  lastRow: Int32Array
  /** Nearest other-phase row in the same column for each pixel of the current row (−1: none). */
  columnRow: Int32Array
  /**
   * Lower envelope of the current run, one slot per parabola f + (x − v)²: its column v, height f and feature row r,
   * the first pixel s where it is the lowest and its value g there.
   */
  v: Int32Array
  f: Int32Array
  r: Int32Array
  s: Int32Array
  g: Int32Array
}

const bothPhasesCache = new Map<number, BothPhasesScratch>()

function bothPhasesScratch(width: number): BothPhasesScratch {
  let b = bothPhasesCache.get(width)
  if (b === undefined) {
    b = {
      lastRow: new Int32Array(2 * width),
      columnRow: new Int32Array(width),
      v: new Int32Array(width + 1),
      f: new Int32Array(width + 1),
      r: new Int32Array(width + 1),
      s: new Int32Array(width + 1),
      g: new Int32Array(width + 1),
    }
    bothPhasesCache.set(width, b)
  }
  return b
}

/**
 * Rows standing for "no other-phase pixel above / below yet": farther than any real row, the one below farther still
 * (so that a column without the other phase ends up negative), and small enough for int32 sums (heights < 2²⁷).
 */
const NONE_ABOVE = -(1 << 28)
const NONE_BELOW = 3 << 28

/**
 * Downward column sweep over row y: the nearest other-phase row above each pixel (NONE_ABOVE if none).
 * Branch-free, as the phase changes along a row too often for branch prediction.
 */
function otherRowsAbove(phase: Uint8Array, width: number, y: number, lastRow: Int32Array, above: Int32Array): void {
  const row = y * width
  for (let x = 0; x < width; x++) {
    // −byte is negative for every nonzero byte: its sign bit is the phase.
    const up = -phase[row + x] >>> 31
    lastRow[2 * x + up] = y
    above[row + x] = lastRow[2 * x + (up ^ 1)]
  }
}

/**
 * Upward column sweep over row y: the nearer of the other-phase rows above and below each pixel, the one above on a
 * tie, −1 if the column has none. Branch-free like `otherRowsAbove`.
 */
function nearestOtherRows(
  phase: Uint8Array,
  width: number,
  y: number,
  lastRow: Int32Array,
  above: Int32Array,
  columnRow: Int32Array,
): void {
  const row = y * width
  for (let x = 0; x < width; x++) {
    const up = -phase[row + x] >>> 31
    lastRow[2 * x + up] = y
    const below = lastRow[2 * x + (up ^ 1)]
    const a = above[row + x]
    // 1 when the row below is strictly nearer (sign bit of the difference of the two distances).
    const takeBelow = (below - y - (y - a)) >>> 31
    const r = a + takeBelow * (below - a)
    columnRow[x] = r | (r >> 31)
  }
}

/**
 * One row of `featureTransformBothPhases`, run by run: the lower envelope of the parabolas f(x') + (x − x')² over
 * the run's pixels (f = squared distance to the nearest other-phase pixel of the column; none: left out) and its two
 * bounding pixels (f = 0), in the integer form of Meijster, Roerdink & Hesselink (2000): each parabola on the stack
 * keeps the first pixel s where it is the lowest; a new one pops those it undercuts at their s and starts one pixel
 * after its crossing with the one it does not undercut. A tie keeps the older, leftmost parabola, as in the
 * floating-point envelope of Felzenszwalb & Huttenlocher (2012), so the argmins are the same. The arithmetic is on
 * integers and exact (the one quotient is of integers far below 2⁵³, so its floor is exact too). The starts are
 * distinct integers, so the output sweep moves on by at most one parabola per pixel, without a branch.
 */
function envelopeRow(
  phase: Uint8Array,
  width: number,
  y: number,
  scratch: BothPhasesScratch,
  distance: Float32Array,
  nearest: Int32Array,
): void {
  const { columnRow, v, f, r, s, g } = scratch
  const row = y * width
  let start = 0
  while (start < width) {
    const up = phase[row + start] !== 0
    let end = start + 1
    while (end < width && phase[row + end] !== 0 === up) end++
    let k = -1
    if (start > 0) {
      k = 0
      v[0] = start - 1
      f[0] = 0
      r[0] = y
      s[0] = start
      g[0] = 1
    }
    const stop = end < width ? end + 1 : end
    for (let x = start; x < stop; x++) {
      // Run pixels through their column; the right bounding pixel x = end is its own feature.
      let fx = 0
      let rx = y
      if (x < end) {
        rx = columnRow[x]
        if (rx < 0) continue
        fx = (y - rx) * (y - rx)
      }
      while (k >= 0 && fx + (s[k] - x) * (s[k] - x) < g[k]) k--
      let first = start
      if (k >= 0) {
        // First pixel after the crossing of the parabolas of columns v[k] and x; none left in the run: not kept.
        const u = v[k]
        first = Math.floor((fx - f[k] + x * x - u * u) / (2 * (x - u))) + 1
        if (first >= end) continue
      }
      k++
      v[k] = x
      f[k] = fx
      r[k] = rx
      s[k] = first
      g[k] = fx + (first - x) * (first - x)
    }
    if (k < 0) {
      distance.fill(Infinity, row + start, row + end)
      nearest.fill(-1, row + start, row + end)
    } else {
      s[k + 1] = width
      k = 0
      for (let x = start; x < end; x++) {
        // Sign bit of s[k + 1] − x − 1: the next parabola takes over at this pixel.
        k += (s[k + 1] - x - 1) >>> 31
        const dx = x - v[k]
        distance[row + x] = Math.sqrt(f[k] + dx * dx)
        nearest[row + x] = r[k] * width + v[k]
      }
    }
    start = end
  }
}

/**
 * Distance and feature transform of both phases in one pass: for every pixel, the distance to (and index of) the
 * nearest pixel centre of the other phase. Equal, pixel for pixel, to `featureTransform` of phase 1 on the up
 * pixels and of phase 0 on the down pixels, at less than the cost of one of them.
 *
 * Why one pass suffices: within a row, the nearest other-phase candidate of a pixel in a run of equal pixels is
 * either a pixel of the run (through its column) or one of the two other-phase pixels that bound the run (f = 0):
 * any candidate beyond a bounding pixel is farther along the row than that bounding pixel and at least as far in
 * total. So the lower envelope is taken run by run, over the run plus its bounding pixels, and both phases come out
 * of the same sweep. Order of work: a downward column sweep keeps the other-phase row above every pixel; the upward
 * sweep completes each row's column distances and runs that row's envelopes at once. Phase values: 0 is down,
 * anything else up.
 * @returns distances (+Infinity and nearest −1 for every pixel when the image holds only one phase).
 */
export function featureTransformBothPhases(
  phase: Uint8Array,
  width: number,
  height: number,
  options: Omit<DistanceTransformOptions, 'sampling'> = {},
): FeatureTransformResult {
  const n = width * height
  const distance = options.out !== undefined && options.out.length >= n ? options.out : new Float32Array(n)
  const nearest = options.nearestOut !== undefined && options.nearestOut.length >= n ? options.nearestOut : new Int32Array(n)
  if (n === 0) return { distance, nearest }
  // The other-phase row above each pixel is kept in `nearest` itself: the upward sweep reads a row's values just
  // before its envelope overwrites them with the result, and never reads a finished row again.
  const above = nearest
  const scratch = bothPhasesScratch(width)
  scratch.lastRow.fill(NONE_ABOVE)
  for (let y = 0; y < height; y++) otherRowsAbove(phase, width, y, scratch.lastRow, above)
  scratch.lastRow.fill(NONE_BELOW)
  for (let y = height - 1; y >= 0; y--) {
    nearestOtherRows(phase, width, y, scratch.lastRow, above, scratch.columnRow)
    envelopeRow(phase, width, y, scratch, distance, nearest)
  }
  return { distance, nearest }
}
