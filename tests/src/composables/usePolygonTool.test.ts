import { afterEach, describe, expect, it } from 'vitest'
import { nextTick, ref } from 'vue'
import type { AnnotationShape } from '@shared/types/annotation'
import { usePolygonTool } from '@/composables/usePolygonTool'
import { countUp, type MaskEditSink, type MaskPlane, type Phase, type PixelRect } from '@/maskRaster'
import { stageHarness } from './stageHarness'

let harness: ReturnType<typeof stageHarness>
afterEach(() => harness.dispose())

function setUp() {
  harness = stageHarness()
  const mask: MaskPlane = { width: 20, height: 20, data: new Uint8Array(400) }
  const commits: { rect: PixelRect; label: string; shape?: AnnotationShape }[] = []
  const edits: MaskEditSink = { change: () => {}, commit: (rect, label, shape) => commits.push({ rect, label, shape }), revert: () => {} }
  const tool = harness.run(() =>
    usePolygonTool(harness.stageRef, { enabled: ref(true), pointerPosition: harness.pointerPosition, target: () => mask, phase: ref<Phase>(1), edits, closeDistance: () => 1 }),
  )
  return { tool, mask, commits }
}

describe('usePolygonTool', () => {
  it('When four corners are clicked and the first is clicked again, then the square takes the phase as one step with its outline', async () => {
    const { tool, mask, commits } = setUp()
    await nextTick()
    for (const [x, y] of [
      [4, 4],
      [12, 4],
      [12, 10],
      [4, 10],
      [4.3, 4.2],
    ]) {
      harness.fire('pointerdown', { x, y })
      harness.fire('pointerup', { x, y })
    }
    expect(countUp(mask.data)).toBe(8 * 6)
    expect(commits).toHaveLength(1)
    expect(commits[0].shape).toEqual({ kind: 'polygon', points: [4, 4, 12, 4, 12, 10, 4, 10], phase: 1 })
    expect(tool.points.value).toEqual([])
  })

  it('When Enter is pressed with two corners, then nothing happens; Esc drops the outline', () => {
    const { tool, mask } = setUp()
    tool.addPoint({ x: 2, y: 2 })
    tool.addPoint({ x: 9, y: 2 })
    expect(tool.finish()).toBe(false)
    expect(tool.points.value).toHaveLength(4)
    tool.cancel()
    expect(tool.points.value).toEqual([])
    expect(countUp(mask.data)).toBe(0)
  })

  it('When the keyboard places three corners, removes one and finishes, then the triangle left is filled', () => {
    const { tool, mask, commits } = setUp()
    for (const point of [
      { x: 1, y: 1 },
      { x: 15, y: 1 },
      { x: 19, y: 19 },
      { x: 1, y: 15 },
    ])
      tool.addPoint(point)
    tool.removeLast()
    expect(tool.finish()).toBe(true)
    expect(commits).toHaveLength(1)
    expect(countUp(mask.data)).toBeGreaterThan(50)
  })
})
