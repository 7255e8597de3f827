import { computed, onScopeDispose, ref, shallowRef, watch, type Ref, type ShallowRef } from 'vue'
import { asApiError, type ApiError } from '@/api/http'
import { getFramePixels, type RawFrame } from '@/api/images'
import { displayLut, type DisplaySettings } from '@/colormaps'
import type { LoadStatus } from '@/stores/loadStatus'

/** A frame's raw pixels with the statistics the display needs. */
export interface FramePixels extends RawFrame {
  min: number
  max: number
  /**
   * The 0.5th and 99.5th percentiles: the automatic display range, the same stretch as the server's preview PNG, so
   * a few hot or dead pixels do not flatten the contrast [P].
   */
  autoRange: [number, number]
}

/** Low and high raw values shown as the darkest and brightest display levels. */
export type DisplayRange = readonly [number, number]

/** Raw pixels kept in memory across viewers (side-by-side, revisits); the oldest frames go first beyond this. */
const CACHE_BUDGET_BYTES = 384 * 1024 * 1024
const pixelCache = new Map<string, { bytes: number; frame: Promise<FramePixels> }>()
let cachedBytes = 0

/** Rendered canvases kept per viewer, so a stack replays without re-rendering while the display settings stay. */
const RENDERED_PER_VIEWER = 32

/** Forget every cached frame (when another person signs in, and between tests). */
export function clearFramePixelCache(): void {
  pixelCache.clear()
  cachedBytes = 0
}

function percentileRange(frame: RawFrame): { min: number; max: number; autoRange: [number, number] } {
  const { data, bitDepth } = frame
  const n = data.length
  const lowRank = Math.floor(0.005 * (n - 1))
  const highRank = Math.ceil(0.995 * (n - 1))
  let min = Infinity
  let max = -Infinity
  let low: number
  let high: number
  if (bitDepth !== 32) {
    // Integers: a histogram gives exact order statistics in one pass.
    const histogram = new Uint32Array(bitDepth === 8 ? 256 : 65536)
    for (let i = 0; i < n; i++) histogram[data[i]]++
    let seen = 0
    low = 0
    high = histogram.length - 1
    let lowFound = false
    for (let v = 0; v < histogram.length; v++) {
      if (histogram[v] === 0) continue
      if (v < min) min = v
      seen += histogram[v]
      if (!lowFound && seen > lowRank) {
        low = v
        lowFound = true
      }
      if (seen > highRank) {
        high = v
        break
      }
    }
    for (let v = histogram.length - 1; v >= high; v--) {
      if (histogram[v] > 0) {
        max = v
        break
      }
    }
  } else {
    // Floats: order statistics of an evenly strided sample of at most 2^17 values (non-finite values skipped).
    const stride = Math.max(1, Math.floor(n / 131072))
    const sample: number[] = []
    for (let i = 0; i < n; i += stride) if (Number.isFinite(data[i])) sample.push(data[i])
    for (let i = 0; i < n; i++) {
      const v = data[i]
      if (v < min) min = v
      if (v > max) max = v
    }
    const sorted = Float64Array.from(sample).sort()
    low = sorted.length ? sorted[Math.floor(0.005 * (sorted.length - 1))] : 0
    high = sorted.length ? sorted[Math.ceil(0.995 * (sorted.length - 1))] : 1
    if (!Number.isFinite(min)) min = 0
    if (!Number.isFinite(max)) max = 1
  }
  // A constant frame has no range to stretch: centre its one value, so it shows as mid-grey rather than black.
  if (!(high > low)) return { min, max, autoRange: [low - 0.5, low + 0.5] }
  return { min, max, autoRange: [low, high] }
}

/** The pixels of one frame, fetched once and cached (module-wide, by image id and frame index). */
export function loadFramePixels(imageId: number, index: number): Promise<FramePixels> {
  const key = `${imageId}:${index}`
  const hit = pixelCache.get(key)
  if (hit) {
    pixelCache.delete(key)
    pixelCache.set(key, hit)
    return hit.frame
  }
  const entry = {
    bytes: 0,
    frame: getFramePixels(imageId, index).then((raw) => ({ ...raw, ...percentileRange(raw) })),
  }
  pixelCache.set(key, entry)
  entry.frame.then(
    (frame) => {
      // The cache may have been cleared while this frame was on its way.
      if (pixelCache.get(key) !== entry) return
      entry.bytes = frame.data.byteLength
      cachedBytes += entry.bytes
      for (const [oldKey, old] of pixelCache) {
        if (cachedBytes <= CACHE_BUDGET_BYTES || old === entry) break
        pixelCache.delete(oldKey)
        cachedBytes -= old.bytes
      }
    },
    // A failed fetch is not cached: the next look at this frame tries again.
    () => {
      if (pixelCache.get(key) === entry) pixelCache.delete(key)
    },
  )
  return entry.frame
}

