import { afterEach, describe, expect, it } from 'vitest'
import { effectScope, ref, shallowRef, type EffectScope } from 'vue'
import Konva from 'konva'
import { useLineTool } from '@/composables/useLineTool'
import type { Point, Segment } from '@/composables/usePanZoom'

const scopes: EffectScope[] = []

/** A real stage; the pointer position the tool reads is set by the test, as pan/zoom would report it. */
function setUp(enabled = true) {
  const container = document.createElement('div')
  document.body.appendChild(container)
  const stage = new Konva.Stage({ container, width: 400, height: 300 })
  let pointer: Point | null = null
  const lines: Segment[] = []
  const on = ref(enabled)
  const scope = effectScope()
  scopes.push(scope)
  const tool = scope.run(() =>
    useLineTool(shallowRef({ getStage: () => stage }), { enabled: on, pointerPosition: () => pointer, onLine: (s) => lines.push(s) }),
  )!
  const fire = (type: 'pointerdown' | 'pointermove' | 'pointerup', at: Point, shiftKey = false) => {
    pointer = at
    stage.fire(type, { evt: new MouseEvent(type, { shiftKey }) as PointerEvent })
  }
  return { tool, lines, on, fire }
}

afterEach(() => {
  for (const scope of scopes.splice(0)) scope.stop()
})

describe('useLineTool', () => {
  it('When the person drags from one end to the other, then one line with both ends is reported', () => {
    const { tool, lines, fire } = setUp()
    fire('pointerdown', { x: 10.5, y: 20 })
    fire('pointermove', { x: 60, y: 22 })
    fire('pointerup', { x: 110.5, y: 20 })
    expect(lines).toEqual([{ start: { x: 10.5, y: 20 }, end: { x: 60, y: 22 } }])
    expect(tool.draft.value).toEqual(lines[0])
  })

  it('When Shift is held, then the line stays horizontal or vertical, whichever is closer', () => {
    const { lines, fire } = setUp()
    fire('pointerdown', { x: 10, y: 20 })
    fire('pointermove', { x: 90, y: 31 }, true)
    fire('pointerup', { x: 90, y: 31 })
    fire('pointerdown', { x: 10, y: 20 })
    fire('pointermove', { x: 14, y: 80 }, true)
    fire('pointerup', { x: 14, y: 80 })
    expect(lines.map((l) => l.end)).toEqual([
      { x: 90, y: 20 },
      { x: 10, y: 80 },
    ])
  })

  it('When the button is released outside the stage, then the line still ends', () => {
    const { lines, fire } = setUp()
    fire('pointerdown', { x: 0, y: 0 })
    fire('pointermove', { x: 30, y: 40 })
    window.dispatchEvent(new MouseEvent('pointerup'))
    expect(lines).toEqual([{ start: { x: 0, y: 0 }, end: { x: 30, y: 40 } }])
  })

  it('When the drag is shorter than the minimum or the tool is off, then nothing is reported', () => {
    const { tool, lines, on, fire } = setUp()
    fire('pointerdown', { x: 5, y: 5 })
    fire('pointermove', { x: 6, y: 6 })
    fire('pointerup', { x: 6, y: 6 })
    expect(tool.draft.value).toBeNull()

    on.value = false
    fire('pointerdown', { x: 5, y: 5 })
    fire('pointermove', { x: 90, y: 5 })
    fire('pointerup', { x: 90, y: 5 })
    expect(lines).toEqual([])
    expect(tool.draft.value).toBeNull()
  })
})
