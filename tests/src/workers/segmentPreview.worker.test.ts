import { describe, expect, it } from 'vitest'
import { analyzeFrame } from '@shared/analysis/analyzeFrame'
import { normalizeRecipe } from '@shared/analysis/recipe'
import { createRandom } from '@shared/analysis/seededRandom'
import type { GrayImage } from '@shared/analysis/types'
import { handleSegmentPreview } from '@/workers/segmentPreview.worker'

/** Vertical stripes of a known period (8 px up, 8 px down) on a mild gradient, with Gaussian noise (seed 7, fixed). */
function stripes(width = 96, height = 64): GrayImage {
  const random = createRandom(7)
  const data = new Uint16Array(width * height)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) data[y * width + x] = Math.round(1000 + (Math.floor(x / 8) % 2 ? 400 : 0) + 2 * y + random.normal(0, 30))
  }
  return { width, height, data }
}

function copy(image: GrayImage): GrayImage {
  return { width: image.width, height: image.height, data: image.data.slice() }
}

describe('handleSegmentPreview', () => {
  it("When a frame and a recipe arrive, then the mask and measurements equal analyzeFrame's on the same input", () => {
    const frame = stripes()
    const recipe = { ...normalizeRecipe(), smoothingSigma: 1.5, minDomainArea: 4 }
    const expected = analyzeFrame(copy(frame), normalizeRecipe(recipe), { pixelSizeNm: 120 })

    const { response, transfer } = handleSegmentPreview({ id: 7, frame: copy(frame), recipe, pixelSizeNm: 120 })

    if ('error' in response) throw new Error(response.error)
    expect(response.id).toBe(7)
    expect(response.mask.width).toBe(96)
    expect(response.mask.height).toBe(64)
    expect(Array.from(response.mask.data)).toEqual(Array.from(expected.mask.data))
    expect(response.measurements).toEqual(expected.measurements)
    expect(response.ms).toBeGreaterThanOrEqual(0)
    // The mask travels as its own buffer (transferred, not copied again by postMessage).
    expect(transfer).toEqual([response.mask.data.buffer])
    expect(response.mask.data.buffer.byteLength).toBe(96 * 64)
  })

  it('When the stripes are 8 px up and 8 px down, then the preview finds their 16 px period and half the area up (ground truth of the synthetic frame)', () => {
    const { response } = handleSegmentPreview({ id: 1, frame: stripes(), recipe: {}, pixelSizeNm: null })
    if ('error' in response) throw new Error(response.error)
    expect(response.measurements.periodPx).toBeCloseTo(16, 0)
    expect(response.measurements.upFraction).toBeCloseTo(0.5, 1)
    expect(response.measurements.periodNm).toBeNull()
  })

  it('When the recipe is out of range, then the answer is an error naming the parameter, not an exception', () => {
    const { response, transfer } = handleSegmentPreview({ id: 3, frame: stripes(), recipe: { smoothingSigma: -1 }, pixelSizeNm: null })
    expect(response).toEqual({ id: 3, error: expect.stringContaining('smoothingSigma') })
    expect(transfer).toEqual([])
  })

  it('When the background needs a reference frame that was not sent, then the answer says so', () => {
    const { response } = handleSegmentPreview({ id: 4, frame: stripes(), recipe: { background: 'reference', referenceFrame: 2 }, pixelSizeNm: null })
    expect(response).toEqual({ id: 4, error: expect.stringContaining('reference frame 2') })
  })

  it('When the reference frame is sent, then the difference image is segmented', () => {
    const frame = stripes()
    const flat: GrayImage = { width: 96, height: 64, data: new Uint16Array(96 * 64).fill(900) }
    const expected = analyzeFrame(copy(frame), normalizeRecipe({ background: 'reference', referenceFrame: 0 }), { pixelSizeNm: null, reference: flat })
    const { response } = handleSegmentPreview({ id: 5, frame: copy(frame), recipe: { background: 'reference', referenceFrame: 0 }, pixelSizeNm: null, reference: flat })
    if ('error' in response) throw new Error(response.error)
    expect(response.measurements).toEqual(expected.measurements)
  })
})
