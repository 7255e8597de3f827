import { onScopeDispose, ref, type Ref } from 'vue'
import type Konva from 'konva'
import type { Point } from './usePanZoom'

export interface GesturePanOptions {
  /** Moves the view by screen pixels (usePanZoom's `panBy`). */
  panBy: (dx: number, dy: number) => void
  /** The stage drags the view itself (the Move view tool): a middle-button drag is then left to it. */
  stageDrags: () => boolean
}

export interface GesturePan {
  /** Space is held: the next drag moves the view, whatever the tool. */
  spaceHeld: Ref<boolean>
  /** A middle-button or Space drag is moving the view. */
  panning: Ref<boolean>
  /** The stage's pointerdown: starts moving the view for the middle button, or the left one with Space held. */
  onPointerDown: (event: Konva.KonvaEventObject<PointerEvent>) => void
}

const isTyping = (event: KeyboardEvent) => event.target instanceof HTMLElement && event.target.closest('input, textarea, select, [contenteditable]') !== null

/**
 * Move the view with any tool: drag with the middle button, or hold Space and drag. Space is taken from the page
 * (it would scroll) except on a focused button, which it presses.
 */
export function useGesturePan(options: GesturePanOptions): GesturePan {
  const spaceHeld = ref(false)
  const panning = ref(false)
  let from: Point | null = null

  function onMove(event: PointerEvent): void {
    if (!from) return
    options.panBy(event.clientX - from.x, event.clientY - from.y)
    from = { x: event.clientX, y: event.clientY }
  }

  function onEnd(): void {
    panning.value = false
    from = null
    window.removeEventListener('pointermove', onMove)
    window.removeEventListener('pointerup', onEnd)
  }

  function onPointerDown(event: Konva.KonvaEventObject<PointerEvent>): void {
    const middle = event.evt.button === 1 && !options.stageDrags()
    const spaceDrag = spaceHeld.value && event.evt.button === 0
    if (!middle && !spaceDrag) return
    event.evt.preventDefault()
    panning.value = true
    from = { x: event.evt.clientX, y: event.evt.clientY }
    window.addEventListener('pointermove', onMove)
    window.addEventListener('pointerup', onEnd)
  }

  function onKeyDown(event: KeyboardEvent): void {
    if (event.key !== ' ' || isTyping(event) || event.target instanceof HTMLButtonElement) return
    event.preventDefault()
    spaceHeld.value = true
  }

  function onKeyUp(event: KeyboardEvent): void {
    if (event.key === ' ') spaceHeld.value = false
  }

  window.addEventListener('keydown', onKeyDown, true)
  window.addEventListener('keyup', onKeyUp)
  onScopeDispose(() => {
    onEnd()
    window.removeEventListener('keydown', onKeyDown, true)
    window.removeEventListener('keyup', onKeyUp)
  })

  return { spaceHeld, panning, onPointerDown }
}
