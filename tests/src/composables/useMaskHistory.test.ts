import { describe, expect, it } from 'vitest'
import { useMaskHistory } from '@/composables/useMaskHistory'
import { countUp, fullRect, paintStroke, type MaskPlane } from '@/maskRaster'

/** Index of the first differing pixel, or −1 (a plain loop: deep equality of large typed arrays is slow). */
function firstDifference(a: Uint8Array, b: Uint8Array): number {
  if (a.length !== b.length) return 0
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return i
  return -1
}

function blank(width: number, height: number): MaskPlane {
  return { width, height, data: new Uint8Array(width * height) }
}

/**
 * Edit k: a short stroke at a place that moves with k (deterministic), in the phase opposite to the pixel it starts
 * on, so that every edit changes something.
 */
function edit(mask: MaskPlane, k: number) {
  const x = 10 + ((k * 37) % (mask.width - 20))
  const y = 10 + ((k * 53) % (mask.height - 20))
  const phase = mask.data[Math.floor(y) * mask.width + Math.floor(x)] === 1 ? 0 : 1
  return paintStroke(mask, x, y, x + 6, y + 3, 4, phase)
}

describe('useMaskHistory', () => {
  it('When 110 edits are committed, then at least 100 can be undone in order and redone again', () => {
    const mask = blank(256, 256)
    const history = useMaskHistory()
    history.reset(mask)
    const states = [mask.data.slice()]
    for (let k = 0; k < 110; k++) {
      history.commit(edit(mask, k), `edit ${k}`)
      states.push(mask.data.slice())
    }
    expect(history.undoCount.value).toBeGreaterThanOrEqual(100)

    for (let n = 1; n <= 100; n++) {
      const change = history.undo()
      expect(change?.label).toBe(`edit ${110 - n}`)
      expect(firstDifference(mask.data, states[110 - n])).toBe(-1)
    }
    expect(history.redoCount.value).toBe(100)
    for (let n = 1; n <= 100; n++) history.redo()
    expect(firstDifference(mask.data, states[110])).toBe(-1)
    expect(history.canRedo.value).toBe(false)
  })

  it('When a new edit follows an undo, then the undone step can no longer be redone', () => {
    const mask = blank(64, 64)
    const history = useMaskHistory()
    history.reset(mask)
    history.commit(edit(mask, 0), 'first')
    history.undo()
    history.commit(edit(mask, 1), 'second')
    expect(history.canRedo.value).toBe(false)
    expect(history.undoLabel.value).toBe('second')
  })

  it('When an edit and its undo are applied, then the change in up pixels is reported both ways', () => {
    const mask = blank(64, 64)
    const history = useMaskHistory()
    history.reset(mask)
    const rect = paintStroke(mask, 20, 20, 30, 20, 3, 1)
    const painted = countUp(mask.data)
    expect(history.commit(rect, 'paint')?.upDelta).toBe(painted)
    expect(history.undo()?.upDelta).toBe(-painted)
    expect(countUp(mask.data)).toBe(0)
    expect(history.redo()?.upDelta).toBe(painted)
  })

  it('When nothing in the rectangle changed, then no step is recorded', () => {
    const mask = blank(32, 32)
    const history = useMaskHistory()
    history.reset(mask)
    expect(history.commit(fullRect(mask), 'nothing')).toBeNull()
    expect(history.canUndo.value).toBe(false)
  })

  it('When a stroke is reverted before its commit, then its pixels are back and the history is unchanged', () => {
    const mask = blank(32, 32)
    const history = useMaskHistory()
    history.reset(mask)
    const rect = paintStroke(mask, 5, 5, 25, 25, 2, 1)
    history.revert(rect)
    expect(countUp(mask.data)).toBe(0)
    expect(history.canUndo.value).toBe(false)
  })

  it('When 110 strokes are made on a 2048² mask, then the history holds far less than one copy of the mask', () => {
    const mask = blank(2048, 2048)
    const history = useMaskHistory()
    history.reset(mask)
    for (let k = 0; k < 110; k++) history.commit(edit(mask, k), 'stroke')
    expect(history.undoCount.value).toBeGreaterThanOrEqual(100)
    // 110 full copies would be 110 × 4 MiB; the runs of a short stroke are a few hundred bytes.
    expect(history.bytes.value).toBeLessThan(200_000)
  })

  it('When large edits exceed the byte budget, then the oldest steps are dropped to stay within it', () => {
    const mask = blank(512, 512)
    const budget = 600 * 1024
    const history = useMaskHistory({ maxBytes: budget })
    history.reset(mask)
    // Each edit flips every other pixel of 128 rows: 128 × 256 single-pixel runs of 8 bytes = 256 KiB per step,
    // so the budget holds two steps.
    for (let k = 0; k < 6; k++) {
      for (let y = 0; y < 128; y++) for (let x = k % 2; x < 512; x += 2) mask.data[y * 512 + x] ^= 1
      history.commit(fullRect(mask), `stripes ${k}`)
      expect(history.bytes.value).toBeLessThanOrEqual(budget)
    }
    expect(history.undoCount.value).toBe(2)
    expect(history.undoLabel.value).toBe('stripes 5')
  })

  it('When there are more steps than the step limit, then the oldest are dropped', () => {
    const mask = blank(128, 128)
    const history = useMaskHistory({ maxSteps: 120 })
    history.reset(mask)
    for (let k = 0; k < 150; k++) history.commit(edit(mask, k), `edit ${k}`)
    expect(history.undoCount.value).toBe(120)
  })
})
