import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import { ENGINE_VERSION } from '@shared/analysis/engineVersion'
import { DEFAULT_RECIPE } from '@shared/analysis/recipe'
import type { AnalysisDto } from '@shared/types/annotation'
import WorkspaceResultsPanel from '@/components/WorkspaceResultsPanel.vue'

function measurements(overrides: Partial<FrameMeasurements> = {}): FrameMeasurements {
  return {
    width: 512,
    height: 512,
    pixelSizeNm: null,
    threshold: 0.12,
    analysedPx: 262144,
    upFraction: 0.523,
    downFraction: 0.477,
    magnetization: 0.046,
    domainCount: 124,
    upDomainCount: 62,
    downDomainCount: 62,
    meanUpDiameterPx: 18.2,
    meanWidthPx: 12.44,
    meanWidthStdErrPx: 0.32,
    meanWidthNm: null,
    upMeanWidthPx: 12.9,
    downMeanWidthPx: 12.0,
    periodPx: 25.1,
    periodNm: null,
    orientationDeg: 43.2,
    orderParameter: 0.81,
    wallDensityPerPx: 0.0812,
    wallDensityPerUm: null,
    wallLengthPx: 21286,
    reassignedFraction: 0.001,
    contrast: 31.5,
    ...overrides,
  }
}

function analysis(overrides: Partial<AnalysisDto> = {}): AnalysisDto {
  return {
    id: 9,
    frameId: 42,
    annotationId: 5,
    annotationVersion: 3,
    recipe: DEFAULT_RECIPE,
    engineVersion: '1.0.0',
    status: 'draft',
    measurements: measurements({ pixelSizeNm: 120, meanWidthNm: 1492.8, periodNm: 3012, wallDensityPerUm: 0.6767 }),
    distributions: null,
    error: null,
    createdAt: '2026-03-02T10:00:00.000Z',
    ...overrides,
  }
}

/** The text of each measurement row: label, value and detail. */
function rowText(wrapper: ReturnType<typeof mountPanel>, label: string): string {
  const row = wrapper.findAll('.workspace-results-panel__row').find((r) => r.get('dt').text() === label)
  if (!row) throw new Error(`No row "${label}"`)
  return [row.get('dt'), ...row.findAll('dd')]
    .map((cell) => cell.text().replace(/\s+/g, ' ').trim())
    .filter((text) => text !== '')
    .join(' ')
}

function mountPanel(props: InstanceType<typeof WorkspaceResultsPanel>['$props']) {
  return mount(WorkspaceResultsPanel, { props, global: { plugins: [ElementPlus] }, attachTo: document.body })
}

