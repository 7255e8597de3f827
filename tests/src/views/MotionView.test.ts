import { beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia } from 'pinia'
import ElementPlus from 'element-plus'
import { analyzeMotion, motionRecipeDefaults } from '@shared/analysis/analyzeMotion'
import { normalizeRecipe } from '@shared/analysis/recipe'
import type { ImageMotionDto } from '@shared/types/motion'
import { createAppRouter } from '@/router'
import MotionView from '@/views/MotionView.vue'
import { renderMotionSeries } from '../../../scripts/sampleImages'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts } from '../domQueries'

const IMAGE_ID = 6
let motion: ImageMotionDto

beforeAll(() => {
  // A constructed bubble series (scripts/sampleImages: 8 frames, 200 nm pixels, velocities from the creep law
  // C = 40 mT^¼, ln v₀ = 22.4), measured by the real engine as the server would.
  const series = renderMotionSeries({ seed: 8, creep: { slope: 40, lnV0: 22.4, mu: 0.25 } })
  const recipe = normalizeRecipe(motionRecipeDefaults(256, 256))
  const rows = series.pulseFieldsMT.map((field, frame) => ({ frame, pulseField: field, pulseFieldMT: field, pulseDurationS: series.pulseDurationsS[frame] }))
  motion = {
    imageId: IMAGE_ID,
    imageName: 'KB24-A300_bubble-growth.tif',
    sample: null,
    engineVersion: '1.2.0',
    recipe,
    motion: analyzeMotion(series.frames, recipe, rows, { pixelSizeNm: 200, fieldUnit: 'mT' }),
  }
}, 60_000)

beforeEach(() => setActivePinia(createPinia()))

async function mountMotion(answer: () => Response) {
  stubFetch({ [`GET /api/images/${IMAGE_ID}/motion`]: answer })
  const router = createAppRouter(createMemoryHistory())
  const wrapper = mount(MotionView, { props: { imageId: IMAGE_ID }, global: { plugins: [router, ElementPlus] }, attachTo: document.body })
  return wrapper
}

describe('MotionView', () => {
  it('While the series is measured, then the page says what it is doing', async () => {
    const wrapper = await mountMotion(() => jsonResponse(200, motion))
    expect(wrapper.text()).toContain('Registering, segmenting and measuring every frame…')
    await flushPromises()
    expect(wrapper.text()).not.toContain('Registering, segmenting and measuring every frame…')
  })

  it('When the series is measured, then every step is listed with its field and duration, and the creep fit is shown', async () => {
    const wrapper = await mountMotion(() => jsonResponse(200, motion))
    await flushPromises()
    expect(wrapper.get('h1').text()).toBe('Wall motion · KB24-A300_bubble-growth.tif')
    expect(wrapper.text()).toContain('8 frames · 7 steps · velocities in m/s · growing phase: up (bright)')
    const stepRows = wrapper.findAll('[data-testid="motion-steps"] tbody tr').map((row) => row.findAll('td').map((cell) => cell.text()))
    expect(stepRows.map((cells) => cells[0])).toEqual(['0 → 1', '1 → 2', '2 → 3', '3 → 4', '4 → 5', '5 → 6', '6 → 7'])
    expect(stepRows[0][1]).toBe('3 mT')
    expect(wrapper.find('[aria-label="Velocity against field"]').exists()).toBe(true)
    // The fit of the engine's velocities gives back the constructed slope, as shown to its standard error.
    expect(wrapper.text()).toMatch(/Creep slope C\s*40(\.0+)? ± [\d.]+ mT\^0\.25/)
    // No sample: no pooled section.
    expect(wrapper.text()).not.toContain('All series of sample')
  })

  it('When the image does not exist, then the page says so and leads back to the image list', async () => {
    const wrapper = await mountMotion(() => errorResponse(404, 'not-found', 'No such image.'))
    await flushPromises()
    expect(wrapper.text()).toContain('Image not found')
    expect(wrapper.text()).toContain('All images')
  })

  it('When the server fails, then the page says the wall motion could not be loaded', async () => {
    const wrapper = await mountMotion(() => errorResponse(500, 'internal', 'Something went wrong.'))
    await flushPromises()
    expect(alertTexts(wrapper).join(' ')).toContain('the wall motion')
  })
})
