import { onScopeDispose, ref, shallowRef, watch, type Ref, type ShallowRef } from 'vue'
import { paintStroke, unionRect, type MaskEditSink, type MaskPlane, type Phase, type PixelRect } from '@/maskRaster'
import type { Point, StageHandle } from './usePanZoom'
import { useStageEvents, type StagePointerEvent } from './useStageEvents'

export interface BrushToolOptions {
  /** The tool paints only while this is true. */
  enabled: Ref<boolean>
  /** The pointer in image pixel coordinates, or null off the stage. */
  pointerPosition: () => Point | null
  /** The mask edited in place (null while none is loaded). */
  target: () => MaskPlane | null
  phase: Ref<Phase>
  /** Tip diameter, image px. */
  size: Ref<number>
  edits: MaskEditSink
  /** Schedules work for the next screen refresh; tests pass a synchronous one. */
  requestFrame?: (callback: () => void) => number
}

export interface BrushTool {
  /** Where the tip is drawn (follows the pointer over the stage). */
  cursor: ShallowRef<Point | null>
  painting: Ref<boolean>
  /** One dab at `point` as its own undoable step (the keyboard's "apply here"). */
  dabAt: (point: Point) => void
  /** Abandon the stroke in progress and put its pixels back (Esc). */
  cancel: () => void
  /** Paint the pointer positions queued for the next frame now. */
  flush: () => void
}

const phaseName = (phase: Phase) => (phase === 1 ? 'up' : 'down')

/**
 * The round paint tip: press and drag to paint the chosen phase. Pointer moves are queued and painted once per
 * screen refresh (as swept discs between successive positions, so fast strokes leave no gaps); the canvas is told
 * only the rectangle that changed, and the whole stroke becomes one undoable step on release.
 */
export function useBrushTool(stageRef: Ref<StageHandle | null | undefined>, options: BrushToolOptions): BrushTool {
  const cursor = shallowRef<Point | null>(null)
  const painting = ref(false)
  const requestFrame = options.requestFrame ?? ((callback: () => void) => window.requestAnimationFrame(callback))
  let last: Point | null = null
  let queued: Point[] = []
  let frameRequested = false
  let strokeRect: PixelRect | null = null

  const radius = () => Math.max(0, options.size.value / 2)

  function paintTo(point: Point): void {
    const mask = options.target()
    if (!mask) return
    const from = last ?? point
    const rect = paintStroke(mask, from.x, from.y, point.x, point.y, radius(), options.phase.value)
    last = point
    if (rect) {
      strokeRect = unionRect(strokeRect, rect)
      options.edits.change(rect)
    }
  }

  function flush(): void {
    frameRequested = false
    const points = queued
    queued = []
    for (const point of points) paintTo(point)
  }

  function schedule(): void {
    if (frameRequested) return
    frameRequested = true
    requestFrame(() => {
      if (frameRequested) flush()
    })
  }

  function finish(): void {
    window.removeEventListener('pointerup', finish)
    if (!painting.value) return
    flush()
    painting.value = false
    last = null
    const rect = strokeRect
    strokeRect = null
    if (rect) options.edits.commit(rect, `Paint ${phaseName(options.phase.value)}`)
  }

  function down(event: StagePointerEvent): void {
    if (!options.enabled.value || event.evt.button !== 0 || painting.value) return
    const point = options.pointerPosition()
    if (!point || !options.target()) return
    painting.value = true
    strokeRect = null
    last = null
    paintTo(point)
    // Releasing the button outside the stage still ends the stroke.
    window.addEventListener('pointerup', finish)
  }

  function move(): void {
    const point = options.pointerPosition()
    cursor.value = options.enabled.value ? point : null
    if (!painting.value || !point) return
    queued.push(point)
    schedule()
  }

  function dabAt(point: Point): void {
    if (!options.enabled.value || painting.value) return
    last = null
    strokeRect = null
    paintTo(point)
    last = null
    const rect = strokeRect
    strokeRect = null
    if (rect) options.edits.commit(rect, `Paint ${phaseName(options.phase.value)}`)
  }

  function cancel(): void {
    window.removeEventListener('pointerup', finish)
    queued = []
    frameRequested = false
    painting.value = false
    last = null
    if (strokeRect) options.edits.revert(strokeRect)
    strokeRect = null
  }

  useStageEvents(stageRef, 'brushtool', { pointerdown: down, pointermove: move, pointerup: finish })
  watch(options.enabled, (on) => {
    if (!on) {
      // Switching tools mid-stroke keeps what was painted so far, as its own step.
      finish()
      cursor.value = null
    }
  })
  onScopeDispose(() => window.removeEventListener('pointerup', finish))

  return { cursor, painting, dabAt, cancel, flush }
}
