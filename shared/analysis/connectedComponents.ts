/**
 * Connected-component labelling of one phase of a domain map (run-based two-pass union–find).
 *
 * Method: two-pass labelling on horizontal runs with a union–find forest: pass 1 extracts the runs of each row and
 * unites each run with the overlapping runs of the previous row; pass 2 paints the resolved labels. Classic
 * two-pass scheme after A. Rosenfeld & J. L. Pfaltz (1966), "Sequential operations in digital picture processing",
 * J. ACM 13(4):471–494, DOI 10.1145/321356.321357 [from memory]. Labels are numbered 1..count in raster order of each
 * component's first pixel (the numbering scipy.ndimage.label also produces).
 * Both phases use opposite connectivities (up 8-connected, down 4-connected) so that domains and holes obey the
 * digital Jordan-curve property (Rosenfeld; stated in scikit-image's `euler_number` docs) (METHODS §1.4).
 * Checked against: METHODS.md checks #8 and #9, and a breadth-first flood-fill count on random masks (tests).
 * Input: a row-major phase array (any values; pixels equal to `value` are labelled), width, height, connectivity
 * 4 (edge neighbours) or 8 (edge + corner neighbours); optional ignore map (1 = excluded pixel, never labelled).
 * Output: Int32Array labels (0 = not in the phase), per-label sizes in pixels, border/ignore contact flags and
 * inclusive bounding boxes; per-label arrays have length count + 1 and index 0 is unused (zero).
 * Buffers: the run tables of pass 1 are kept for the largest image seen, so labelling allocates only its outputs.
 */
import type { BinaryMask, Connectivity } from './types'

/** Labelled components of one phase. Per-label arrays are indexed by label (index 0 unused). */
export interface ComponentLabels {
  /** Label per pixel: 0 = not in the labelled phase (or ignored), 1..count otherwise. */
  labels: Int32Array
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

/** Up and down components of a mask (up 8-connected, down 4-connected). */
export interface PhaseComponents {
  up: ComponentLabels
  down: ComponentLabels
}

/** Root of `i` with path halving; the root is always the smallest run index of its tree. */
function findRoot(parent: Int32Array, i: number): number {
  while (parent[i] !== i) {
    parent[i] = parent[parent[i]]
    i = parent[i]
  }
  return i
}

function unite(parent: Int32Array, a: number, b: number): void {
  const ra = findRoot(parent, a)
  const rb = findRoot(parent, b)
  if (ra < rb) parent[rb] = ra
  else if (rb < ra) parent[ra] = rb
}

/** Run tables of pass 1, kept for the largest image seen: they never leave labelComponents. */
interface RunBuffers {
  runStart: Int32Array
  runEnd: Int32Array
  runRow: Int32Array
  parent: Int32Array
  runLabel: Int32Array
}

let runScratch: RunBuffers = { runStart: new Int32Array(0), runEnd: new Int32Array(0), runRow: new Int32Array(0), parent: new Int32Array(0), runLabel: new Int32Array(0) }

function runBuffers(maxRuns: number): RunBuffers {
  if (runScratch.runStart.length < maxRuns) {
    runScratch = { runStart: new Int32Array(maxRuns), runEnd: new Int32Array(maxRuns), runRow: new Int32Array(maxRuns), parent: new Int32Array(maxRuns), runLabel: new Int32Array(maxRuns) }
  }
  return runScratch
}

function runLabelBuffer(runs: number): Int32Array {
  return runScratch.runLabel.length >= runs ? runScratch.runLabel : new Int32Array(runs)
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

  // Pass 1: runs per row, united with overlapping runs of the previous row. A row has at most ceil(width/2) runs.
  const maxRuns = Math.ceil(width / 2) * height
  const { runStart, runEnd, runRow, parent } = runBuffers(maxRuns)
  let runs = 0
  let prevFirst = 0
  let prevEnd = 0
  for (let y = 0; y < height; y++) {
    const row = y * width
    const rowFirst = runs
    let x = 0
    while (x < width) {
      while (x < width && (phase[row + x] !== value || (ignore !== undefined && ignore[row + x] !== 0))) x++
      if (x >= width) break
      const start = x
      while (x < width && phase[row + x] === value && (ignore === undefined || ignore[row + x] === 0)) x++
      runStart[runs] = start
      runEnd[runs] = x - 1
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
      let q = p
      while (q < prevEnd && runStart[q] <= hi) {
        unite(parent, c, q)
        q++
      }
    }
    prevFirst = rowFirst
    prevEnd = runs
  }

  // Resolve roots to consecutive labels in raster order (roots are the smallest run index, so first-seen order).
  const runLabel = runLabelBuffer(runs)
  let count = 0
  for (let i = 0; i < runs; i++) {
    const root = findRoot(parent, i)
    runLabel[i] = root === i ? ++count : runLabel[root]
  }

  // Pass 2: paint runs and accumulate per-label statistics per run, not per pixel.
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
    labels.fill(label, y * width + s, y * width + e + 1)
    sizes[label] += e - s + 1
    if (s === 0 || e === lastX || y === 0 || y === lastY) touchesBorder[label] = 1
    const b = 4 * label
    if (s < bbox[b]) bbox[b] = s
    if (y < bbox[b + 1]) bbox[b + 1] = y
    if (e > bbox[b + 2]) bbox[b + 2] = e
    if (y > bbox[b + 3]) bbox[b + 3] = y
  }

  if (ignore !== undefined && count > 0) flagIgnoreContacts(labels, ignore, width, height, reach, touchesIgnore)
  return { labels, count, sizes, touchesBorder, touchesIgnore, bbox }
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
