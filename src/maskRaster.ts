/**
 * Raster edits of a binary domain mask in place: a disc and a stroke of discs (the brush), a flood of one
 * 4-connected region, an even-odd polygon, and a thin 4-connected line (the wall trace that cuts domains apart).
 *
 * Coordinates are continuous image coordinates as the canvas reports them: pixel (i, j) covers [i, i+1) × [j, j+1),
 * so its centre is (i + ½, j + ½). A pixel belongs to a disc or polygon when its centre does.
 * Every function writes `value` (1 = up, 0 = down) into `mask.data` and returns the bounding rectangle of the pixels
 * it actually changed, or null when nothing changed (so the caller redraws and records only that rectangle).
 */
import type { AnnotationShape } from '@shared/types/annotation'

/** A block of pixels: columns x0 … x1 − 1 and rows y0 … y1 − 1 (end exclusive). */
export interface PixelRect {
  x0: number
  y0: number
  x1: number
  y1: number
}

/** The part of a mask these functions read and write (a BinaryMask fits). */
export interface MaskPlane {
  width: number
  height: number
  data: Uint8Array
}

export type Phase = 0 | 1

/** The smallest rectangle holding both (either may be null). */
export function unionRect(a: PixelRect | null, b: PixelRect | null): PixelRect | null {
  if (!a) return b
  if (!b) return a
  return { x0: Math.min(a.x0, b.x0), y0: Math.min(a.y0, b.y0), x1: Math.max(a.x1, b.x1), y1: Math.max(a.y1, b.y1) }
}

/** The whole mask as a rectangle. */
export function fullRect(mask: { width: number; height: number }): PixelRect {
  return { x0: 0, y0: 0, x1: mask.width, y1: mask.height }
}

/** Number of up (1) pixels. */
export function countUp(data: Uint8Array): number {
  let n = 0
  for (let i = 0; i < data.length; i++) n += data[i]
  return n
}

/**
 * Tracks the changed pixels' bounding box while a function writes: `set` writes one pixel and widens the box only
 * when the pixel really changes.
 */
class ChangeBox {
  x0 = Infinity
  y0 = Infinity
  x1 = -Infinity
  y1 = -Infinity

  /** Write `value` over columns xa … xb − 1 of row y; widens the box to the changed span. */
  span(data: Uint8Array, rowStart: number, y: number, xa: number, xb: number, value: number): void {
    let first = -1
    let last = -1
    for (let x = xa; x < xb; x++) {
      if (data[rowStart + x] !== value) {
        data[rowStart + x] = value
        if (first < 0) first = x
        last = x
      }
    }
    if (first < 0) return
    if (first < this.x0) this.x0 = first
    if (last + 1 > this.x1) this.x1 = last + 1
    if (y < this.y0) this.y0 = y
    if (y + 1 > this.y1) this.y1 = y + 1
  }

  rect(): PixelRect | null {
    return this.x1 > this.x0 ? { x0: this.x0, y0: this.y0, x1: this.x1, y1: this.y1 } : null
  }
}

/**
 * Paint a disc of `radius` px around (cx, cy). A radius below ½ still paints the pixel under the centre, so the
 * smallest brush is one pixel.
 */
export function paintDisc(mask: MaskPlane, cx: number, cy: number, radius: number, value: Phase): PixelRect | null {
  return paintStroke(mask, cx, cy, cx, cy, radius, value)
}

/**
 * Paint every pixel whose centre lies within `radius` of the segment (ax, ay)–(bx, by): the swept disc of a brush
 * moved in a straight line between two pointer events, so a fast stroke leaves no gaps.
 */
export function paintStroke(mask: MaskPlane, ax: number, ay: number, bx: number, by: number, radius: number, value: Phase): PixelRect | null {
  const { width, height, data } = mask
  if (width === 0 || height === 0) return null
  const box = new ChangeBox()
  const r = Math.max(0, radius)
  const r2 = r * r
  const yStart = Math.max(0, Math.floor(Math.min(ay, by) - r - 0.5))
  const yEnd = Math.min(height, Math.ceil(Math.max(ay, by) + r + 0.5))
  const xStart = Math.max(0, Math.floor(Math.min(ax, bx) - r - 0.5))
  const xEnd = Math.min(width, Math.ceil(Math.max(ax, bx) + r + 0.5))
  const dx = bx - ax
  const dy = by - ay
  const lengthSq = dx * dx + dy * dy
  for (let y = yStart; y < yEnd; y++) {
    const py = y + 0.5
    const rowStart = y * width
    // The covered part of a row is one interval (the swept disc is convex): find its ends, then write it as a span.
    let first = -1
    let last = -1
    for (let x = xStart; x < xEnd; x++) {
      const px = x + 0.5
      let t = lengthSq > 0 ? ((px - ax) * dx + (py - ay) * dy) / lengthSq : 0
      t = t < 0 ? 0 : t > 1 ? 1 : t
      const ex = px - (ax + t * dx)
      const ey = py - (ay + t * dy)
      if (ex * ex + ey * ey <= r2) {
        if (first < 0) first = x
        last = x
      } else if (first >= 0) break
    }
    if (first >= 0) box.span(data, rowStart, y, first, last + 1, value)
  }
  // A tiny brush (radius < ½) may cover no pixel centre: the pixels under both ends are painted regardless.
  for (const [px, py] of [
    [ax, ay],
    [bx, by],
  ]) {
    const x = Math.floor(px)
    const y = Math.floor(py)
    if (x >= 0 && y >= 0 && x < width && y < height) box.span(data, y * width, y, x, x + 1, value)
  }
  return box.rect()
}

