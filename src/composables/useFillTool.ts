import type { Ref } from 'vue'
import { floodFill, type MaskEditSink, type MaskPlane, type Phase } from '@/maskRaster'
import type { Point, StageHandle } from './usePanZoom'
import { useStageEvents, type StagePointerEvent } from './useStageEvents'

export interface FillToolOptions {
  enabled: Ref<boolean>
  pointerPosition: () => Point | null
  target: () => MaskPlane | null
  phase: Ref<Phase>
  edits: MaskEditSink
}

export interface FillTool {
  /** Give the domain under `point` the chosen phase; returns false when nothing changed (already that phase). */
  fillAt: (point: Point) => boolean
}

/**
 * Click a domain to give its whole edge-connected (4-connected) area the chosen phase, as one undoable step.
 */
export function useFillTool(stageRef: Ref<StageHandle | null | undefined>, options: FillToolOptions): FillTool {
  function fillAt(point: Point): boolean {
    const mask = options.target()
    if (!options.enabled.value || !mask) return false
    const rect = floodFill(mask, point.x, point.y, options.phase.value)
    if (!rect) return false
    options.edits.change(rect)
    options.edits.commit(rect, `Fill domain ${options.phase.value === 1 ? 'up' : 'down'}`)
    return true
  }

  function down(event: StagePointerEvent): void {
    if (event.evt.button !== 0) return
    const point = options.pointerPosition()
    if (point) fillAt(point)
  }

  useStageEvents(stageRef, 'filltool', { pointerdown: down })
  return { fillAt }
}
