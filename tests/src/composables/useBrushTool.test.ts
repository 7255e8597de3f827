import { afterEach, describe, expect, it } from 'vitest'
import { nextTick, ref } from 'vue'
import { useBrushTool } from '@/composables/useBrushTool'
import { countUp, type MaskEditSink, type MaskPlane, type Phase, type PixelRect } from '@/maskRaster'
import { stageHarness } from './stageHarness'

let harness: ReturnType<typeof stageHarness>
afterEach(() => harness.dispose())

function setUp(phaseValue: Phase = 1) {
  harness = stageHarness()
  const mask: MaskPlane = { width: 100, height: 60, data: new Uint8Array(100 * 60) }
  const changes: PixelRect[] = []
  const commits: { rect: PixelRect; label: string }[] = []
  const reverted: PixelRect[] = []
  const edits: MaskEditSink = {
    change: (rect) => changes.push(rect),
    commit: (rect, label) => commits.push({ rect, label }),
    revert: (rect) => reverted.push(rect),
  }
  const enabled = ref(true)
  const phase = ref<Phase>(phaseValue)
  const tool = harness.run(() =>
    useBrushTool(harness.stageRef, { enabled, pointerPosition: harness.pointerPosition, target: () => mask, phase, size: ref(6), edits, requestFrame: (callback) => (callback(), 0) }),
  )
  return { tool, mask, changes, commits, reverted, enabled }
}

describe('useBrushTool', () => {
  it('When the person drags across the stage, then a continuous band is painted and the stroke is one step', async () => {
    const { mask, changes, commits } = setUp()
    await nextTick()
    harness.fire('pointerdown', { x: 10, y: 30 })
    harness.fire('pointermove', { x: 50, y: 30 })
    harness.fire('pointermove', { x: 90, y: 30 })
    harness.fire('pointerup', { x: 90, y: 30 })
    for (let x = 10; x < 90; x++) expect(mask.data[30 * 100 + x]).toBe(1)
    expect(changes.length).toBeGreaterThanOrEqual(2)
    expect(commits).toHaveLength(1)
    expect(commits[0].label).toBe('Paint up')
    expect(commits[0].rect).toEqual({ x0: 7, y0: 27, x1: 93, y1: 33 })
  })

  it('When Esc cancels a stroke, then its pixels are handed back for reverting and no step is recorded', async () => {
    const { tool, commits, reverted } = setUp()
    await nextTick()
    harness.fire('pointerdown', { x: 10, y: 10 })
    harness.fire('pointermove', { x: 30, y: 10 })
    tool.cancel()
    harness.fire('pointerup', { x: 30, y: 10 })
    expect(reverted).toHaveLength(1)
    expect(commits).toHaveLength(0)
  })

  it('When the tool is off or another button is pressed, then nothing is painted', async () => {
    const { mask, enabled } = setUp()
    await nextTick()
    harness.fire('pointerdown', { x: 10, y: 10 }, 1)
    harness.fire('pointerup', { x: 10, y: 10 }, 1)
    enabled.value = false
    await nextTick()
    harness.fire('pointerdown', { x: 20, y: 20 })
    harness.fire('pointerup', { x: 20, y: 20 })
    expect(countUp(mask.data)).toBe(0)
  })

  it('When the keyboard applies the tool, then one dab is its own step', () => {
    const { tool, mask, commits } = setUp(0)
    mask.data.fill(1)
    tool.dabAt({ x: 50.5, y: 30.5 })
    expect(commits.map((c) => c.label)).toEqual(['Paint down'])
    expect(mask.data[30 * 100 + 50]).toBe(0)
  })
})
