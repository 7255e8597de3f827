import { shallowRef, watch, type Ref, type ShallowRef } from 'vue'
import type { Point, StageHandle } from './usePanZoom'
import { useStageEvents, type StagePointerEvent } from './useStageEvents'

export interface ClickPathOptions {
  enabled: Ref<boolean>
  pointerPosition: () => Point | null
  /** Fewest points a finished path has (3 for an area, 2 for a line). */
  minPoints: number
  /** A click this close (image px) to the first point closes the path; omit for open paths. */
  closeDistance?: () => number
  /** Two points closer than this (image px) from one double click count as one (default 1). */
  mergeDistance?: () => number
  /** The finished path (x0, y0, x1, y1, …); return false to keep drawing (nothing was applied). */
  onFinish: (points: number[]) => boolean
}

export interface ClickPath {
  /** The points placed so far (x0, y0, x1, y1, …). */
  points: ShallowRef<number[]>
  /** The pointer, for the rubber band from the last point. */
  hover: ShallowRef<Point | null>
  addPoint: (point: Point) => void
  removeLast: () => void
  /** Apply the path if it has enough points; returns whether it did. */
  finish: () => boolean
  cancel: () => void
}

/**
 * Place points one click at a time (outline or wall trace); Enter, a double click or (for closed paths) a click on
 * the first point finishes, through the commands the canvas binds to its keys.
 */
export function useClickPath(stageRef: Ref<StageHandle | null | undefined>, namespace: string, options: ClickPathOptions): ClickPath {
  const points = shallowRef<number[]>([])
  const hover = shallowRef<Point | null>(null)

  function finish(): boolean {
    if (points.value.length / 2 < options.minPoints) return false
    const done = options.onFinish(points.value)
    if (done) points.value = []
    return done
  }

  function cancel(): void {
    points.value = []
  }

  function nearFirst(point: Point): boolean {
    const limit = options.closeDistance?.()
    if (limit === undefined || points.value.length / 2 < options.minPoints) return false
    return Math.hypot(point.x - points.value[0], point.y - points.value[1]) <= limit
  }

  function addPoint(point: Point): void {
    if (!options.enabled.value) return
    if (nearFirst(point)) {
      finish()
      return
    }
    points.value = [...points.value, point.x, point.y]
  }

  function removeLast(): void {
    points.value = points.value.slice(0, -2)
  }

  function down(event: StagePointerEvent): void {
    if (event.evt.button !== 0) return
    const point = options.pointerPosition()
    if (point) addPoint(point)
  }

  function move(): void {
    hover.value = options.enabled.value ? options.pointerPosition() : null
  }

  function doubleClick(): void {
    if (!options.enabled.value) return
    // The second click of a double click placed a point on top of the previous one: drop it before finishing.
    const p = points.value
    const n = p.length
    if (n >= 4 && Math.hypot(p[n - 2] - p[n - 4], p[n - 1] - p[n - 3]) <= (options.mergeDistance?.() ?? 1)) points.value = p.slice(0, -2)
    finish()
  }

  useStageEvents(stageRef, namespace, { pointerdown: down, pointermove: move, pointerdblclick: doubleClick })
  watch(options.enabled, (on) => {
    if (!on) {
      cancel()
      hover.value = null
    }
  })

  return { points, hover, addPoint, removeLast, finish, cancel }
}
