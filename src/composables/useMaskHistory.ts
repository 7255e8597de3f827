import { computed, ref, shallowRef, type ComputedRef, type Ref } from 'vue'
import type { MaskPlane, PixelRect } from '@/maskRaster'

/**
 * One undoable edit, stored as the pixels it flipped: runs [start, length, start, length, …] of raster indices whose
 * value changed (a mask has two phases, so flipping them back undoes the edit). A brush stroke costs a few hundred
 * bytes and even replacing a whole 2048² labyrinth a few MB, instead of a 4 MB copy per step.
 */
interface HistoryStep {
  label: string
  rect: PixelRect
  runs: Uint32Array
  /** Up pixels gained by the edit (negative when it removed up pixels). */
  upDelta: number
  /** What the caller attached to the step (e.g. the shape drawn), handed back on undo and redo. */
  meta: unknown
}

/** What undo or redo changed: the rectangle to redraw, the change in up pixels, and the step's label and meta. */
export interface HistoryChange {
  rect: PixelRect
  upDelta: number
  label: string
  meta: unknown
}

export interface MaskHistoryOptions {
  /** Most steps kept (default 200). */
  maxSteps?: number
  /** Most bytes of stored differences, undo and redo together (default 64 MiB); the oldest steps go first. */
  maxBytes?: number
}

export interface MaskHistory {
  /** Start again from `mask` as it is now (after loading a version): no steps, and `mask` is the one edited. */
  reset: (mask: MaskPlane) => void
  /**
   * Record the pixels changed inside `rect` since the last commit as one step (clears redo). Returns the step's
   * change, or null when no pixel changed.
   */
  commit: (rect: PixelRect | null, label: string, meta?: unknown) => HistoryChange | null
  /** Put back the committed state inside `rect` (a stroke cancelled half-way). */
  revert: (rect: PixelRect | null) => void
  undo: () => HistoryChange | null
  redo: () => HistoryChange | null
  canUndo: ComputedRef<boolean>
  canRedo: ComputedRef<boolean>
  /** Steps that can be undone / redone. */
  undoCount: Ref<number>
  redoCount: Ref<number>
  undoLabel: ComputedRef<string | null>
  redoLabel: ComputedRef<string | null>
  /** Bytes held by the stored steps (not counting the one committed copy of the mask). */
  bytes: Ref<number>
}

/** Runs of changed indices are collected here, then copied out at their final length. */
let runScratch = new Uint32Array(1 << 14)

function pushRun(count: number, start: number, length: number): number {
  if (count + 2 > runScratch.length) {
    const grown = new Uint32Array(runScratch.length * 2)
    grown.set(runScratch)
    runScratch = grown
  }
  runScratch[count] = start
  runScratch[count + 1] = length
  return count + 2
}

function clampRect(rect: PixelRect, width: number, height: number): PixelRect | null {
  const x0 = Math.max(0, Math.floor(rect.x0))
  const y0 = Math.max(0, Math.floor(rect.y0))
  const x1 = Math.min(width, Math.ceil(rect.x1))
  const y1 = Math.min(height, Math.ceil(rect.y1))
  return x1 > x0 && y1 > y0 ? { x0, y0, x1, y1 } : null
}

/**
 * Undo and redo for a mask edited in place, at least 100 steps deep and bounded in memory. It keeps one committed
 * copy of the mask; a commit compares the live mask with it inside the edited rectangle and stores only the flipped
 * pixels, as runs. Undo flips them back in both.
 */
