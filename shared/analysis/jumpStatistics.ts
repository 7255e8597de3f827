/**
 * Barkhausen-type jumps between consecutive frames: global ΔM per field step and the sizes of flipped clusters.
 *
 * Method (METHODS §5.3 [P]): global ΔM_i = M_{i+1} − M_i. Spatial: the flipped set F = B_i XOR B_{i+1} is split into
 * up→down (1 → 0) and down→up (0 → 1) pixels, each labelled 8-connected (labelComponents, METHODS §1.4); cluster
 * size = pixel count. Clusters smaller than `minArea` are camera flicker (METHODS §1.5) and are dropped from the size
 * lists; clusters touching the image border or an ignored pixel are truncated and censored (counted, not listed).
 * Optionally a flipped pixel must persist in the following frame (METHODS §5.3 "require a flipped pixel to persist").
 * ΔM/Ms = 2·(N_down→up − N_up→down)/N_analysed counts every flipped pixel, so it equals M_after − M_before of the
 * binary route of §5.1 whatever the size filters.
 * Checked against: METHODS check #36 (4×3 and 5×6 blocks flipping in a 64×64 frame → sizes {12, 30}, ΔM/Ms =
 * 2·42/4096 = 0.020508) [D]; synthetic masks in the tests.
 * Input: two BinaryMasks of equal size (1 = up), registered (§8.3); their ignore maps are combined.
 * Output: sizes in pixels (multiply by ax·ay for areas), ΔM as a fraction of Ms. One frame interval can merge several
 * avalanches (sizes biased up, counts down): keep field steps small [P].
 * Frames without ignore maps (the usual case) are compared 32 pixels at a time on packed rows (./bitPackedMask) and
 * the clusters sized from their runs (labelRuns), with the same result as the per-pixel route, which is kept for
 * ignore maps: a 41-frame sweep's 40 comparisons then cost a few milliseconds each instead of tens (and no label
 * images).
 */
import { bitCount, packNonZero, wordsPerRow } from './bitPackedMask'
import { labelComponents, packedComponentStats } from './connectedComponents'
import type { BinaryMask } from './types'

/** ΔM between two consecutive frames. */
export interface GlobalJump {
  fromFrame: number
  toFrame: number
  deltaM: number
}

/**
 * Per-step magnetization changes ΔM_i = M_{i+1} − M_i, in frame order (not sorted).
 * @param magnetizations M (e.g. M/Ms) per frame in acquisition order.
 * @param minAbsDeltaM keep only steps with |ΔM| ≥ this (default 0 = every step).
 * @returns one entry per step; steps involving a non-finite M are skipped. Fewer than two frames give [].
 */
export function globalJumps(magnetizations: ArrayLike<number>, minAbsDeltaM = 0): GlobalJump[] {
  const jumps: GlobalJump[] = []
  for (let i = 0; i + 1 < magnetizations.length; i++) {
    const deltaM = magnetizations[i + 1] - magnetizations[i]
    if (!Number.isFinite(deltaM) || Math.abs(deltaM) < minAbsDeltaM) continue
    jumps.push({ fromFrame: i, toFrame: i + 1, deltaM })
  }
  return jumps
}

/** Flipped clusters between two frames. */
export interface FlippedClusters {
  /** Sizes (px) of uncensored up→down clusters ≥ minArea, in raster order of their first pixel. */
  upToDown: number[]
  /** Sizes (px) of uncensored down→up clusters ≥ minArea. */
  downToUp: number[]
  /** upToDown followed by downToUp. */
  sizes: number[]
  /** (M_after − M_before)/Ms over the analysed pixels, from every flipped pixel. */
  deltaM: number
  /** Number of clusters ≥ minArea touching the border or an ignored pixel (left out of the size lists). */
  censored: number
  /** Sizes of the censored clusters (lower bounds of the true sizes). */
  censoredSizes: number[]
  /** Pixels analysed (not ignored in either frame). */
  analysedPixels: number
}

/** Options of {@link flippedClusters}. */
export interface FlippedClustersOptions {
  /** The frame after `after`: a flipped pixel counts in the size lists only if it keeps its new value there. */
  persistFrame?: BinaryMask
}

/**
 * Label the clusters that flipped between `before` and `after`.
 * @param minArea smallest cluster (px) kept in the size lists (default 1 = all).
 * @throws RangeError when the frames differ in size (they must be registered first).
 * @returns sizes, ΔM/Ms and censoring counts. Frames with nothing analysed (0×0 or all ignored) give ΔM = 0 and empty
 *   lists.
 */
