/**
 * Minimum-area filter: domains of either phase smaller than A_min are reassigned to the surrounding phase.
 *
 * Method: METHODS §1.5 [P]: remove components below one resolution element and *reassign* their pixels (masking
 * them instead would bias the area fraction); report the reassigned fraction. Two deterministic steps:
 * (1) up components (8-connected) smaller than A_min become down; (2) the down phase is relabelled (4-connected) and
 * its components smaller than A_min become up. Step 2 can only enlarge up components, so it creates no new small up
 * component; a small up speck inside a small down hole is therefore absorbed in two steps rather than swapped.
 * A component is reassigned only if it shares an edge with the other phase (a component bounded only by the border
 * and ignored pixels has no surrounding phase; e.g. the whole image being one small component is kept).
 * Components touching the border are filtered like the others (a sub-resolution fragment is noise either way).
 * Checked against: METHODS.md check #10 (sizes {1, 4, 9, 30}, A_min 5 → {9, 30} kept, 5 px reassigned) [D].
 * Input: BinaryMask (1 = up); ignored pixels keep their value and are not counted. A_min in pixels (minArea ≤ 1
 * changes nothing). Output: the filtered mask, reassigned pixel count and fraction of analysed pixels.
 */
import { labelComponents } from './connectedComponents'
import type { BinaryMask, Connectivity } from './types'

/** Result of {@link removeSmallDomains}. */
export interface MinimumAreaResult {
  mask: BinaryMask
  /** Number of analysed pixels whose phase was flipped. */
  reassignedPixels: number
  /** reassignedPixels / analysed (non-ignored) pixels; 0 when nothing is analysed. */
  reassignedFraction: number
}

/**
 * Flip, in place, every component of phase `value` smaller than `minArea` that shares an edge with the other phase.
 */
function flipSmall(
  data: Uint8Array,
  width: number,
  height: number,
  value: 0 | 1,
  connectivity: Connectivity,
  minArea: number,
  ignore: Uint8Array | undefined,
): void {
  if (labelScratch.length < width * height) labelScratch = new Int32Array(width * height)
  const { labels, count, sizes } = labelComponents(data, width, height, connectivity, value, { ignore, labelsOut: labelScratch })
  // small[l] = 1 for the components below minArea, the only ones that can be flipped.
  const small = new Uint8Array(count + 1)
  let anySmall = false
  for (let l = 1; l <= count; l++) {
    if (sizes[l] < minArea) {
      small[l] = 1
      anySmall = true
    }
  }
  if (!anySmall) return

  // A component has a surrounding phase only if one of its pixels has an edge neighbour of the other phase; only
  // small components are asked.
  const other = 1 - value
  const hasNeighbour = new Uint8Array(count + 1)
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let x = 0; x < width; x++) {
      const i = row + x
      const label = labels[i]
      if (small[label] === 0 || hasNeighbour[label] === 1) continue
      if (
        (x > 0 && isOther(data, ignore, i - 1, other)) ||
        (x < width - 1 && isOther(data, ignore, i + 1, other)) ||
        (y > 0 && isOther(data, ignore, i - width, other)) ||
        (y < height - 1 && isOther(data, ignore, i + width, other))
      ) {
        hasNeighbour[label] = 1
      }
    }
  }

  for (let i = 0; i < labels.length; i++) {
    const label = labels[i]
    if (small[label] === 1 && hasNeighbour[label] === 1) data[i] = other
  }
}

/** Labels of flipSmall and the copy of the mask before filtering, kept for the largest image seen (never returned). */
let labelScratch = new Int32Array(0)
let beforeScratch = new Uint8Array(0)

function isOther(data: Uint8Array, ignore: Uint8Array | undefined, i: number, other: number): boolean {
  return data[i] === other && (ignore === undefined || ignore[i] === 0)
}

/**
 * Reassign up and down domains smaller than `minArea` pixels to the surrounding phase (METHODS §1.5).
 * @param minArea minimum component area in pixels; components with size < minArea are reassigned.
 * @returns a new mask (the input is not modified; `ignore` is passed through) and the reassigned amount.
 * @example removeSmallDomains(mask, 5).reassignedPixels
 */
export function removeSmallDomains(mask: BinaryMask, minArea: number): MinimumAreaResult {
  const { width, height, ignore } = mask
  const data = new Uint8Array(width * height)
  for (let i = 0; i < data.length; i++) data[i] = mask.data[i] !== 0 ? 1 : 0
  let analysed = data.length
  if (ignore) for (let i = 0; i < ignore.length && i < data.length; i++) if (ignore[i] !== 0) analysed--

  const result: BinaryMask = { width, height, data }
  if (ignore) result.ignore = ignore
  // Every component has at least one pixel, so minArea ≤ 1 cannot remove anything; nor can an empty image.
  if (!(minArea > 1) || analysed === 0) return { mask: result, reassignedPixels: 0, reassignedFraction: 0 }

  // Count the final difference: an up speck flipped in step 1 and absorbed back into up in step 2 is not reassigned.
  if (beforeScratch.length < data.length) beforeScratch = new Uint8Array(data.length)
  const before = beforeScratch
  before.set(data)
  flipSmall(data, width, height, 1, 8, minArea, ignore)
  flipSmall(data, width, height, 0, 4, minArea, ignore)
  let reassignedPixels = 0
  for (let i = 0; i < data.length; i++) if (data[i] !== before[i]) reassignedPixels++
  return { mask: result, reassignedPixels, reassignedFraction: reassignedPixels / analysed }
}