/** A growable stack of pixel indices for the flood fill (reused between calls). */
let floodStack = new Int32Array(4096)

/**
 * Give the 4-connected region of equal value around pixel (x, y) the phase `value` (scan-line flood fill).
 * Returns null when (x, y) is outside the mask or the region already has that phase.
 */
export function floodFill(mask: MaskPlane, x: number, y: number, value: Phase): PixelRect | null {
  const { width, height, data } = mask
  const sx = Math.floor(x)
  const sy = Math.floor(y)
  if (sx < 0 || sy < 0 || sx >= width || sy >= height) return null
  const target = data[sy * width + sx]
  if (target === value) return null
  const box = new ChangeBox()
  let top = 0
  const push = (index: number) => {
    if (top === floodStack.length) {
      const grown = new Int32Array(floodStack.length * 2)
      grown.set(floodStack)
      floodStack = grown
    }
    floodStack[top++] = index
  }
  push(sy * width + sx)
  while (top > 0) {
    const index = floodStack[--top]
    if (data[index] !== target) continue
    const row = (index / width) | 0
    const rowStart = row * width
    let left = index - rowStart
    let right = left
    while (left > 0 && data[rowStart + left - 1] === target) left--
    while (right < width - 1 && data[rowStart + right + 1] === target) right++
    box.span(data, rowStart, row, left, right + 1, value)
    // Seed each run of the target value in the rows above and below that touches this span (edge neighbours only).
    for (const next of [row - 1, row + 1]) {
      if (next < 0 || next >= height) continue
      const nextStart = next * width
      let inRun = false
      for (let i = left; i <= right; i++) {
        const same = data[nextStart + i] === target
        if (same && !inRun) push(nextStart + i)
        inRun = same
      }
    }
  }
  return box.rect()
}

/** Crossings of the horizontal line at height y with the polygon's edges (reused between rows). */
let crossings = new Float64Array(64)

/**
 * Give the inside of the polygon `points` (x0, y0, x1, y1, …; closed implicitly) the phase `value`, by the even-odd
 * rule: a pixel is inside when a ray from its centre crosses the outline an odd number of times, so a
 * self-intersecting outline leaves its doubly covered parts out.
 */
export function fillPolygon(mask: MaskPlane, points: readonly number[], value: Phase): PixelRect | null {
  const { width, height, data } = mask
  const n = Math.floor(points.length / 2)
  if (n < 3 || width === 0 || height === 0) return null
  let minY = Infinity
  let maxY = -Infinity
  for (let i = 0; i < n; i++) {
    const y = points[2 * i + 1]
    if (y < minY) minY = y
    if (y > maxY) maxY = y
  }
  if (crossings.length < n) crossings = new Float64Array(n * 2)
  const box = new ChangeBox()
  const rowStart = Math.max(0, Math.floor(minY - 0.5))
  const rowEnd = Math.min(height, Math.ceil(maxY + 0.5))
  for (let row = rowStart; row < rowEnd; row++) {
    const cy = row + 0.5
    let count = 0
    for (let i = 0, j = n - 1; i < n; j = i++) {
      const yi = points[2 * i + 1]
      const yj = points[2 * j + 1]
      // Half-open rule (an edge counts when it spans cy from below-or-on to above): vertices on the line count once.
      if (yi <= cy !== yj <= cy) {
        const xi = points[2 * i]
        const xj = points[2 * j]
        crossings[count++] = xi + ((cy - yi) * (xj - xi)) / (yj - yi)
      }
    }
    if (count < 2) continue
    const sorted = crossings.subarray(0, count).sort()
    for (let k = 0; k + 1 < count; k += 2) {
      // Pixels whose centre x + ½ lies in [left, right).
      const xa = Math.max(0, Math.ceil(sorted[k] - 0.5))
      const xb = Math.min(width, Math.ceil(sorted[k + 1] - 0.5))
      if (xb > xa) box.span(data, row * width, row, xa, xb, value)
    }
  }
  return box.rect()
}

