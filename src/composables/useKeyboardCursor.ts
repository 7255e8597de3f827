import { shallowRef, type Ref, type ShallowRef } from 'vue'
import type { Point, Size } from './usePanZoom'

export interface KeyboardCursor {
  /** Where the keyboard cursor is (image px, on a pixel centre), or null while the mouse is used. */
  position: ShallowRef<Point | null>
  /** The focused image's keydown: arrows move the cursor (Shift: 10 px), A applies the tool at it. */
  onKey: (event: KeyboardEvent) => void
  hide: () => void
}

const ARROWS: Record<string, [number, number]> = { ArrowLeft: [-1, 0], ArrowRight: [1, 0], ArrowUp: [0, -1], ArrowDown: [0, 1] }

/**
 * A cursor moved over the image with the arrow keys, so every tool also works without a mouse: it starts in the
 * middle of the image, stays on pixel centres inside it, and A applies the current tool where it is.
 */
export function useKeyboardCursor(imageSize: Ref<Size>, apply: (point: Point) => void): KeyboardCursor {
  const position = shallowRef<Point | null>(null)

  function onKey(event: KeyboardEvent): void {
    const arrow = ARROWS[event.key]
    if (arrow) {
      event.preventDefault()
      const step = event.shiftKey ? 10 : 1
      const { width, height } = imageSize.value
      const from = position.value ?? { x: Math.floor(width / 2) + 0.5, y: Math.floor(height / 2) + 0.5 }
      const clamp = (v: number, size: number) => Math.min(size - 0.5, Math.max(0.5, v))
      position.value = { x: clamp(from.x + arrow[0] * step, width), y: clamp(from.y + arrow[1] * step, height) }
      return
    }
    if (event.key.toLowerCase() === 'a' && !event.ctrlKey && !event.metaKey && !event.altKey && position.value) {
      event.preventDefault()
      apply(position.value)
    }
  }

  return { position, onKey, hide: () => (position.value = null) }
}