export function useMaskHistory(options: MaskHistoryOptions = {}): MaskHistory {
  const maxSteps = options.maxSteps ?? 200
  const maxBytes = options.maxBytes ?? 64 * 1024 * 1024
  const undoStack = shallowRef<HistoryStep[]>([])
  const redoStack = shallowRef<HistoryStep[]>([])
  const undoCount = ref(0)
  const redoCount = ref(0)
  const bytes = ref(0)
  let live: MaskPlane | null = null
  let committed = new Uint8Array(0)

  function sync(): void {
    undoCount.value = undoStack.value.length
    redoCount.value = redoStack.value.length
    let total = 0
    for (const step of undoStack.value) total += step.runs.byteLength
    for (const step of redoStack.value) total += step.runs.byteLength
    bytes.value = total
  }

  function reset(mask: MaskPlane): void {
    live = mask
    if (committed.length !== mask.data.length) committed = new Uint8Array(mask.data.length)
    committed.set(mask.data)
    undoStack.value = []
    redoStack.value = []
    sync()
  }

  /** Drop the oldest steps beyond the limits; the newest step always stays, however large. */
  function trim(): void {
    const steps = undoStack.value
    let total = 0
    for (const step of steps) total += step.runs.byteLength
    for (const step of redoStack.value) total += step.runs.byteLength
    let drop = 0
    while (steps.length - drop > 1 && (steps.length - drop > maxSteps || total > maxBytes)) {
      total -= steps[drop].runs.byteLength
      drop++
    }
    if (drop > 0) undoStack.value = steps.slice(drop)
  }

  function commit(rect: PixelRect | null, label: string, meta?: unknown): HistoryChange | null {
    if (!live || !rect) return null
    const { width, height, data } = live
    const area = clampRect(rect, width, height)
    if (!area) return null
    let count = 0
    let upDelta = 0
    let changed: PixelRect | null = null
    for (let y = area.y0; y < area.y1; y++) {
      const rowStart = y * width
      let runStart = -1
      for (let x = area.x0; x <= area.x1; x++) {
        const i = rowStart + x
        const differs = x < area.x1 && data[i] !== committed[i]
        if (differs) {
          if (runStart < 0) runStart = i
          upDelta += data[i] === 1 ? 1 : -1
          committed[i] = data[i]
          if (!changed) changed = { x0: x, y0: y, x1: x + 1, y1: y + 1 }
          else {
            if (x < changed.x0) changed.x0 = x
            if (x + 1 > changed.x1) changed.x1 = x + 1
            changed.y1 = y + 1
          }
        } else if (runStart >= 0) {
          count = pushRun(count, runStart, i - runStart)
          runStart = -1
        }
      }
    }
    if (!changed) return null
    const step: HistoryStep = { label, rect: changed, runs: runScratch.slice(0, count), upDelta, meta }
    undoStack.value = [...undoStack.value, step]
    redoStack.value = []
    trim()
    sync()
    return { rect: changed, upDelta, label, meta }
  }

  function revert(rect: PixelRect | null): void {
    if (!live || !rect) return
    const { width, height, data } = live
    const area = clampRect(rect, width, height)
    if (!area) return
    for (let y = area.y0; y < area.y1; y++) {
      const start = y * width + area.x0
      data.set(committed.subarray(start, y * width + area.x1), start)
    }
  }

  function flip(step: HistoryStep): void {
    if (!live) return
    const { data } = live
    const { runs } = step
    for (let k = 0; k < runs.length; k += 2) {
      const end = runs[k] + runs[k + 1]
      for (let i = runs[k]; i < end; i++) {
        data[i] ^= 1
        committed[i] ^= 1
      }
    }
  }

  function undo(): HistoryChange | null {
    const steps = undoStack.value
    if (!live || steps.length === 0) return null
    const step = steps[steps.length - 1]
    flip(step)
    undoStack.value = steps.slice(0, -1)
    redoStack.value = [...redoStack.value, step]
    sync()
    return { rect: step.rect, upDelta: -step.upDelta, label: step.label, meta: step.meta }
  }

  function redo(): HistoryChange | null {
    const steps = redoStack.value
    if (!live || steps.length === 0) return null
    const step = steps[steps.length - 1]
    flip(step)
    redoStack.value = steps.slice(0, -1)
    undoStack.value = [...undoStack.value, step]
    trim()
    sync()
    return { rect: step.rect, upDelta: step.upDelta, label: step.label, meta: step.meta }
  }

  const canUndo = computed(() => undoCount.value > 0)
  const canRedo = computed(() => redoCount.value > 0)
  const undoLabel = computed(() => (undoCount.value > 0 ? undoStack.value[undoStack.value.length - 1].label : null))
  const redoLabel = computed(() => (redoCount.value > 0 ? redoStack.value[redoStack.value.length - 1].label : null))

  return { reset, commit, revert, undo, redo, canUndo, canRedo, undoCount, redoCount, undoLabel, redoLabel, bytes }
}
