import { onScopeDispose, shallowRef, watch, type Ref, type ShallowRef } from 'vue'
import type Konva from 'konva'
import type { Point, Segment, StageHandle } from './usePanZoom'

export interface LineToolOptions {
  /** The tool draws only while this is true (and the stage should not pan meanwhile). */
  enabled: Ref<boolean>
  /** The pointer in the coordinates the line is wanted in (image pixels), or null off the stage. */
  pointerPosition: () => Point | null
  /** A finished line: pressed at one end, released at the other. */
  onLine: (segment: Segment) => void
  /** Shorter drags are clicks, not lines (same units as `pointerPosition`). */
  minLength?: number
}

export interface LineTool {
  /** The line being drawn or last drawn, for the stage to show. */
  draft: ShallowRef<Segment | null>
  clear: () => void
}

/** Shift keeps the line horizontal or vertical, as scale bars are. */
function straightened(start: Point, end: Point): Point {
  return Math.abs(end.x - start.x) >= Math.abs(end.y - start.y) ? { x: end.x, y: start.y } : { x: start.x, y: end.y }
}

/**
 * Draw one straight line on a Konva stage by dragging (e.g. along a scale bar to calibrate). The line is reported
 * through `onLine`, so the tool can be tested without a store or a dialog.
 */
export function useLineTool(stageRef: Ref<StageHandle | null | undefined>, options: LineToolOptions): LineTool {
  const draft = shallowRef<Segment | null>(null)
  const minLength = options.minLength ?? 2
  let drawing = false

  function down(): void {
    if (!options.enabled.value) return
    const point = options.pointerPosition()
    if (!point) return
    drawing = true
    draft.value = { start: point, end: point }
    // Releasing the button outside the stage still ends the line.
    window.addEventListener('pointerup', up, { once: true })
  }

  function move(event: Konva.KonvaEventObject<PointerEvent>): void {
    if (!drawing || !draft.value) return
    const point = options.pointerPosition()
    if (!point) return
    const { start } = draft.value
    draft.value = { start, end: event.evt.shiftKey ? straightened(start, point) : point }
  }

  function up(): void {
    if (!drawing || !draft.value) return
    drawing = false
    window.removeEventListener('pointerup', up)
    const { start, end } = draft.value
    if (Math.hypot(end.x - start.x, end.y - start.y) < minLength) draft.value = null
    else options.onLine(draft.value)
  }

  function clear(): void {
    drawing = false
    draft.value = null
  }

  let attached: Konva.Stage | null = null
  function detach(): void {
    attached?.off('.linetool')
    attached = null
  }

  watch(
    () => stageRef.value?.getStage() ?? null,
    (stage) => {
      if (stage === attached) return
      detach()
      if (!stage) return
      attached = stage
      stage.on('pointerdown.linetool', down)
      stage.on('pointermove.linetool', move)
      stage.on('pointerup.linetool', up)
    },
    { immediate: true, flush: 'post' },
  )
  watch(options.enabled, (on) => {
    if (!on) clear()
  })
  onScopeDispose(() => {
    detach()
    window.removeEventListener('pointerup', up)
  })

  return { draft, clear }
}
