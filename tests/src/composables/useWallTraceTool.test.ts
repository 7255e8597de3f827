import { afterEach, describe, expect, it } from 'vitest'
import { nextTick, ref } from 'vue'
import { labelComponents } from '@shared/analysis/connectedComponents'
import type { AnnotationShape } from '@shared/types/annotation'
import { useWallTraceTool } from '@/composables/useWallTraceTool'
import type { MaskEditSink, MaskPlane } from '@/maskRaster'
import { stageHarness } from './stageHarness'

let harness: ReturnType<typeof stageHarness>
afterEach(() => harness.dispose())

describe('useWallTraceTool', () => {
  it('When a wall is traced across an up domain and finished by double click, then the domain is split in one step', async () => {
    harness = stageHarness()
    const mask: MaskPlane = { width: 40, height: 30, data: new Uint8Array(1200).fill(1) }
    const shapes: (AnnotationShape | undefined)[] = []
    const edits: MaskEditSink = { change: () => {}, commit: (_rect, _label, shape) => shapes.push(shape), revert: () => {} }
    const tool = harness.run(() => useWallTraceTool(harness.stageRef, { enabled: ref(true), pointerPosition: harness.pointerPosition, target: () => mask, edits, mergeDistance: () => 0.5 }))
    await nextTick()
    for (const [x, y] of [
      [0, 3],
      [20.5, 15.2],
      [40, 27],
      [40, 27],
    ]) {
      harness.fire('pointerdown', { x, y })
      harness.fire('pointerup', { x, y })
    }
    harness.fire('pointerdblclick', { x: 40, y: 27 })
    expect(shapes).toEqual([{ kind: 'wall-trace', points: [0, 3, 20.5, 15.2, 40, 27], phase: 0 }])
    // Up domains are 8-connected in the engine: the 1 px edge-connected line still separates them.
    expect(labelComponents(mask.data, 40, 30, 8, 1).count).toBe(2)
    expect(tool.points.value).toEqual([])
  })
})
