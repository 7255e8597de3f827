import type { Ref } from 'vue'
import { fillPolygon, type MaskEditSink, type MaskPlane, type Phase } from '@/maskRaster'
import { useClickPath, type ClickPath } from './useClickPath'
import type { Point, StageHandle } from './usePanZoom'

export interface PolygonToolOptions {
  enabled: Ref<boolean>
  pointerPosition: () => Point | null
  target: () => MaskPlane | null
  phase: Ref<Phase>
  edits: MaskEditSink
  /** How close (image px) a click must be to the first corner to close the outline; follows the zoom. */
  closeDistance: () => number
}

export type PolygonTool = ClickPath

/**
 * Outline an area corner by corner; closing it gives the inside (even-odd rule) the chosen phase as one undoable
 * step, and records the outline as a `polygon` shape.
 */
export function usePolygonTool(stageRef: Ref<StageHandle | null | undefined>, options: PolygonToolOptions): PolygonTool {
  return useClickPath(stageRef, 'polygontool', {
    enabled: options.enabled,
    pointerPosition: options.pointerPosition,
    minPoints: 3,
    closeDistance: options.closeDistance,
    mergeDistance: options.closeDistance,
    onFinish(points) {
      const mask = options.target()
      if (!mask) return false
      const phase = options.phase.value
      const rect = fillPolygon(mask, points, phase)
      // An outline that covers no pixel centre, or only pixels already of that phase, changes nothing: still done.
      if (rect) {
        options.edits.change(rect)
        options.edits.commit(rect, `Outline ${phase === 1 ? 'up' : 'down'}`, { kind: 'polygon', points: [...points], phase })
      }
      return true
    },
  })
}
