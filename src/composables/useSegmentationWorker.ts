import { getCurrentScope, onScopeDispose, ref, type Ref } from 'vue'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import type { AnalysisRecipe } from '@shared/analysis/recipe'
import type { BinaryMask, GrayImage } from '@shared/analysis/types'
import type { SegmentPreviewRequest, SegmentPreviewResponse } from '@/workers/segmentPreview.worker'

export interface SegmentationPreview {
  mask: BinaryMask
  measurements: FrameMeasurements
  /** Time the engine took inside the worker, ms. */
  ms: number
}

export interface SegmentationPreviewOptions {
  /** The domain-free frame, needed when the recipe's background is 'reference'. */
  reference?: GrayImage
}

/** A preview that will not be answered: a newer one replaced it, or the worker was closed. Callers can ignore it. */
export class PreviewCancelledError extends Error {
  constructor(reason: 'superseded' | 'disposed') {
    super(reason === 'superseded' ? 'A newer preview replaced this one.' : 'The preview engine was closed.')
    this.name = 'PreviewCancelledError'
  }
}

/** True for the rejection of a superseded or closed preview (nothing to report to the person). */
export function isPreviewCancelled(error: unknown): error is PreviewCancelledError {
  return error instanceof PreviewCancelledError
}

export interface SegmentationWorker {
  /**
   * Segment and measure `frame` with `recipe` in the worker. The frame is copied, so the caller keeps its pixels.
   * Rejects with `PreviewCancelledError` when a newer call replaces it, and with an `Error` saying why otherwise.
   */
  preview(frame: GrayImage, recipe: AnalysisRecipe, pixelSizeNm: number | null, options?: SegmentationPreviewOptions): Promise<SegmentationPreview>
  /** True while the worker computes or a preview waits for it. */
  busy: Ref<boolean>
  /** Stop the worker; pending previews reject with `PreviewCancelledError`. Called on scope dispose too. */
  dispose(): void
}

interface Job {
  request: SegmentPreviewRequest
  resolve: (preview: SegmentationPreview) => void
  reject: (error: Error) => void
}

function copyImage(image: GrayImage): GrayImage {
  return { width: image.width, height: image.height, data: image.data.slice() }
}

/**
 * One segmentation worker for a view, started on the first preview. At most one preview runs at a time and at most
 * one waits: a slider dragged through ten values computes the one in progress and the last, not all ten.
 */
export function useSegmentationWorker(): SegmentationWorker {
  const busy = ref(false)
  let worker: Worker | null = null
  let running: Job | null = null
  let waiting: Job | null = null
  let nextId = 1
  let disposed = false

  function updateBusy(): void {
    busy.value = running !== null || waiting !== null
  }

  function fail(message: string): void {
    const error = new Error(message)
    running?.reject(error)
    waiting?.reject(error)
    running = null
    waiting = null
    // A worker that errored may be in any state; the next preview starts a fresh one.
    worker?.terminate()
    worker = null
    updateBusy()
  }

  function startWorker(): Worker {
    if (worker) return worker
    const started = new Worker(new URL('../workers/segmentPreview.worker.ts', import.meta.url), { type: 'module' })
    started.onmessage = (event: MessageEvent<SegmentPreviewResponse>) => answer(event.data)
    started.onerror = (event) => {
      event.preventDefault()
      fail(`The preview engine stopped: ${event.message || 'it could not be started'}. Try the preview again.`)
    }
    started.onmessageerror = () => fail('The preview engine sent an answer the page could not read. Try the preview again.')
    worker = started
    return started
  }

  function send(job: Job): void {
    running = job
    const { frame, reference } = job.request
    const transfer: Transferable[] = [frame.data.buffer]
    if (reference) transfer.push(reference.data.buffer)
    startWorker().postMessage(job.request, transfer)
  }

  function answer(response: SegmentPreviewResponse): void {
    const job = running
    running = null
    // A superseded job was rejected already; settling it again does nothing.
    if (job && job.request.id === response.id) {
      if ('error' in response) job.reject(new Error(`The preview could not be computed: ${response.error}.`))
      else job.resolve({ mask: response.mask, measurements: response.measurements, ms: response.ms })
    }
    if (waiting) {
      const next = waiting
      waiting = null
      send(next)
    }
    updateBusy()
  }

  function preview(frame: GrayImage, recipe: AnalysisRecipe, pixelSizeNm: number | null, options: SegmentationPreviewOptions = {}): Promise<SegmentationPreview> {
    if (disposed) return Promise.reject(new PreviewCancelledError('disposed'))
    if (typeof Worker === 'undefined') return Promise.reject(new Error('This browser cannot run the preview engine (no Web Workers).'))
    return new Promise<SegmentationPreview>((resolve, reject) => {
      // Copied now, so later edits of the caller's pixels or recipe do not leak into this preview. The spread also
      // unwraps a reactive recipe, which postMessage could not clone.
      const request: SegmentPreviewRequest = {
        id: nextId++,
        frame: copyImage(frame),
        recipe: { ...recipe },
        pixelSizeNm,
        ...(options.reference ? { reference: copyImage(options.reference) } : {}),
      }
      const job: Job = { request, resolve, reject }
      waiting?.reject(new PreviewCancelledError('superseded'))
      waiting = null
      if (running) {
        running.reject(new PreviewCancelledError('superseded'))
        waiting = job
      } else {
        try {
          send(job)
        } catch (error) {
          running = null
          reject(new Error(`The preview engine could not be started: ${error instanceof Error ? error.message : String(error)}.`))
        }
      }
      updateBusy()
    })
  }

  function dispose(): void {
    disposed = true
    const cancelled = new PreviewCancelledError('disposed')
    running?.reject(cancelled)
    waiting?.reject(cancelled)
    running = null
    waiting = null
    worker?.terminate()
    worker = null
    updateBusy()
  }

  if (getCurrentScope()) onScopeDispose(dispose)

  return { preview, busy, dispose }
}