describe('WorkspaceResultsPanel', () => {
  it('When an uncalibrated preview is shown, then lengths are in px with ± SE and the physical values read "—" with a hint', () => {
    const wrapper = mountPanel({ analysis: null, previewMeasurements: measurements(), status: 'ready', previewRecipe: DEFAULT_RECIPE })

    expect(wrapper.text()).toContain('Preview · not saved')
    expect(rowText(wrapper, 'Area fraction')).toBe('Area fraction up 52.3 % down 47.7 %')
    expect(rowText(wrapper, 'M/Ms')).toContain('+0.046')
    expect(rowText(wrapper, 'Domains')).toBe('Domains 124 62 up · 62 down')
    expect(rowText(wrapper, 'Mean width')).toBe('Mean width 12.44 ± 0.32 px — (calibrate the pixel size)')
    expect(rowText(wrapper, 'Period')).toBe('Period 25.1 px — (calibrate the pixel size)')
    expect(rowText(wrapper, 'Wall density')).toBe('Wall density 0.0812 px⁻¹ — (calibrate the pixel size)')
    expect(rowText(wrapper, 'Stripe orientation')).toBe('Stripe orientation 43.2° order S = 0.81')
    // A preview is computed by this build's engine, so it carries the current version.
    expect(wrapper.text()).toContain(`Engine ${ENGINE_VERSION} · Otsu · flat-field σ 40 px · smoothing σ 1 px · open + close · domains ≥ 9 px`)
  })

  it('When the pixel size is known, then widths and periods also show in nm or µm and the wall density in µm⁻¹', () => {
    const wrapper = mountPanel({ analysis: analysis(), previewMeasurements: null, status: 'ready' })

    expect(wrapper.text()).toContain('Saved version 3')
    // 12.44 px × 120 nm = 1492.8 nm; SE 0.32 px × 120 nm = 38.4 nm [D].
    expect(rowText(wrapper, 'Mean width')).toBe('Mean width 12.44 ± 0.32 px 1.493 ± 0.038 µm')
    expect(rowText(wrapper, 'Period')).toBe('Period 25.1 px 3.01 µm')
    expect(rowText(wrapper, 'Wall density')).toBe('Wall density 0.0812 px⁻¹ 0.677 µm⁻¹')
    expect(wrapper.text()).not.toContain('calibrate the pixel size')
  })

  it('When a measurement is undefined (no walls, no stripes, no contrast), then it reads "—"', () => {
    const empty = measurements({ meanWidthPx: null, meanWidthStdErrPx: null, periodPx: null, orientationDeg: null, contrast: null })
    const wrapper = mountPanel({ analysis: null, previewMeasurements: empty, status: 'ready' })

    expect(rowText(wrapper, 'Mean width')).toBe('Mean width —')
    expect(rowText(wrapper, 'Period')).toBe('Period —')
    expect(rowText(wrapper, 'Stripe orientation')).toContain('Stripe orientation —')
    expect(rowText(wrapper, 'Contrast')).toBe('Contrast —')
  })

  it('When the pattern has no preferred direction (order S below 0.2, as for a labyrinth), then no angle is given as the orientation', () => {
    // METHODS check #21: an isotropic band-limited labyrinth gives S ≈ 0.11, "< 0.2".
    const maze = measurements({ orientationDeg: -77.7, orderParameter: 0.015 })
    const wrapper = mountPanel({ analysis: null, previewMeasurements: maze, status: 'ready' })

    expect(rowText(wrapper, 'Stripe orientation')).toBe('Stripe orientation no preferred direction order S = 0.015 < 0.2; mean angle −77.7° is noise')
  })

  it('When a preview exists next to a saved analysis, then the preview numbers are shown and marked as not saved', () => {
    const wrapper = mountPanel({ analysis: analysis(), previewMeasurements: measurements({ domainCount: 7, upDomainCount: 3, downDomainCount: 4 }), status: 'ready' })
    expect(wrapper.text()).toContain('Preview · not saved')
    expect(rowText(wrapper, 'Domains')).toBe('Domains 7 3 up · 4 down')
  })

  it('When there is nothing yet, loading, or a failure, then the panel says so', () => {
    expect(mountPanel({ analysis: null, previewMeasurements: null, status: 'ready' }).text()).toContain('No measurements yet')
    expect(mountPanel({ analysis: null, previewMeasurements: null, status: 'loading' }).find('.el-skeleton').exists()).toBe(true)
    const failed = mountPanel({ analysis: null, previewMeasurements: null, status: 'error', error: 'The server could not be reached.' })
    expect(failed.get('[role="alert"]').text()).toContain('The server could not be reached.')
  })

  it('When the saved analysis has distributions, then the charts are offered in tabs', async () => {
    const distributions = {
      widthHistogram: { edges: [0, 5, 10, 15], counts: [3, 10, 4] },
      upDiametersPx: [8, 12, 15, 20],
      spectrum: { frequencies: [0, 0.02, 0.04, 0.06], power: [9, 4, 20, 2] },
    }
    const wrapper = mountPanel({ analysis: analysis({ distributions }), previewMeasurements: null, status: 'ready' })
    await flushPromises()
    expect(wrapper.findAll('[role="tab"]').map((t) => t.text())).toEqual(['Widths', 'Domain sizes', 'Spectrum'])
    expect(wrapper.get('[role="img"]').attributes('aria-label')).toBe('Histogram of local width in µm, 17 values')
  })
})
