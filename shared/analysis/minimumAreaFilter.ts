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
 * Components are labelled as runs (labelRuns, connectedComponents.ts) on the mask packed 32 pixels to a word
 * (bitPackedMask.ts), so only the runs of small components are visited to test their neighbours and flip them.
 * Checked against: METHODS.md check #10 (sizes {1, 4, 9, 30}, A_min 5 → {9, 30} kept, 5 px reassigned) [D].
 * Input: BinaryMask (1 = up); ignored pixels keep their value and are not counted. A_min in pixels (minArea ≤ 1
 * changes nothing). Output: the filtered mask, reassigned pixel count and fraction of analysed pixels.
 */
import { bitCount, packEqual, packNonZero, rowTailMask, unpackBits, wordsPerRow } from './bitPackedMask'
import { labelRuns } from './connectedComponents'
import type { BinaryMask, Connectivity } from './types'

/** Result of {@link removeSmallDomains}. */
export interface MinimumAreaResult {
  mask: BinaryMask
  /** Number of analysed pixels whose phase was flipped. */
  reassignedPixels: number
  /** reassignedPixels / analysed (non-ignored) pixels; 0 when nothing is analysed. */
  reassignedFraction: number
}

/** Packed working rows (see bitPackedMask.ts), kept for the largest image seen (never returned). */
let maskBits = new Int32Array(0)
let beforeBits = new Int32Array(0)
let analysableBits = new Int32Array(0)
let phaseBits = new Int32Array(0)
let otherBits = new Int32Array(0)

/** True when any bit x0..x1 (inclusive, x0 ≤ x1) of the packed row starting at word `row` is set. */
function anyInRange(words: Int32Array, row: number, x0: number, x1: number): boolean {
  const j0 = x0 >>> 5
  const j1 = x1 >>> 5
  const from = -1 << (x0 & 31)
  const to = -1 >>> (31 - (x1 & 31))
  if (j0 === j1) return (words[row + j0] & from & to) !== 0
  if ((words[row + j0] & from) !== 0) return true
  for (let j = j0 + 1; j < j1; j++) if (words[row + j] !== 0) return true
  return (words[row + j1] & to) !== 0
}

/** Set (on) or clear bits x0..x1 (inclusive) of the packed row starting at word `row`. */
function setRange(words: Int32Array, row: number, x0: number, x1: number, on: boolean): void {
  for (let j = x0 >>> 5, j1 = x1 >>> 5; j <= j1; j++) {
    const from = j === x0 >>> 5 ? -1 << (x0 & 31) : -1
    const to = j === j1 ? -1 >>> (31 - (x1 & 31)) : -1
    const bits = from & to
    words[row + j] = on ? words[row + j] | bits : words[row + j] & ~bits
  }
}

/**
 * Flip, in the packed up map `up`, every component of phase `value` smaller than `minArea` that shares an edge with an
 * analysed pixel of the other phase. Components are labelled on runs (labelRuns), and only the runs of small
 * components are examined and flipped. `analysable` has the non-ignored pixels set, or is null when none is ignored.
 */
function flipSmall(
  up: Int32Array,
  analysable: Int32Array | null,
  width: number,
  height: number,
  value: 0 | 1,
  connectivity: Connectivity,
  minArea: number,
): void {
  const stride = wordsPerRow(width)
  const words = stride * height
  const tailMask = rowTailMask(width)
  // The labelled phase and the analysed pixels of the other phase (padding bits 0 in both).
  for (let i = 0; i < words; i++) {
    const inRow = (i + 1) % stride === 0 ? tailMask : -1
    const allowed = analysable === null ? inRow : analysable[i]
    phaseBits[i] = (value === 1 ? up[i] : ~up[i]) & allowed
    otherBits[i] = (value === 1 ? ~up[i] : up[i]) & allowed
  }
  const { runs, count, start, end, row, label } = labelRuns(phaseBits, width, height, connectivity)
  const sizes = new Float64Array(count + 1)
  for (let i = 0; i < runs; i++) sizes[label[i]] += end[i] - start[i] + 1
  // flip[l]: 1 = below minArea, 2 = below minArea with a neighbour of the other phase (to be flipped).
  const flip = new Uint8Array(count + 1)
  let anySmall = false
  for (let l = 1; l <= count; l++) {
    if (sizes[l] < minArea) {
      flip[l] = 1
      anySmall = true
    }
  }
  if (!anySmall) return

  // Every edge neighbour of a run lies left or right of it or in the rows above and below; all are tested before
  // anything is flipped.
  const lastX = width - 1
  for (let i = 0; i < runs; i++) {
    const l = label[i]
    if (flip[l] !== 1) continue
    const s = start[i]
    const e = end[i]
    const y = row[i]
    const at = y * stride
    if (
      (s > 0 && anyInRange(otherBits, at, s - 1, s - 1)) ||
      (e < lastX && anyInRange(otherBits, at, e + 1, e + 1)) ||
      (y > 0 && anyInRange(otherBits, at - stride, s, e)) ||
      (y < height - 1 && anyInRange(otherBits, at + stride, s, e))
    ) {
      flip[l] = 2
    }
  }
  for (let i = 0; i < runs; i++) if (flip[label[i]] === 2) setRange(up, row[i] * stride, start[i], end[i], value === 0)
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
  const result: BinaryMask = { width, height, data }
  if (ignore) result.ignore = ignore
  const words = wordsPerRow(width) * height
  if (maskBits.length < words) maskBits = new Int32Array(words)
  packNonZero(mask.data, width, height, maskBits)
  const { reassignedPixels, reassignedFraction } = removeSmallDomainsPacked(maskBits, width, height, minArea, ignore)
  unpackBits(maskBits, width, height, data)
  return { mask: result, reassignedPixels, reassignedFraction }
}

/**
 * removeSmallDomains in place on a mask packed as by packNonZero (bitPackedMask.ts), for callers that keep the
 * mask packed between steps. Ignored pixels (`ignore` ≠ 0) keep their bit.
 * @returns the reassigned pixel count and fraction of analysed pixels.
 */
export function removeSmallDomainsPacked(
  up: Int32Array,
  width: number,
  height: number,
  minArea: number,
  ignore?: Uint8Array,
): { reassignedPixels: number; reassignedFraction: number } {
  const n = width * height
  let analysed = n
  if (ignore) for (let i = 0; i < ignore.length && i < n; i++) if (ignore[i] !== 0) analysed--
  // Every component has at least one pixel, so minArea ≤ 1 cannot remove anything; nor can an empty image.
  if (!(minArea > 1) || analysed === 0) return { reassignedPixels: 0, reassignedFraction: 0 }

  const words = wordsPerRow(width) * height
  if (beforeBits.length < words) {
    beforeBits = new Int32Array(words)
    analysableBits = new Int32Array(words)
    phaseBits = new Int32Array(words)
    otherBits = new Int32Array(words)
  }
  let analysable: Int32Array | null = null
  if (ignore) {
    // Pixels past the end of a short ignore map are left out of the components, as labelComponents does.
    packEqual(ignore, width, height, 0, analysableBits)
    analysable = analysableBits
  }
  beforeBits.set(up.subarray(0, words))
  flipSmall(up, analysable, width, height, 1, 8, minArea)
  flipSmall(up, analysable, width, height, 0, 4, minArea)
  // Count the final difference: an up speck flipped in step 1 and absorbed back into up in step 2 is not reassigned.
  let reassignedPixels = 0
  for (let i = 0; i < words; i++) reassignedPixels += bitCount(up[i] ^ beforeBits[i])
  return { reassignedPixels, reassignedFraction: reassignedPixels / analysed }
}
