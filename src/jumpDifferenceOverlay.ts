/**
 * The pixels that flipped between two frames of a run, as an RGBA image for a canvas: up→down in blue, down→up in
 * orange (Okabe–Ito, distinguishable with the common colour-vision deficiencies), the unchanged domains in two greys
 * (light = up, dark = down) so the flips are seen against the domain pattern, ignored pixels near-white.
 * This is the spatial side of METHODS §5.3 (flipped set B_i XOR B_{i+1}, split by direction); the cluster sizes
 * themselves come from the run's summary, computed by the engine.
 */
import type { BinaryMask } from '@shared/analysis/types'
import { OKABE_ITO, rgbOf } from '@/colorBlindPalette'

export const OVERLAY_COLORS = {
  upToDown: rgbOf(OKABE_ITO.blue),
  downToUp: rgbOf(OKABE_ITO.orange),
  unchangedUp: [200, 200, 200] as [number, number, number],
  unchangedDown: [105, 105, 105] as [number, number, number],
  ignored: [245, 245, 245] as [number, number, number],
} as const

export interface JumpDifferenceOverlay {
  width: number
  height: number
  /** width × height × 4 bytes, ready for `new ImageData(rgba, width, height)`. */
  rgba: Uint8ClampedArray
  /** Pixels that went from up (1) to down (0), and the reverse. */
  upToDown: number
  downToUp: number
}

/**
 * Colour the difference of two masks of the same size.
 * @returns null when the sizes differ (masks of different images cannot be compared pixel by pixel).
 */
export function jumpDifferenceOverlay(before: BinaryMask, after: BinaryMask): JumpDifferenceOverlay | null {
  if (before.width !== after.width || before.height !== after.height) return null
  const n = before.width * before.height
  const rgba = new Uint8ClampedArray(n * 4)
  let upToDown = 0
  let downToUp = 0
  const a = before.data
  const b = after.data
  const ignoreA = before.ignore
  const ignoreB = after.ignore
  for (let i = 0; i < n; i++) {
    let color: readonly number[]
    if ((ignoreA && ignoreA[i]) || (ignoreB && ignoreB[i])) color = OVERLAY_COLORS.ignored
    else if (a[i] && !b[i]) {
      color = OVERLAY_COLORS.upToDown
      upToDown++
    } else if (!a[i] && b[i]) {
      color = OVERLAY_COLORS.downToUp
      downToUp++
    } else color = a[i] ? OVERLAY_COLORS.unchangedUp : OVERLAY_COLORS.unchangedDown
    const o = i * 4
    rgba[o] = color[0]
    rgba[o + 1] = color[1]
    rgba[o + 2] = color[2]
    rgba[o + 3] = 255
  }
  return { width: before.width, height: before.height, rgba, upToDown, downToUp }
}