export function flippedClusters(
  before: BinaryMask,
  after: BinaryMask,
  minArea = 1,
  options: FlippedClustersOptions = {},
): FlippedClusters {
  const { width, height } = before
  const persist = options.persistFrame
  for (const frame of persist ? [after, persist] : [after]) {
    if (frame.width !== width || frame.height !== height) {
      throw new RangeError(`Frame sizes differ: ${width}×${height} vs ${frame.width}×${frame.height}.`)
    }
  }
  const n = width * height
  if (n > 0 && !before.ignore && !after.ignore && !persist?.ignore) return packedFlippedClusters(before, after, minArea, persist)
  const ignore = new Uint8Array(n)
  const flips = new Uint8Array(n)
  let analysed = 0
  let netUp = 0
  for (let i = 0; i < n; i++) {
    if (before.ignore?.[i] || after.ignore?.[i] || persist?.ignore?.[i]) {
      ignore[i] = 1
      continue
    }
    analysed++
    const b = before.data[i] !== 0
    const a = after.data[i] !== 0
    if (a === b) continue
    netUp += a ? 1 : -1
    if (persist && (persist.data[i] !== 0) !== a) continue
    // Phase codes for labelling: 1 = up→down, 2 = down→up.
    flips[i] = a ? 2 : 1
  }

  const upToDown: number[] = []
  const downToUp: number[] = []
  const censoredSizes: number[] = []
  for (const code of [1, 2]) {
    const labelled = labelComponents(flips, width, height, 8, code, { ignore })
    for (let label = 1; label <= labelled.count; label++) {
      const size = labelled.sizes[label]
      if (size < minArea) continue
      if (labelled.touchesBorder[label] || labelled.touchesIgnore[label]) censoredSizes.push(size)
      else (code === 1 ? upToDown : downToUp).push(size)
    }
  }
  return {
    upToDown,
    downToUp,
    sizes: [...upToDown, ...downToUp],
    deltaM: analysed > 0 ? (2 * netUp) / analysed : 0,
    censored: censoredSizes.length,
    censoredSizes,
    analysedPixels: analysed,
  }
}

/** flippedClusters for frames without ignore maps, on packed rows: every pixel is analysed, only the border censors. */
function packedFlippedClusters(before: BinaryMask, after: BinaryMask, minArea: number, persist: BinaryMask | undefined): FlippedClusters {
  const { width, height } = before
  const words = wordsPerRow(width) * height
  const packed = (mask: BinaryMask): Int32Array => {
    const bits = new Int32Array(words)
    packNonZero(mask.data, width, height, bits)
    return bits
  }
  const wasUp = packed(before)
  const isUp = packed(after)
  const staysUp = persist ? packed(persist) : null
  const lost = new Int32Array(words)
  const gained = new Int32Array(words)
  let netUp = 0
  for (let i = 0; i < words; i++) {
    const upToDown = wasUp[i] & ~isUp[i]
    const downToUp = ~wasUp[i] & isUp[i]
    netUp += bitCount(downToUp) - bitCount(upToDown)
    // With a persistence frame, a flip counts in the size lists only if the pixel keeps its new value there.
    lost[i] = staysUp === null ? upToDown : upToDown & ~staysUp[i]
    gained[i] = staysUp === null ? downToUp : downToUp & staysUp[i]
  }
  const [upToDown, upToDownCensored] = clusterSizes(lost, width, height, minArea)
  const [downToUp, downToUpCensored] = clusterSizes(gained, width, height, minArea)
  const censoredSizes = [...upToDownCensored, ...downToUpCensored]
  const analysedPixels = width * height
  return {
    upToDown,
    downToUp,
    sizes: [...upToDown, ...downToUp],
    deltaM: (2 * netUp) / analysedPixels,
    censored: censoredSizes.length,
    censoredSizes,
    analysedPixels,
  }
}

/** Sizes of the 8-connected clusters of packed `bits` that reach `minArea`, in label order: [inside, on the border]. */
function clusterSizes(bits: Int32Array, width: number, height: number, minArea: number): [number[], number[]] {
  const { count, sizes, touchesBorder } = packedComponentStats(bits, width, height, 8)
  const inside: number[] = []
  const border: number[] = []
  for (let l = 1; l <= count; l++) {
    if (sizes[l] < minArea) continue
    ;(touchesBorder[l] ? border : inside).push(sizes[l])
  }
  return [inside, border]
}
