import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia } from 'pinia'
import ElementPlus from 'element-plus'
import { fitMotionCreep, type MotionAnalysis } from '@shared/analysis/analyzeMotion'
import type { MotionPointDto, SampleMotionDto, SampleMotionSeriesDto } from '@shared/types/motion'
import { createAppRouter } from '@/router'
import MotionSamplePanel from '@/components/MotionSamplePanel.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { alertTexts, getButton } from '../domQueries'

const SAMPLE = { id: 4, name: 'KB24-A300', annealTemperatureC: 300 }
const CURRENT_IMAGE = 6

/** Steps of one series on the creep law ln v = ln v₀ − C·H^(−1/4) (C = 40 mT^¼, ln v₀ = 22.4: invented values). */
function steps(imageId: number, imageName: string, fieldsMT: number[]): MotionPointDto[] {
  return fieldsMT.map((fieldMT, i) => ({ imageId, imageName, fromFrame: i, toFrame: i + 1, fieldMT, velocity: Math.exp(22.4 - 40 * fieldMT ** -0.25), velocityStdErr: null, velocityUnit: 'm/s' }))
}

/** A series as the server lists it; the panel reads only its step count, creep fit and notes. */
function series(imageId: number, imageName: string, points: MotionPointDto[]): SampleMotionSeriesDto {
  const { creep } = fitMotionCreep(points.map((p) => ({ field: p.fieldMT, velocity: p.velocity, velocityStdErr: null })), { fieldUnit: 'mT', velocityUnit: 'm/s' })
  return { imageId, imageName, recipe: null, motion: { steps: points, creep, notes: [] } as unknown as MotionAnalysis, error: null }
}

function sampleMotion(list: SampleMotionSeriesDto[], points: MotionPointDto[]): SampleMotionDto {
  const { creep } = fitMotionCreep(points.map((p) => ({ field: p.fieldMT, velocity: p.velocity, velocityStdErr: null })), { fieldUnit: 'mT', velocityUnit: 'm/s' })
  return { sample: SAMPLE, engineVersion: '1.2.0', series: list, points, velocityUnit: 'm/s', creep, notes: [] }
}

async function mountPanel(answer: () => Response) {
  const requests = stubFetch({ 'GET /api/samples/4/motion': answer })
  const router = createAppRouter(createMemoryHistory())
  const wrapper = mount(MotionSamplePanel, {
    props: { sampleId: SAMPLE.id, currentImageId: CURRENT_IMAGE },
    global: { plugins: [router, ElementPlus] },
    attachTo: document.body,
  })
  await flushPromises()
  return { wrapper, requests }
}

beforeEach(() => setActivePinia(createPinia()))

describe('MotionSamplePanel', () => {
  it('When the page’s own series is the only one of its sample, then the panel says so and links to the sample instead of repeating the fit', async () => {
    const own = steps(CURRENT_IMAGE, 'KB24-A300_bubble-growth.tif', [3, 4, 5, 6, 7.5, 9])
    const { wrapper } = await mountPanel(() => jsonResponse(200, sampleMotion([series(CURRENT_IMAGE, 'KB24-A300_bubble-growth.tif', own)], own)))

    expect(wrapper.get('[data-testid="only-series"]').text()).toContain('This is the only motion series of sample KB24-A300 (annealed at 300 °C) so far')
    expect(wrapper.get('a[href="/samples/4"]').text()).toBe("sample's page")
    expect(wrapper.find('[aria-label="Motion series of the sample"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="velocity-chart"]').exists()).toBe(false)
  })

  it('When the sample has a second series, then both are listed and their steps pooled into one creep fit', async () => {
    const own = steps(CURRENT_IMAGE, 'KB24-A300_bubble-growth.tif', [3, 4, 5])
    const other = steps(9, 'KB24-A300_area-2.tif', [6, 7.5, 9])
    const { wrapper } = await mountPanel(() => jsonResponse(200, sampleMotion([series(CURRENT_IMAGE, 'KB24-A300_bubble-growth.tif', own), series(9, 'KB24-A300_area-2.tif', other)], [...own, ...other])))

    expect(wrapper.find('[data-testid="only-series"]').exists()).toBe(false)
    expect(wrapper.text()).toContain('Every motion series of sample KB24-A300 (annealed at 300 °C)')
    const rows = wrapper.findAll('[aria-label="Motion series of the sample"] tbody tr').map((row) => row.findAll('td').map((cell) => cell.text()))
    expect(rows.map((cells) => [cells[0], cells[1], cells[3]])).toEqual([
      ['KB24-A300_bubble-growth.tif', '3', 'creep fitted'],
      ['KB24-A300_area-2.tif', '3', 'creep fitted'],
    ])
    expect(wrapper.find('[data-testid="velocity-chart"]').exists()).toBe(true)
    // The pooled fit of exact creep-law points returns the slope they were made with (40 mT^¼).
    expect(wrapper.text()).toMatch(/Creep slope C\s*40(\.0+)?\s*±/)
  })

  it('When the series cannot be loaded, then the panel says what failed and Retry asks again', async () => {
    let calls = 0
    const { wrapper, requests } = await mountPanel(() => (++calls === 1 ? errorResponse(503, 'unavailable', 'The server is restarting.') : jsonResponse(200, sampleMotion([], []))))
    expect(alertTexts(wrapper).join(' ')).toContain("the sample's motion series")
    await getButton(wrapper, 'Retry').trigger('click')
    await flushPromises()
    expect(requests.filter((r) => r.url === '/api/samples/4/motion')).toHaveLength(2)
    expect(alertTexts(wrapper)).toEqual([])
  })
})
