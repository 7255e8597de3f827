import { describe, expect, it } from 'vitest'
import { jumpDifferenceOverlay, OVERLAY_COLORS } from '@/jumpDifferenceOverlay'
import type { BinaryMask } from '@shared/analysis/types'

const mask = (rows: string[], ignore?: string[]): BinaryMask => ({
  width: rows[0].length,
  height: rows.length,
  data: Uint8Array.from(rows.join('').split('').map(Number)),
  ...(ignore ? { ignore: Uint8Array.from(ignore.join('').split('').map(Number)) } : {}),
})

function colorAt(rgba: Uint8ClampedArray, i: number): number[] {
  return [...rgba.subarray(i * 4, i * 4 + 3)]
}

describe('jumpDifferenceOverlay', () => {
  it('When a 3 × 3 pair has two pixels flipping down and one up, then each gets its direction colour and the rest stay grey', () => {
    // Hand-made pair: pixels 0 and 4 go 1 → 0 (up → down), pixel 8 goes 0 → 1 (down → up); the others keep their phase.
    const before = mask(['110', '010', '000'])
    const after = mask(['010', '000', '001'])
    const overlay = jumpDifferenceOverlay(before, after)!
    expect(overlay.upToDown).toBe(2)
    expect(overlay.downToUp).toBe(1)
    const expected = [
      OVERLAY_COLORS.upToDown, OVERLAY_COLORS.unchangedUp, OVERLAY_COLORS.unchangedDown,
      OVERLAY_COLORS.unchangedDown, OVERLAY_COLORS.upToDown, OVERLAY_COLORS.unchangedDown,
      OVERLAY_COLORS.unchangedDown, OVERLAY_COLORS.unchangedDown, OVERLAY_COLORS.downToUp,
    ]
    expected.forEach((color, i) => expect(colorAt(overlay.rgba, i)).toEqual([...color]))
    // Every pixel opaque.
    for (let i = 0; i < 9; i++) expect(overlay.rgba[i * 4 + 3]).toBe(255)
  })

  it('When drawn, then the two flip colours differ from each other and from the greys, and the greys are neutral', () => {
    const { upToDown, downToUp, unchangedUp, unchangedDown } = OVERLAY_COLORS
    expect(upToDown).not.toEqual(downToUp)
    for (const grey of [unchangedUp, unchangedDown]) {
      expect(grey[0]).toBe(grey[1])
      expect(grey[1]).toBe(grey[2])
      expect(upToDown).not.toEqual(grey)
      expect(downToUp).not.toEqual(grey)
    }
  })

  it('When a pixel is ignored in either mask, then it is neither counted nor coloured as a flip', () => {
    const before = mask(['10'], ['10'])
    const after = mask(['01'], ['00'])
    const overlay = jumpDifferenceOverlay(before, after)!
    expect(overlay.upToDown).toBe(0)
    expect(overlay.downToUp).toBe(1)
    expect(colorAt(overlay.rgba, 0)).toEqual([...OVERLAY_COLORS.ignored])
  })

  it('When the masks differ in size, then there is no overlay', () => {
    expect(jumpDifferenceOverlay(mask(['10']), mask(['1', '0']))).toBeNull()
  })
})