/**
 * Paint a frame into a canvas: raw values mapped linearly from `range` onto the 256 levels of the lookup table
 * (values outside the range clip to its ends).
 */
export function renderFrame(frame: FramePixels, lut: Uint8ClampedArray, range: DisplayRange, target?: HTMLCanvasElement): HTMLCanvasElement {
  const canvas = target ?? document.createElement('canvas')
  canvas.width = frame.width
  canvas.height = frame.height
  const context = canvas.getContext('2d')
  if (!context) return canvas
  const image = context.createImageData(frame.width, frame.height)
  // Copying whole RGBA words keeps the byte order whatever the platform's endianness.
  const out = new Uint32Array(image.data.buffer)
  const colors = new Uint32Array(lut.buffer, lut.byteOffset, 256)
  const [low, high] = range
  const perLevel = 255 / (high > low ? high - low : 1)
  const { data } = frame
  const levelOf = (v: number) => (v <= low ? 0 : v >= high ? 255 : Math.round((v - low) * perLevel))
  if (frame.bitDepth === 32) {
    for (let i = 0; i < data.length; i++) out[i] = colors[levelOf(data[i])]
  } else {
    // Integers: one colour per possible raw value (256 or 65536 entries), then a plain lookup per pixel.
    const table = new Uint32Array(frame.bitDepth === 8 ? 256 : 65536)
    for (let v = 0; v < table.length; v++) table[v] = colors[levelOf(v)]
    for (let i = 0; i < data.length; i++) out[i] = table[data[i]]
  }
  context.putImageData(image, 0, 0)
  return canvas
}

export interface FramePixelsOptions {
  display: Ref<DisplaySettings>
  /** A fixed display range for every frame (to compare frames of a stack); `null` uses each frame's own. */
  range?: Ref<DisplayRange | null>
}

export interface FramePixelsState {
  /** The shown frame's pixels (the previous frame's stay until the next one arrives, so playback does not flicker). */
  pixels: ShallowRef<FramePixels | null>
  /** The shown frame, painted with the display settings, for a Konva image. */
  canvas: ShallowRef<HTMLCanvasElement | null>
  status: Ref<LoadStatus>
  error: ShallowRef<ApiError | null>
  /** The raw value at integer pixel (x, y), or null outside the frame or before it loaded. */
  valueAt: (x: number, y: number) => number | null
  /** Start fetching a frame the person is likely to look at next. */
  prefetch: (index: number) => void
  reload: () => void
}

/** Fetch, cache and paint the frames of one image for a viewer; re-paints when the display settings change. */
export function useFramePixels(imageId: Ref<number | null>, frameIndex: Ref<number>, options: FramePixelsOptions): FramePixelsState {
  const pixels = shallowRef<FramePixels | null>(null)
  const canvas = shallowRef<HTMLCanvasElement | null>(null)
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const lut = computed(() => displayLut(options.display.value))
  const rendered = new Map<string, HTMLCanvasElement>()
  let request = 0
  let disposed = false

  function paint(frame: FramePixels, key: string): void {
    const range = options.range?.value ?? frame.autoRange
    const cacheKey = `${key}|${range[0]}|${range[1]}`
    let painted = rendered.get(cacheKey)
    if (!painted) {
      painted = renderFrame(frame, lut.value, range)
      rendered.set(cacheKey, painted)
      if (rendered.size > RENDERED_PER_VIEWER) rendered.delete(rendered.keys().next().value as string)
    }
    canvas.value = painted
  }

  async function load(): Promise<void> {
    const id = imageId.value
    const index = frameIndex.value
    const mine = ++request
    if (id === null) {
      pixels.value = null
      canvas.value = null
      status.value = 'idle'
      return
    }
    status.value = 'loading'
    error.value = null
    try {
      const frame = await loadFramePixels(id, index)
      // A newer request (the slider moved on, another image) wins; an unmounted viewer paints nothing.
      if (mine !== request || disposed) return
      pixels.value = frame
      paint(frame, `${id}:${index}`)
      status.value = 'ready'
    } catch (e) {
      if (mine !== request || disposed) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  function repaint(): void {
    rendered.clear()
    if (pixels.value && imageId.value !== null && status.value === 'ready') paint(pixels.value, `${imageId.value}:${frameIndex.value}`)
  }

  watch([imageId, frameIndex], () => void load(), { immediate: true })
  watch([lut, () => options.range?.value], repaint)
  onScopeDispose(() => {
    disposed = true
    rendered.clear()
  })

  function valueAt(x: number, y: number): number | null {
    const frame = pixels.value
    if (!frame || x < 0 || y < 0 || x >= frame.width || y >= frame.height) return null
    return frame.data[y * frame.width + x]
  }

  function prefetch(index: number): void {
    if (imageId.value !== null) loadFramePixels(imageId.value, index).catch(() => undefined)
  }

  return { pixels, canvas, status, error, valueAt, prefetch, reload: () => void load() }
}
