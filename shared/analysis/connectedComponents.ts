/**
 * Connected-component labelling of one phase of a domain map (run-based two-pass union–find).
 *
 * Method: two-pass labelling on horizontal runs with a union–find forest: pass 1 extracts the runs of each row and
 * unites each run with the overlapping runs of the previous row; pass 2 paints the resolved labels. Classic
 * two-pass scheme after A. Rosenfeld & J. L. Pfaltz (1966), "Sequential operations in digital picture processing",
 * J. ACM 13(4):471–494, DOI 10.1145/321356.321357 [from memory]; labelling runs instead of pixels is the run-length
 * variant of the same scheme (e.g. L. He, Y. Chao & K. Suzuki (2008), "A run-based two-scan labeling algorithm",
 * IEEE Trans. Image Process. 17(5):749–756, DOI 10.1109/TIP.2008.919369 [from memory]). Labels are numbered 1..count
 * in raster order of each component's first pixel (the numbering scipy.ndimage.label also produces).
 * Runs are found on the phase packed 32 pixels to a word: the set bits of `bits XOR (bits shifted by one pixel)` are
 * exactly the run starts and ends, so a row costs one step per word plus one per run instead of one per pixel.
 * Both phases use opposite connectivities (up 8-connected, down 4-connected) so that domains and holes obey the
 * digital Jordan-curve property (Rosenfeld; stated in scikit-image's `euler_number` docs) (METHODS §1.4).
 * Checked against: METHODS.md checks #8 and #9, and a breadth-first flood-fill count on random masks (tests).
 * Input: a row-major phase array (any values; pixels equal to `value` are labelled), width, height, connectivity
 * 4 (edge neighbours) or 8 (edge + corner neighbours); optional ignore map (1 = excluded pixel, never labelled).
 * Output: Int32Array labels (0 = not in the phase), per-label sizes in pixels, border/ignore contact flags and
 * inclusive bounding boxes; per-label arrays have length count + 1 and index 0 is unused (zero).
 * Buffers: the packed rows and run tables of pass 1 are kept for the largest image seen, so labelling allocates only
 * its outputs. The run labelling (labelRuns) is exported for the other bit-packed binary-map steps (morphology,
 * area filter); the packing itself is in ./bitPackedMask.
 */
import { packEqual, wordsPerRow } from './bitPackedMask'
import type { BinaryMask, Connectivity } from './types'

/** Per-component statistics of one phase. Per-label arrays are indexed by label (index 0 unused). */
export interface ComponentStats {
  count: number
  /** Pixel count per label. */
  sizes: Uint32Array
  /** 1 where the component touches the image border (truncated: censor it in size statistics). */
  touchesBorder: Uint8Array
  /** 1 where the component is adjacent (same connectivity) to an ignored pixel (also truncated). */
  touchesIgnore: Uint8Array
  /** Inclusive bounding boxes, 4 entries per label: [minX, minY, maxX, maxY] at 4·label. */
  bbox: Int32Array
}

/** Labelled components of one phase: the statistics plus the label image. */
export interface ComponentLabels extends ComponentStats {
  /** Label per pixel: 0 = not in the labelled phase (or ignored), 1..count otherwise. */
  labels: Int32Array
}

/** Up and down components of a mask (up 8-connected, down 4-connected). */
export interface PhaseComponents<T extends ComponentStats = ComponentLabels> {
  up: T
  down: T
}

/** Root of `i` with path halving; the root is always the smallest run index of its tree. */
function findRoot(parent: Int32Array, i: number): number {
  while (parent[i] !== i) {
    parent[i] = parent[parent[i]]
    i = parent[i]
  }
  return i
}

/** Runs of one phase with their component labels: run i covers x = start[i]..end[i] of row row[i]. */
export interface LabelledRuns {
  runs: number
  /** Number of components; runs carry labels 1..count in raster order of each component's first pixel. */
  count: number
  start: Int32Array
  end: Int32Array
  row: Int32Array
  label: Int32Array
}

/** Run tables of pass 1, kept for the largest image seen: valid until the next labelRuns call. */
let runScratch = { start: new Int32Array(0), end: new Int32Array(0), row: new Int32Array(0), parent: new Int32Array(0), label: new Int32Array(0) }

/**
 * Pass 1 and the label resolution on packed rows (as packEqual makes them; padding bits 0): the runs of set bits,
 * in raster order, each with its component label. The arrays are module buffers, overwritten by the next call.
 * @param connectivity 8 also joins runs of adjacent rows that touch only diagonally.
 */
