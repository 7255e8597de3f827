import { beforeEach, describe, expect, it, vi } from 'vitest'
import { effectScope, ref } from 'vue'
import { flushPromises } from '@vue/test-utils'
import { DEFAULT_DISPLAY, displayLut, type DisplaySettings } from '@/colormaps'
import { clearFramePixelCache, loadFramePixels, renderFrame, useFramePixels, type FramePixels } from '@/composables/useFramePixels'
import { stubFetch } from '../fakeApi'

/** pixels.bin as the server sends it: raw little-endian samples with the size headers. */
function pixelsResponse(width: number, height: number, bitDepth: 8 | 16 | 32, data: ArrayLike<number>): Response {
  const typed = bitDepth === 8 ? Uint8Array.from(data) : bitDepth === 16 ? Uint16Array.from(data) : Float32Array.from(data)
  return new Response(typed.buffer as ArrayBuffer, {
    status: 200,
    headers: { 'Content-Type': 'application/octet-stream', 'X-Width': String(width), 'X-Height': String(height), 'X-Bit-Depth': String(bitDepth) },
  })
}

beforeEach(() => clearFramePixelCache())
describe('loadFramePixels', () => {
  it('When a 16-bit frame has a dead and two hot pixels, then the display range skips them (0.5th–99.5th percentile)', async () => {
    // 1000 pixels 1000..1999, with pixel 0 dead (0) and the last two hot (65535). Sorted: 0, 1001, …, 1997, 65535,
    // 65535. Order statistics [D]: rank ⌊0.005·999⌋ = 4 → 1004; rank ⌈0.995·999⌉ = 995 → 1995.
    const data = Array.from({ length: 1000 }, (_, i) => 1000 + i)
    data[0] = 0
    data[998] = 65535
    data[999] = 65535
    stubFetch({ 'GET /api/images/5/frames/0/pixels.bin': () => pixelsResponse(100, 10, 16, data) })
    const frame = await loadFramePixels(5, 0)
    expect(frame.data).toBeInstanceOf(Uint16Array)
    expect([frame.width, frame.height, frame.bitDepth]).toEqual([100, 10, 16])
    expect({ min: frame.min, max: frame.max, autoRange: frame.autoRange }).toEqual({ min: 0, max: 65535, autoRange: [1004, 1995] })
  })

  it('When a frame is constant, then its range is centred on the value so it shows mid-grey', async () => {
    stubFetch({ 'GET /api/images/5/frames/1/pixels.bin': () => pixelsResponse(3, 3, 8, new Array(9).fill(77)) })
    expect((await loadFramePixels(5, 1)).autoRange).toEqual([76.5, 77.5])
  })

  it('When a float frame arrives, then it is read as Float32 with its own range', async () => {
    stubFetch({ 'GET /api/images/5/frames/2/pixels.bin': () => pixelsResponse(2, 2, 32, [-1.5, 0.25, 0.5, 2]) })
    const frame = await loadFramePixels(5, 2)
    expect(frame.data).toBeInstanceOf(Float32Array)
    expect([frame.min, frame.max, ...frame.autoRange]).toEqual([-1.5, 2, -1.5, 2])
  })

  it('When the byte count does not match the size headers, then the load fails with bad-pixels', async () => {
    stubFetch({ 'GET /api/images/5/frames/3/pixels.bin': () => pixelsResponse(4, 4, 16, [1, 2, 3]) })
    await expect(loadFramePixels(5, 3)).rejects.toMatchObject({ code: 'bad-pixels' })
  })

  it('When the same frame is asked for twice, then it is fetched once', async () => {
    const requests = stubFetch({ 'GET /api/images/5/frames/0/pixels.bin': () => pixelsResponse(2, 1, 8, [1, 2]) })
    await loadFramePixels(5, 0)
    await loadFramePixels(5, 0)
    expect(requests).toHaveLength(1)
  })
})

describe('renderFrame', () => {
  it('When painted in grey over a range, then values map linearly onto 0..255 and clip outside it', () => {
    const frame: FramePixels = { width: 5, height: 1, bitDepth: 16, data: Uint16Array.from([100, 150, 300, 50, 999]), min: 50, max: 999, autoRange: [100, 300] }
    const canvas = renderFrame(frame, displayLut(DEFAULT_DISPLAY), [100, 300])
    const context = canvas.getContext('2d')!
    const painted = vi.mocked(context.putImageData).mock.calls[0][0] as ImageData
    // [D] level = round((v − 100)·255/200): 100 → 0, 150 → 63.75 → 64, 300 → 255; 50 clips to 0, 999 to 255.
    const reds = Array.from({ length: 5 }, (_, i) => painted.data[i * 4])
    expect(reds).toEqual([0, 64, 255, 0, 255])
    expect([canvas.width, canvas.height]).toEqual([5, 1])
  })
})

describe('useFramePixels', () => {
  it('When the frame index moves and comes back, then each frame is fetched once and the readout gives raw values', async () => {
    const requests = stubFetch({
      'GET /api/images/8/frames/0/pixels.bin': () => pixelsResponse(2, 2, 16, [10, 20, 30, 40]),
      'GET /api/images/8/frames/1/pixels.bin': () => pixelsResponse(2, 2, 16, [50, 60, 70, 80]),
    })
    const imageId = ref<number | null>(8)
    const frameIndex = ref(0)
    const display = ref<DisplaySettings>({ ...DEFAULT_DISPLAY })
    const scope = effectScope()
    const state = scope.run(() => useFramePixels(imageId, frameIndex, { display }))!

    await flushPromises()
    expect(state.status.value).toBe('ready')
    expect(state.canvas.value).not.toBeNull()
    expect(state.valueAt(1, 1)).toBe(40)
    expect(state.valueAt(2, 0)).toBeNull()

    frameIndex.value = 1
    await flushPromises()
    expect(state.valueAt(0, 1)).toBe(70)
    frameIndex.value = 0
    await flushPromises()
    expect(state.valueAt(0, 0)).toBe(10)
    expect(requests).toHaveLength(2)

    const before = state.canvas.value
    display.value = { ...display.value, colormap: 'viridis' }
    await flushPromises()
    expect(state.canvas.value).not.toBe(before)
    scope.stop()
  })
})