/** Clip the segment to the box [0, w] × [0, h] (Liang–Barsky); null when it misses the box. */
function clipSegment(x0: number, y0: number, x1: number, y1: number, w: number, h: number): [number, number, number, number] | null {
  let t0 = 0
  let t1 = 1
  const dx = x1 - x0
  const dy = y1 - y0
  const edges: [number, number][] = [
    [-dx, x0],
    [dx, w - x0],
    [-dy, y0],
    [dy, h - y0],
  ]
  for (const [p, q] of edges) {
    if (p === 0) {
      if (q < 0) return null
      continue
    }
    const t = q / p
    if (p < 0) {
      if (t > t1) return null
      if (t > t0) t0 = t
    } else {
      if (t < t0) return null
      if (t < t1) t1 = t
    }
  }
  return [x0 + t0 * dx, y0 + t0 * dy, x0 + t1 * dx, y0 + t1 * dy]
}

/**
 * Draw a polyline (x0, y0, x1, y1, …) as a chain of edge-connected pixels: every pixel the line passes through,
 * stepping one column or one row at a time (grid traversal after J. Amanatides & A. Woo, 1987, "A fast voxel
 * traversal algorithm for ray tracing", Eurographics '87 [from memory]). A line without diagonal steps leaves no
 * corner gap, so drawn in the down phase it cuts up domains apart even for 8-connected labelling of the up phase.
 * With `thickness` 2 each pixel also paints its right, lower and lower-right neighbours.
 */
export function drawWallLine(mask: MaskPlane, points: readonly number[], value: Phase = 0, thickness: 1 | 2 = 1): PixelRect | null {
  const { width, height, data } = mask
  const n = Math.floor(points.length / 2)
  if (n === 0 || width === 0 || height === 0) return null
  const box = new ChangeBox()
  const plot = (x: number, y: number) => {
    if (x < 0 || y < 0 || x >= width || y >= height) return
    box.span(data, y * width, y, x, Math.min(width, x + thickness), value)
    if (thickness === 2 && y + 1 < height) box.span(data, (y + 1) * width, y + 1, x, Math.min(width, x + 2), value)
  }
  // The far edge of the image is still on the image: keep clipped points just inside it.
  const inside = (v: number, size: number) => Math.min(v, size - 1e-9)
  if (n === 1) plot(Math.floor(points[0]), Math.floor(points[1]))
  for (let s = 0; s + 1 < n; s++) {
    const clipped = clipSegment(points[2 * s], points[2 * s + 1], points[2 * s + 2], points[2 * s + 3], width, height)
    if (!clipped) continue
    const x0 = inside(clipped[0], width)
    const y0 = inside(clipped[1], height)
    const x1 = inside(clipped[2], width)
    const y1 = inside(clipped[3], height)
    let cx = Math.floor(x0)
    let cy = Math.floor(y0)
    const endX = Math.floor(x1)
    const endY = Math.floor(y1)
    const dx = x1 - x0
    const dy = y1 - y0
    const stepX = dx > 0 ? 1 : -1
    const stepY = dy > 0 ? 1 : -1
    // Parameter t along the segment at which the line crosses the next column / row boundary, and per cell.
    const tDeltaX = dx !== 0 ? Math.abs(1 / dx) : Infinity
    const tDeltaY = dy !== 0 ? Math.abs(1 / dy) : Infinity
    let tMaxX = dx !== 0 ? (dx > 0 ? cx + 1 - x0 : x0 - cx) * tDeltaX : Infinity
    let tMaxY = dy !== 0 ? (dy > 0 ? cy + 1 - y0 : y0 - cy) * tDeltaY : Infinity
    plot(cx, cy)
    // Each pass moves exactly one column or one row, so consecutive pixels share an edge.
    let guard = Math.abs(endX - cx) + Math.abs(endY - cy)
    while ((cx !== endX || cy !== endY) && guard-- > 0) {
      // Rounding must not carry the walk past the last column or row: finish along the other axis there.
      if (cy === endY || (cx !== endX && tMaxX < tMaxY)) {
        cx += stepX
        tMaxX += tDeltaX
      } else {
        cy += stepY
        tMaxY += tDeltaY
      }
      plot(cx, cy)
    }
  }
  return box.rect()
}

/**
 * Where a canvas tool reports what it did to the mask it edits in place: pixels changed (to redraw), one undoable
 * step finished (with the vector shape drawn, if any), or a half-done edit abandoned (to put back).
 */
export interface MaskEditSink {
  change: (rect: PixelRect) => void
  commit: (rect: PixelRect, label: string, shape?: AnnotationShape) => void
  revert: (rect: PixelRect) => void
}
