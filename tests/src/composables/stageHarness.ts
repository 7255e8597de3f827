import { effectScope, shallowRef, type EffectScope } from 'vue'
import Konva from 'konva'
import type { Point, StageHandle } from '@/composables/usePanZoom'

/**
 * A real Konva stage for tool tests; the pointer position the tools read is set by `fire`, as pan/zoom would report
 * it in image pixels.
 */
export function stageHarness() {
  const container = document.createElement('div')
  document.body.appendChild(container)
  const stage = new Konva.Stage({ container, width: 400, height: 300 })
  const stageRef = shallowRef<StageHandle>({ getStage: () => stage })
  const scope: EffectScope = effectScope()
  let pointer: Point | null = null
  const fire = (type: 'pointerdown' | 'pointermove' | 'pointerup' | 'pointerdblclick', at: Point, button = 0) => {
    pointer = at
    stage.fire(type, { evt: new MouseEvent(type, { button }) as PointerEvent })
  }
  return {
    stageRef,
    pointerPosition: () => pointer,
    fire,
    run: <T>(setup: () => T): T => scope.run(setup)!,
    dispose: () => {
      scope.stop()
      stage.destroy()
      container.remove()
    },
  }
}
