/**
 * The workspace's live preview, off the main thread: the shared engine's `analyzeFrame` on one frame with the recipe
 * being edited, so the numbers match what the server computes on save (same code, same ENGINE_VERSION).
 * Started by `useSegmentationWorker` as a Vite module worker; `handleSegmentPreview` is the pure part, exported for
 * unit tests without a Worker.
 */
import { analyzeFrame, type FrameMeasurements } from '@shared/analysis/analyzeFrame'
import { normalizeRecipe, type AnalysisRecipe } from '@shared/analysis/recipe'
import type { BinaryMask, GrayImage } from '@shared/analysis/types'

export interface SegmentPreviewRequest {
  /** Echoed back, so the caller can tell an answer to an older request from the current one. */
  id: number
  frame: GrayImage
  /** Missing fields take the defaults (the same `normalizeRecipe` the server applies). */
  recipe: Partial<AnalysisRecipe>
  pixelSizeNm: number | null
  /** The domain-free frame for `background: 'reference'`. */
  reference?: GrayImage
}

export type SegmentPreviewResponse =
  | { id: number; mask: BinaryMask; measurements: FrameMeasurements; ms: number }
  | { id: number; error: string }

/**
 * Segment and measure one frame. Never throws: a bad recipe or an engine failure becomes `{ id, error }`.
 * @returns the answer and the buffers to transfer with it (the mask's, copied so no engine buffer is detached).
 */
export function handleSegmentPreview(request: SegmentPreviewRequest): { response: SegmentPreviewResponse; transfer: Transferable[] } {
  const started = performance.now()
  try {
    const recipe = normalizeRecipe(request.recipe)
    if (recipe.background === 'reference' && !request.reference) {
      throw new RangeError(`the background needs reference frame ${recipe.referenceFrame}, which was not sent with the preview`)
    }
    const { mask, measurements } = analyzeFrame(request.frame, recipe, { pixelSizeNm: request.pixelSizeNm, reference: request.reference })
    // A private copy: the engine may hand back a view on a buffer it reuses, which transferring would detach.
    const data = mask.data.slice()
    const ms = performance.now() - started
    return { response: { id: request.id, mask: { width: mask.width, height: mask.height, data }, measurements, ms }, transfer: [data.buffer] }
  } catch (error) {
    return { response: { id: request.id, error: error instanceof Error ? error.message : String(error) }, transfer: [] }
  }
}

interface WorkerScope {
  onmessage: ((event: MessageEvent<SegmentPreviewRequest>) => void) | null
  postMessage(message: SegmentPreviewResponse, options: { transfer: Transferable[] }): void
}

// Only inside a worker: importing this module in a page or a test must not take over the page's `onmessage`.
const workerGlobalScope = (globalThis as { WorkerGlobalScope?: abstract new () => unknown }).WorkerGlobalScope
if (workerGlobalScope !== undefined && globalThis instanceof workerGlobalScope) {
  const scope = globalThis as unknown as WorkerScope
  scope.onmessage = (event) => {
    const { response, transfer } = handleSegmentPreview(event.data)
    scope.postMessage(response, { transfer })
  }
}
