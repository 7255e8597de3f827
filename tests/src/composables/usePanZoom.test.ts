import { afterEach, describe, expect, it } from 'vitest'
import { effectScope, ref, shallowRef, type EffectScope } from 'vue'
import Konva from 'konva'
import { usePanZoom, type PanZoomOptions, type PanZoomView, type Size } from '@/composables/usePanZoom'

const scopes: EffectScope[] = []

/** A real Konva stage of the given size in the (happy-dom) page, driven by usePanZoom inside its own effect scope. */
function setUp(stageSize: Size, content: Size, options: Partial<PanZoomOptions> = {}) {
  const container = document.createElement('div')
  document.body.appendChild(container)
  const stage = new Konva.Stage({ container, ...stageSize })
  const scope = effectScope()
  scopes.push(scope)
  const panZoom = scope.run(() => usePanZoom(shallowRef({ getStage: () => stage }), { contentSize: ref(content), fitPadding: 0, ...options }))!
  return { stage, panZoom }
}

afterEach(() => {
  for (const scope of scopes.splice(0)) scope.stop()
})

describe('usePanZoom', () => {
  it('When the stage appears, then the image is fitted: the limiting side fills the stage and the other is centred', () => {
    // 800×600 stage, 1000×500 image: width limits, 800/1000 = 0.8; the 400-px-high image sits (600 − 400)/2 = 100 down.
    const { stage, panZoom } = setUp({ width: 800, height: 600 }, { width: 1000, height: 500 })
    expect(panZoom.view.value).toEqual({ scale: 0.8, x: 0, y: 100 })
    expect([stage.scaleX(), stage.x(), stage.y()]).toEqual([0.8, 0, 100])
  })

  it('When fitting with padding, then the padding is left on the limiting side', () => {
    // Height limits: (600 − 2·20)/500 = 1.12; width 400·1.12 = 448, centred at (800 − 448)/2 = 176.
    const { panZoom } = setUp({ width: 800, height: 600 }, { width: 400, height: 500 }, { fitPadding: 20 })
    expect(panZoom.view.value.scale).toBeCloseTo(1.12, 12)
    expect(panZoom.view.value.x).toBeCloseTo(176, 9)
    expect(panZoom.view.value.y).toBeCloseTo(20, 9)
  })

  it.each([
    { factor: 2, point: { x: 300, y: 200 } },
    { factor: 0.5, point: { x: 17, y: 590 } },
    { factor: 1.2, point: { x: 799, y: 0 } },
  ])('When zooming by $factor at $point, then the image point under it stays there', ({ factor, point }) => {
    const { panZoom } = setUp({ width: 800, height: 600 }, { width: 1000, height: 500 })
    panZoom.view.value = { scale: 1.5, x: 10, y: 20 }
    const before = panZoom.toImage(point)
    panZoom.zoomAt(point, factor)
    expect(panZoom.view.value.scale).toBeCloseTo(1.5 * factor, 12)
    const after = panZoom.toImage(point)
    expect(after.x).toBeCloseTo(before.x, 9)
    expect(after.y).toBeCloseTo(before.y, 9)
  })

  it('When a zoom would pass the largest scale, then it stops there and still keeps the point fixed', () => {
    const { panZoom } = setUp({ width: 800, height: 600 }, { width: 100, height: 100 }, { maxScale: 16 })
    const point = { x: 123, y: 456 }
    const before = panZoom.toImage(point)
    panZoom.zoomAt(point, 1000)
    expect(panZoom.view.value.scale).toBe(16)
    expect(panZoom.toImage(point).x).toBeCloseTo(before.x, 9)
    expect(panZoom.toImage(point).y).toBeCloseTo(before.y, 9)
  })

  it('When the wheel turns over the stage, then it zooms in one step around the cursor', () => {
    const { stage, panZoom } = setUp({ width: 800, height: 600 }, { width: 1000, height: 500 }, { wheelStep: 1.25 })
    const cursor = { x: 300, y: 200 }
    const before = panZoom.toImage(cursor)
    // happy-dom 21's WheelEvent drops clientX/clientY, so the wheel event is a MouseEvent named "wheel" with deltaY.
    const wheel = new MouseEvent('wheel', { clientX: cursor.x, clientY: cursor.y, bubbles: true, cancelable: true })
    Object.defineProperty(wheel, 'deltaY', { value: -100 })
    stage.content.dispatchEvent(wheel)
    expect(wheel.defaultPrevented).toBe(true)
    expect(panZoom.view.value.scale).toBeCloseTo(0.8 * 1.25, 12)
    expect(panZoom.toImage(cursor).x).toBeCloseTo(before.x, 9)
    expect(panZoom.toImage(cursor).y).toBeCloseTo(before.y, 9)
  })

  it('When 1:1 is asked for, then one image pixel covers one screen pixel and the middle of the stage stays put', () => {
    const { panZoom } = setUp({ width: 800, height: 600 }, { width: 1000, height: 500 })
    const middle = panZoom.toImage({ x: 400, y: 300 })
    panZoom.actualSize()
    expect(panZoom.view.value.scale).toBe(1)
    expect(panZoom.toImage({ x: 400, y: 300 })).toEqual(middle)
  })

  it('When the stage is dragged, then the view follows the stage', () => {
    const { stage, panZoom } = setUp({ width: 800, height: 600 }, { width: 1000, height: 500 })
    stage.position({ x: 55, y: -30 })
    stage.fire('dragmove', { target: stage })
    expect(panZoom.view.value).toEqual({ scale: 0.8, x: 55, y: -30 })
  })

  it('When two stages share one view, then zooming one moves the other the same way (linked side by side)', () => {
    const shared = ref<PanZoomView>({ scale: 0, x: 0, y: 0 })
    const left = setUp({ width: 400, height: 600 }, { width: 200, height: 200 }, { view: shared })
    const right = setUp({ width: 400, height: 600 }, { width: 200, height: 200 }, { view: shared })
    left.panZoom.zoomAt({ x: 100, y: 100 }, 2)
    expect([right.stage.scaleX(), right.stage.x(), right.stage.y()]).toEqual([left.stage.scaleX(), left.stage.x(), left.stage.y()])
    expect(right.panZoom.view.value).toEqual(shared.value)
  })

  it('When a fitted stage is resized, then it fits again; after a zoom it keeps the zoom', () => {
    const { stage, panZoom } = setUp({ width: 800, height: 600 }, { width: 1000, height: 500 })
    stage.width(400)
    expect(panZoom.view.value).toEqual({ scale: 0.4, x: 0, y: 200 })
    panZoom.zoomBy(2)
    stage.width(500)
    expect(panZoom.view.value.scale).toBeCloseTo(0.8, 12)
  })
})
