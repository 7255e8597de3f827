import type { Ref } from 'vue'
import { drawWallLine, type MaskEditSink, type MaskPlane } from '@/maskRaster'
import { useClickPath, type ClickPath } from './useClickPath'
import type { Point, StageHandle } from './usePanZoom'

export interface WallTraceToolOptions {
  enabled: Ref<boolean>
  pointerPosition: () => Point | null
  target: () => MaskPlane | null
  edits: MaskEditSink
  /** Line width, px (1 or 2). */
  thickness?: Ref<1 | 2>
  /** A double click's two points closer than this (image px) count as one; follows the zoom. */
  mergeDistance?: () => number
}

export type WallTraceTool = ClickPath

/**
 * Trace a wall point by point; finishing draws an edge-connected line of the down phase along it, which splits the
 * up domains it crosses (one undoable step, recorded as a `wall-trace` shape).
 */
export function useWallTraceTool(stageRef: Ref<StageHandle | null | undefined>, options: WallTraceToolOptions): WallTraceTool {
  return useClickPath(stageRef, 'walltracetool', {
    enabled: options.enabled,
    pointerPosition: options.pointerPosition,
    minPoints: 2,
    mergeDistance: options.mergeDistance,
    onFinish(points) {
      const mask = options.target()
      if (!mask) return false
      const rect = drawWallLine(mask, points, 0, options.thickness?.value ?? 1)
      if (rect) {
        options.edits.change(rect)
        options.edits.commit(rect, 'Trace wall', { kind: 'wall-trace', points: [...points], phase: 0 })
      }
      return true
    },
  })
}
