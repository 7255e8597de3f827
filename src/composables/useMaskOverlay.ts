import { shallowRef, watch, type Ref, type ShallowRef } from 'vue'
import type { BinaryMask } from '@shared/analysis/types'
import type { PixelRect } from '@/maskRaster'

/**
 * Overlay colours from the Okabe–Ito palette (M. Okabe & K. Ito, 2002, "Color Universal Design", J*Fly [from
 * memory]), chosen to stay distinct for the common colour-vision deficiencies: "blue" #0072B2 for the up phase and
 * "orange" #E69F00 for the down phase. Both are drawn opaque; the layer's opacity blends them with the frame.
 */
export const OVERLAY_COLORS = { up: '#0072B2', down: '#E69F00' } as const

/** Side of the square tiles the overlay is cut into, px. */
export const OVERLAY_TILE_SIZE = 512

function rgba(hex: string): [number, number, number, number] {
  const v = Number.parseInt(hex.slice(1), 16)
  return [(v >> 16) & 255, (v >> 8) & 255, v & 255, 255]
}

/** One tile: an offscreen canvas at one canvas pixel per image pixel, placed at (x, y) in image pixels. */
export interface OverlayTile {
  key: string
  canvas: HTMLCanvasElement
  x: number
  y: number
  width: number
  height: number
}

interface TileBuffers {
  context: CanvasRenderingContext2D | null
  image: ImageData | null
  pixels: Uint32Array | null
}

export interface MaskOverlay {
  /** The overlay's tiles, for one Konva image each. */
  tiles: ShallowRef<OverlayTile[]>
  /** Repaint `rect` (null: everything) from the mask; only the changed part of the touched tiles is copied. */
  draw: (rect: PixelRect | null) => void
}

/**
 * The mask drawn as colours into offscreen canvases, one per 512² tile, each keeping its ImageData: an edit repaints
 * only its bounding rectangle (`putImageData` with a dirty rectangle) in the tiles it touches. Tiles matter for large
 * frames: the browser re-uploads a canvas that changed before drawing it scaled, so a brush stroke on a 2048² frame
 * re-sends one or two 1 MB tiles per screen refresh rather than the whole 16 MB overlay.
 */
export function useMaskOverlay(mask: Ref<BinaryMask | null>): MaskOverlay {
  const tiles = shallowRef<OverlayTile[]>([])
  let buffers: TileBuffers[] = []
  let columns = 0
  let size = { width: 0, height: 0 }
  // Colours as whole RGBA words in the platform's byte order: [down, up, ignored (transparent)].
  const palette = new Uint8ClampedArray([...rgba(OVERLAY_COLORS.down), ...rgba(OVERLAY_COLORS.up), 0, 0, 0, 0])
  const words = new Uint32Array(palette.buffer)

  function allocate(width: number, height: number): void {
    if (size.width === width && size.height === height && tiles.value.length > 0) return
    size = { width, height }
    columns = Math.ceil(width / OVERLAY_TILE_SIZE)
    const next: OverlayTile[] = []
    buffers = []
    for (let y = 0; y < height; y += OVERLAY_TILE_SIZE) {
      for (let x = 0; x < width; x += OVERLAY_TILE_SIZE) {
        const canvas = document.createElement('canvas')
        canvas.width = Math.min(OVERLAY_TILE_SIZE, width - x)
        canvas.height = Math.min(OVERLAY_TILE_SIZE, height - y)
        const context = canvas.getContext('2d')
        const image = context ? context.createImageData(canvas.width, canvas.height) : null
        buffers.push({ context, image, pixels: image ? new Uint32Array(image.data.buffer) : null })
        next.push({ key: `${x}:${y}`, canvas, x, y, width: canvas.width, height: canvas.height })
      }
    }
    tiles.value = next
  }

  function drawTile(index: number, current: BinaryMask, x0: number, y0: number, x1: number, y1: number): void {
    const tile = tiles.value[index]
    const { context, image, pixels } = buffers[index]
    if (!context || !image || !pixels) return
    const { width, data, ignore } = current
    for (let y = y0; y < y1; y++) {
      const row = y * width
      let out = (y - tile.y) * tile.width + (x0 - tile.x)
      if (ignore) for (let i = row + x0; i < row + x1; i++) pixels[out++] = words[ignore[i] ? 2 : data[i]]
      else for (let i = row + x0; i < row + x1; i++) pixels[out++] = words[data[i]]
    }
    context.putImageData(image, 0, 0, x0 - tile.x, y0 - tile.y, x1 - x0, y1 - y0)
  }

  function draw(rect: PixelRect | null): void {
    const current = mask.value
    if (!current) return
    allocate(current.width, current.height)
    const { width, height } = current
    const x0 = Math.max(0, rect?.x0 ?? 0)
    const y0 = Math.max(0, rect?.y0 ?? 0)
    const x1 = Math.min(width, rect?.x1 ?? width)
    const y1 = Math.min(height, rect?.y1 ?? height)
    if (x1 <= x0 || y1 <= y0) return
    for (let ty = Math.floor(y0 / OVERLAY_TILE_SIZE); ty * OVERLAY_TILE_SIZE < y1; ty++) {
      for (let tx = Math.floor(x0 / OVERLAY_TILE_SIZE); tx * OVERLAY_TILE_SIZE < x1; tx++) {
        const left = tx * OVERLAY_TILE_SIZE
        const top = ty * OVERLAY_TILE_SIZE
        drawTile(ty * columns + tx, current, Math.max(x0, left), Math.max(y0, top), Math.min(x1, left + OVERLAY_TILE_SIZE), Math.min(y1, top + OVERLAY_TILE_SIZE))
      }
    }
  }

  watch(mask, () => draw(null), { immediate: true })

  return { tiles, draw }
}
