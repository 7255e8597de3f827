import { beforeEach, describe, expect, it, vi } from 'vitest'
import { effectScope } from 'vue'
import { DEFAULT_RECIPE } from '@shared/analysis/recipe'
import type { GrayImage } from '@shared/analysis/types'
import { isPreviewCancelled, useSegmentationWorker } from '@/composables/useSegmentationWorker'
import { handleSegmentPreview, type SegmentPreviewRequest, type SegmentPreviewResponse } from '@/workers/segmentPreview.worker'

/**
 * A Worker stand-in that runs the real message handler, but only when the test says so (`answerNext`), so the order
 * of requests and answers is under the test's control.
 */
class ManualWorker {
  static instances: ManualWorker[] = []
  onmessage: ((event: { data: SegmentPreviewResponse }) => void) | null = null
  onerror: ((event: { message: string; preventDefault(): void }) => void) | null = null
  onmessageerror: (() => void) | null = null
  received: { request: SegmentPreviewRequest; transfer: Transferable[] }[] = []
  terminated = false

  constructor(
    readonly url: URL,
    readonly options: WorkerOptions,
  ) {
    ManualWorker.instances.push(this)
  }

  postMessage(request: SegmentPreviewRequest, transfer: Transferable[]): void {
    this.received.push({ request, transfer })
  }

  answerNext(): void {
    const next = this.received.shift()
    if (!next) throw new Error('nothing to answer')
    this.onmessage?.({ data: handleSegmentPreview(next.request).response })
  }

  terminate(): void {
    this.terminated = true
  }
}

/** Two vertical bands: left half 100, right half 200. */
function halves(size = 32): GrayImage {
  const data = new Uint8Array(size * size)
  for (let i = 0; i < data.length; i++) data[i] = i % size < size / 2 ? 100 : 200
  return { width: size, height: size, data }
}

const RECIPE = { ...DEFAULT_RECIPE, background: 'none' as const, cleanup: 'none' as const, minDomainArea: 0 }

beforeEach(() => {
  ManualWorker.instances = []
  vi.stubGlobal('Worker', ManualWorker)
})
describe('useSegmentationWorker', () => {
  it('When a preview is asked for, then one module worker starts lazily and the answer resolves with mask and measurements', async () => {
    const worker = useSegmentationWorker()
    expect(ManualWorker.instances).toHaveLength(0)

    const frame = halves()
    const result = worker.preview(frame, RECIPE, 80)
    expect(worker.busy.value).toBe(true)
    const [instance] = ManualWorker.instances
    expect(instance.options).toEqual({ type: 'module' })
    expect(instance.url.pathname).toMatch(/segmentPreview\.worker\.ts$/)
    instance.answerNext()

    const { mask, measurements, ms } = await result
    expect(Array.from(mask.data.slice(0, 32))).toEqual([...new Array(16).fill(0), ...new Array(16).fill(1)])
    expect(measurements.upFraction).toBe(0.5)
    expect(measurements.pixelSizeNm).toBe(80)
    expect(ms).toBeGreaterThanOrEqual(0)
    expect(worker.busy.value).toBe(false)
  })

  it('When the frame is sent, then a copy is transferred and the caller keeps its own pixels', async () => {
    const worker = useSegmentationWorker()
    const frame = halves()
    const result = worker.preview(frame, RECIPE, null)
    const [{ request, transfer }] = ManualWorker.instances[0].received
    expect(request.frame.data).not.toBe(frame.data)
    expect(transfer).toEqual([request.frame.data.buffer])
    expect(Array.from(request.frame.data)).toEqual(Array.from(frame.data))
    ManualWorker.instances[0].answerNext()
    await result
    expect(frame.data.byteLength).toBe(32 * 32)
  })

  it('When newer previews arrive while one runs, then the older ones are cancelled and only the newest is computed next', async () => {
    const worker = useSegmentationWorker()
    const first = worker.preview(halves(), RECIPE, null)
    const second = worker.preview(halves(), { ...RECIPE, smoothingSigma: 2 }, null)
    const third = worker.preview(halves(), { ...RECIPE, smoothingSigma: 3 }, null)
    const instance = ManualWorker.instances[0]

    await expect(first).rejects.toSatisfy(isPreviewCancelled)
    await expect(second).rejects.toSatisfy(isPreviewCancelled)
    // Only the first was posted: the worker is busy with it, the newest waits on the page.
    expect(instance.received.map((r) => r.request.recipe.smoothingSigma)).toEqual([1])

    instance.answerNext()
    expect(instance.received.map((r) => r.request.recipe.smoothingSigma)).toEqual([3])
    expect(worker.busy.value).toBe(true)
    instance.answerNext()
    await expect(third).resolves.toMatchObject({ measurements: { upFraction: 0.5 } })
    expect(worker.busy.value).toBe(false)
    expect(ManualWorker.instances).toHaveLength(1)
  })

  it('When the engine rejects the recipe, then the promise rejects with a message naming the parameter', async () => {
    const worker = useSegmentationWorker()
    const result = worker.preview(halves(), { ...RECIPE, flattenSigma: 1, background: 'flatten' }, null)
    ManualWorker.instances[0].answerNext()
    await expect(result).rejects.toThrow(/The preview could not be computed: recipe\.flattenSigma must be between 2 and 500 px/)
    expect(worker.busy.value).toBe(false)
  })

  it('When the worker fails to start, then the preview rejects with a clear message and the next preview starts a new worker', async () => {
    const worker = useSegmentationWorker()
    const result = worker.preview(halves(), RECIPE, null)
    ManualWorker.instances[0].onerror?.({ message: 'SyntaxError in module', preventDefault: () => undefined })
    await expect(result).rejects.toThrow('The preview engine stopped: SyntaxError in module')
    expect(ManualWorker.instances[0].terminated).toBe(true)

    const retry = worker.preview(halves(), RECIPE, null)
    expect(ManualWorker.instances).toHaveLength(2)
    ManualWorker.instances[1].answerNext()
    await expect(retry).resolves.toBeDefined()
  })

  it('When the owning scope ends, then the worker is terminated and a pending preview is cancelled', async () => {
    const scope = effectScope()
    const worker = scope.run(() => useSegmentationWorker())!
    const result = worker.preview(halves(), RECIPE, null)
    scope.stop()
    await expect(result).rejects.toSatisfy(isPreviewCancelled)
    expect(ManualWorker.instances[0].terminated).toBe(true)
    expect(worker.busy.value).toBe(false)
    await expect(worker.preview(halves(), RECIPE, null)).rejects.toSatisfy(isPreviewCancelled)
  })
})