export function labelRuns(words: Int32Array, width: number, height: number, connectivity: Connectivity): LabelledRuns {
  const stride = wordsPerRow(width)
  // A row holds at most ceil(width/2) runs.
  const maxRuns = Math.ceil(width / 2) * height
  if (runScratch.start.length < maxRuns) {
    runScratch = { start: new Int32Array(maxRuns), end: new Int32Array(maxRuns), row: new Int32Array(maxRuns), parent: new Int32Array(maxRuns), label: new Int32Array(maxRuns) }
  }
  const { start: runStart, end: runEnd, row: runRow, parent, label: runLabel } = runScratch
  const reach = connectivity === 8 ? 1 : 0
  let runs = 0
  let prevFirst = 0
  let prevEnd = 0
  for (let y = 0; y < height; y++) {
    const rowFirst = runs
    // The set bits of word XOR (word << 1 | previous bit) mark where a pixel differs from its left neighbour (0 left
    // of the row): alternately a run start and the pixel after a run's end.
    let previousBit = 0
    let open = -1
    for (let j = 0, at = y * stride; j < stride; j++, at++) {
      const word = words[at]
      let changes = word ^ ((word << 1) | previousBit)
      previousBit = word >>> 31
      while (changes !== 0) {
        const lowest = changes & -changes
        changes ^= lowest
        const x = (j << 5) + 31 - Math.clz32(lowest)
        if (open < 0) {
          open = x
        } else {
          runStart[runs] = open
          runEnd[runs] = x - 1
          runRow[runs] = y
          parent[runs] = runs
          runs++
          open = -1
        }
      }
    }
    // A run reaching the row end has no change after it when the width is a multiple of 32.
    if (open >= 0) {
      runStart[runs] = open
      runEnd[runs] = width - 1
      runRow[runs] = y
      parent[runs] = runs
      runs++
    }
    // Two-pointer merge with the previous row: run [s, e] touches [ps, pe] when ps ≤ e + reach and pe ≥ s − reach.
    let p = prevFirst
    for (let c = rowFirst; c < runs && p < prevEnd; c++) {
      const lo = runStart[c] - reach
      const hi = runEnd[c] + reach
      while (p < prevEnd && runEnd[p] < lo) p++
      // c starts as its own root, and only its own unions change that root while it is merged.
      let root = c
      for (let q = p; q < prevEnd && runStart[q] <= hi; q++) {
        const other = findRoot(parent, q)
        if (other < root) {
          parent[root] = other
          root = other
        } else if (root < other) {
          parent[other] = root
        }
      }
    }
    prevFirst = rowFirst
    prevEnd = runs
  }

  // Resolve roots to consecutive labels in raster order (roots are the smallest run index, so first-seen order).
  let count = 0
  for (let i = 0; i < runs; i++) {
    const root = findRoot(parent, i)
    runLabel[i] = root === i ? ++count : runLabel[root]
  }
  return { runs, count, start: runStart, end: runEnd, row: runRow, label: runLabel }
}

/** Packed phase and packed analysable (not ignored) pixels of labelComponents, kept for the largest image seen. */
let phaseBits = new Int32Array(0)
let analysableBits = new Int32Array(0)

/** The pixels of `phase` equal to `value`, packed into the module's buffer (grown for a larger image): valid until the next call. */
function packedPhase(phase: Uint8Array, width: number, height: number, value: number): Int32Array {
  const words = wordsPerRow(width) * height
  if (phaseBits.length < words) {
    phaseBits = new Int32Array(words)
    analysableBits = new Int32Array(words)
  }
  const packed = phaseBits.subarray(0, words)
  packEqual(phase, width, height, value, packed)
  return packed
}

/**
 * Label the pixels of `phase` equal to `value`.
 * @param connectivity 4 or 8.
 * @param value phase value to label (default 1 = up; pass 0 for down).
 * @param options.ignore ignore map (1 = excluded): ignored pixels are not labelled, and components adjacent to them
 *   get `touchesIgnore = 1`.
 * @param options.labelsOut buffer of at least width·height ints to write the labels into (its first width·height
 *   entries are returned as `labels`), so a caller that labels frame after frame allocates nothing per frame.
 * @returns labels numbered in raster order. An empty image or a phase with no pixel returns count 0.
 * @example labelComponents(new Uint8Array([1, 0, 0, 1]), 2, 2, 8).count // 1
 */
export function labelComponents(
  phase: Uint8Array,
  width: number,
  height: number,
  connectivity: Connectivity,
  value = 1,
  options: { ignore?: Uint8Array; labelsOut?: Int32Array } = {},
): ComponentLabels {
  const n = width * height
  const reuse = options.labelsOut !== undefined && options.labelsOut.length >= n
  const labels = reuse ? options.labelsOut!.subarray(0, n) : new Int32Array(n)
  // Only run pixels are painted below, so a reused buffer is cleared first.
  if (reuse) labels.fill(0)
  const ignore = options.ignore
  const reach = connectivity === 8 ? 1 : 0

  const words = packedPhase(phase, width, height, value)
  if (ignore !== undefined) {
    packEqual(ignore, width, height, 0, analysableBits)
    for (let i = 0; i < words.length; i++) words[i] &= analysableBits[i]
  }
  const stats = runStatistics(labelRuns(words, width, height, connectivity), width, height, labels)
  if (ignore !== undefined && stats.count > 0) flagIgnoreContacts(labels, ignore, width, height, reach, stats.touchesIgnore)
  return { labels, ...stats }
}

