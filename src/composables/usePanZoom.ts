import { computed, onScopeDispose, ref, toRaw, watch, type ComputedRef, type Ref } from 'vue'
import type Konva from 'konva'

/** Where the image sits on the stage: screen = image × scale + (x, y). `scale` 0 means "not placed yet". */
export interface PanZoomView {
  scale: number
  x: number
  y: number
}

export interface Point {
  x: number
  y: number
}

/** A straight line between two points (e.g. one drawn along a scale bar, in image pixels). */
export interface Segment {
  start: Point
  end: Point
}

export interface Size {
  width: number
  height: number
}

/** What usePanZoom needs of a stage: the vue-konva `<v-stage>` ref (or anything else that hands out the stage). */
export interface StageHandle {
  getStage(): Konva.Stage
}

export interface PanZoomOptions {
  /** The image's size in pixels; `null` until it is known. */
  contentSize: Ref<Size | null>
  /** The view to drive; pass the same ref to two stages to link their zoom and pan. */
  view?: Ref<PanZoomView>
  /** Dragging pans while this is true (switch it off while a tool uses the mouse). */
  panEnabled?: Ref<boolean>
  minScale?: number
  maxScale?: number
  /** Zoom factor per wheel notch. */
  wheelStep?: number
  /** Screen pixels left around the image by `fit`. */
  fitPadding?: number
}

export interface PanZoom {
  view: Ref<PanZoomView>
  scale: ComputedRef<number>
  /** Zoom by `factor` keeping the image point under `point` (stage coordinates) where it is. */
  zoomAt: (point: Point, factor: number) => void
  /** Zoom by `factor` around the middle of the stage. */
  zoomBy: (factor: number) => void
  /** The whole image, as large as fits, centred. */
  fit: () => void
  /** One image pixel per screen pixel, keeping the middle of the stage where it is. */
  actualSize: () => void
  panBy: (dx: number, dy: number) => void
  /** Stage coordinates → image pixel coordinates (continuous; pixel (i, j) covers [i, i+1) × [j, j+1)). */
  toImage: (point: Point) => Point
  /** The image point under the mouse, or null when the mouse is not over the stage. */
  pointerImagePosition: () => Point | null
}

/**
 * Wheel zoom around the cursor, drag to pan, fit and 1:1 for a Konva stage. The view is plain state (scale and
 * offset) written onto the stage, so two stages can share it and the maths can be tested without a store.
 */
export function usePanZoom(stageRef: Ref<StageHandle | null | undefined>, options: PanZoomOptions): PanZoom {
  const view = options.view ?? ref<PanZoomView>({ scale: 0, x: 0, y: 0 })
  const minScale = options.minScale ?? 0.02
  const maxScale = options.maxScale ?? 64
  const wheelStep = options.wheelStep ?? 1.2
  const fitPadding = options.fitPadding ?? 16
  const scale = computed(() => view.value.scale)

  const stage = (): Konva.Stage | null => stageRef.value?.getStage() ?? null
  const viewport = (): Size => {
    const s = stage()
    return s ? { width: s.width(), height: s.height() } : { width: 0, height: 0 }
  }
  const clampScale = (value: number) => Math.min(maxScale, Math.max(minScale, value))

  function toImage(point: Point): Point {
    const { scale: s, x, y } = view.value
    return { x: (point.x - x) / s, y: (point.y - y) / s }
  }

  function zoomAt(point: Point, factor: number): void {
    const current = view.value
    if (!(current.scale > 0)) return
    const anchor = toImage(point)
    const next = clampScale(current.scale * factor)
    view.value = { scale: next, x: point.x - anchor.x * next, y: point.y - anchor.y * next }
  }

  function zoomBy(factor: number): void {
    const { width, height } = viewport()
    zoomAt({ x: width / 2, y: height / 2 }, factor)
  }

  /** The view `fit` last produced; while it is still the view, a resized stage fits again. */
  let fittedView: PanZoomView | null = null

  function fit(): void {
    const content = options.contentSize.value
    const { width, height } = viewport()
    if (!content || width <= 0 || height <= 0) return
    const room = (available: number) => Math.max(1, available - 2 * fitPadding)
    const next = clampScale(Math.min(room(width) / content.width, room(height) / content.height))
    view.value = { scale: next, x: (width - content.width * next) / 2, y: (height - content.height * next) / 2 }
    fittedView = toRaw(view.value)
  }

  function onResize(): void {
    if (!(view.value.scale > 0) || (fittedView !== null && toRaw(view.value) === fittedView)) fit()
  }

  function actualSize(): void {
    if (!(view.value.scale > 0)) return fit()
    zoomBy(1 / view.value.scale)
  }

  function panBy(dx: number, dy: number): void {
    view.value = { ...view.value, x: view.value.x + dx, y: view.value.y + dy }
  }

  function pointerImagePosition(): Point | null {
    const pointer = stage()?.getPointerPosition()
    return pointer && view.value.scale > 0 ? toImage(pointer) : null
  }

  function apply(s: Konva.Stage): void {
    const { scale: k, x, y } = view.value
    if (!(k > 0)) return
    if (s.scaleX() === k && s.x() === x && s.y() === y) return
    s.scale({ x: k, y: k })
    s.position({ x, y })
    s.batchDraw()
  }

  function onWheel(event: Konva.KonvaEventObject<WheelEvent>): void {
    event.evt.preventDefault()
    const pointer = event.target.getStage()?.getPointerPosition()
    if (!pointer || event.evt.deltaY === 0) return
    zoomAt(pointer, event.evt.deltaY < 0 ? wheelStep : 1 / wheelStep)
  }

  function onDrag(event: Konva.KonvaEventObject<DragEvent>): void {
    // Only the stage itself pans; shapes that are dragged (none yet) must not move the view.
    const s = event.target
    if (s !== stage()) return
    view.value = { scale: view.value.scale, x: s.x(), y: s.y() }
  }

  let attached: Konva.Stage | null = null
  function detach(): void {
    attached?.off('.panzoom')
    attached = null
  }

  watch(
    () => stage(),
    (s) => {
      if (s === attached) return
      detach()
      if (!s) return
      attached = s
      s.draggable(options.panEnabled?.value ?? true)
      s.on('wheel.panzoom', onWheel)
      s.on('dragmove.panzoom dragend.panzoom', onDrag)
      s.on('widthChange.panzoom heightChange.panzoom', onResize)
      if (!(view.value.scale > 0)) fit()
      apply(s)
    },
    { immediate: true, flush: 'post' },
  )
  watch(
    view,
    () => {
      const s = stage()
      if (s) apply(s)
    },
    { deep: true, flush: 'sync' },
  )
  watch(
    () => options.panEnabled?.value ?? true,
    (enabled) => stage()?.draggable(enabled),
  )
  // Place the image as soon as its size is known (the stage often exists first).
  watch(options.contentSize, (content, previous) => {
    if (content && (!(view.value.scale > 0) || !previous)) fit()
  })
  onScopeDispose(detach)

  return { view, scale, zoomAt, zoomBy, fit, actualSize, panBy, toImage, pointerImagePosition }
}