/**
 * Pass 2: per-label statistics accumulated per run, not per pixel, and the runs painted into `labels` when given.
 * touchesIgnore is left 0 (flagIgnoreContacts sets it from the label image).
 */
function runStatistics(labelled: LabelledRuns, width: number, height: number, labels: Int32Array | null): ComponentStats {
  const { runs, count, start: runStart, end: runEnd, row: runRow, label: runLabel } = labelled
  const sizes = new Uint32Array(count + 1)
  const touchesBorder = new Uint8Array(count + 1)
  const touchesIgnore = new Uint8Array(count + 1)
  const bbox = new Int32Array(4 * (count + 1))
  for (let l = 1; l <= count; l++) {
    bbox[4 * l] = width
    bbox[4 * l + 1] = height
    bbox[4 * l + 2] = -1
    bbox[4 * l + 3] = -1
  }
  const lastX = width - 1
  const lastY = height - 1
  for (let i = 0; i < runs; i++) {
    const label = runLabel[i]
    const s = runStart[i]
    const e = runEnd[i]
    const y = runRow[i]
    // A plain loop: most runs are short, where a fill() call costs more than the stores.
    if (labels !== null) for (let k = y * width + s, last = y * width + e; k <= last; k++) labels[k] = label
    sizes[label] += e - s + 1
    if (s === 0 || e === lastX || y === 0 || y === lastY) touchesBorder[label] = 1
    const b = 4 * label
    if (s < bbox[b]) bbox[b] = s
    if (y < bbox[b + 1]) bbox[b + 1] = y
    if (e > bbox[b + 2]) bbox[b + 2] = e
    if (y > bbox[b + 3]) bbox[b + 3] = y
  }
  return { count, sizes, touchesBorder, touchesIgnore, bbox }
}

/**
 * labelComponents' statistics without its label image, for callers that need only counts, sizes and contacts: without
 * an ignore map nothing is painted (a 1024² frame's two phases then cost a third less); with one, the label image is
 * needed to find the ignore contacts, and `labelsOut` is used as in labelComponents.
 */
export function componentStats(
  phase: Uint8Array,
  width: number,
  height: number,
  connectivity: Connectivity,
  value = 1,
  options: { ignore?: Uint8Array; labelsOut?: Int32Array } = {},
): ComponentStats {
  if (options.ignore !== undefined) return labelComponents(phase, width, height, connectivity, value, options)
  return packedComponentStats(packedPhase(phase, width, height, value), width, height, connectivity)
}

/** componentStats of the set bits of packed rows (as packEqual makes them; padding bits 0), no ignore map. */
export function packedComponentStats(words: Int32Array, width: number, height: number, connectivity: Connectivity): ComponentStats {
  return runStatistics(labelRuns(words, width, height, connectivity), width, height, null)
}

/** Mark labels adjacent (4-neighbours, plus diagonals when reach = 1) to an ignored pixel. */
function flagIgnoreContacts(
  labels: Int32Array,
  ignore: Uint8Array,
  width: number,
  height: number,
  reach: number,
  flags: Uint8Array,
): void {
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      if (ignore[y * width + x] === 0) continue
      const y0 = y > 0 ? y - 1 : 0
      const y1 = y < height - 1 ? y + 1 : y
      const x0 = x > 0 ? x - 1 : 0
      const x1 = x < width - 1 ? x + 1 : x
      for (let yy = y0; yy <= y1; yy++) {
        for (let xx = x0; xx <= x1; xx++) {
          // Diagonal neighbours only count for 8-connectivity.
          if (reach === 0 && yy !== y && xx !== x) continue
          const label = labels[yy * width + xx]
          if (label !== 0) flags[label] = 1
        }
      }
    }
  }
}

/**
 * Label both phases with opposite connectivities: up (1) 8-connected, down (0) 4-connected (METHODS §1.4), so that
 * every down hole inside an up domain is a separate down component and no pair of diagonal pixels links both phases.
 * Pixels marked in `mask.ignore` belong to neither phase; components touching them are flagged.
 * @param buffers optional label buffers to reuse (see labelComponents' `labelsOut`).
 */
export function labelBothPhases(mask: BinaryMask, buffers: { upLabels?: Int32Array; downLabels?: Int32Array } = {}): PhaseComponents {
  const { data, width, height, ignore } = mask
  return {
    up: labelComponents(data, width, height, 8, 1, { ignore, labelsOut: buffers.upLabels }),
    down: labelComponents(data, width, height, 4, 0, { ignore, labelsOut: buffers.downLabels }),
  }
}

/** labelBothPhases' statistics without the label images (see componentStats). */
export function componentStatsBothPhases(mask: BinaryMask, buffers: { upLabels?: Int32Array; downLabels?: Int32Array } = {}): PhaseComponents<ComponentStats> {
  const { data, width, height, ignore } = mask
  return {
    up: componentStats(data, width, height, 8, 1, { ignore, labelsOut: buffers.upLabels }),
    down: componentStats(data, width, height, 4, 0, { ignore, labelsOut: buffers.downLabels }),
  }
}
