import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import VChart from 'vue-echarts'
import type { MotionRoughness } from '@shared/analysis/analyzeMotion'
import { ROUGHNESS_THEORY } from '@shared/analysis/wallRoughness'
import MotionRoughnessPanel from '@/components/MotionRoughnessPanel.vue'
import { alertTexts } from '../domQueries'

/**
 * The wall of the last frame of a constructed bubble series of sample KB24-A300: B(r) = A·r^(2ζ) + floor on lags
 * 1…64 px with ζ = 0.71, A = 0.05 px^(2−2ζ), a noise floor of 0.12 px² and a fit over 3–20 px (18 lags).
 */
const ZETA = 0.71
const AMPLITUDE = 0.05
const FLOOR = 0.12
const LAGS = Array.from({ length: 64 }, (_, i) => i + 1)
const model = LAGS.map((r) => AMPLITUDE * r ** (2 * ZETA) + FLOOR)

function roughness(overrides: Partial<MotionRoughness> = {}): MotionRoughness {
  return {
    zeta: ZETA,
    zetaStdErr: 0.04,
    boxDimension: 1.086,
    boxDimensionStdErr: 0.012,
    frame: 7,
    profile: 'radial',
    centre: { x: 128.3, y: 127.8 },
    meanRadiusPx: 81.46,
    r: LAGS,
    B: model,
    model,
    fitRange: [3, 20],
    fitPoints: 18,
    amplitude: AMPLITUDE,
    noiseFloor: FLOOR,
    theory: ROUGHNESS_THEORY,
    boxSizes: [2, 4, 8, 16],
    boxCounts: [260, 124, 60, 29],
    ...overrides,
  }
}

async function mountPanel(value: MotionRoughness) {
  const wrapper = mount(MotionRoughnessPanel, { props: { roughness: value }, global: { plugins: [ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}
type Mounted = Awaited<ReturnType<typeof mountPanel>>

/** Label → value of the roughness list. */
function values(wrapper: Mounted): Record<string, string> {
  return Object.fromEntries(wrapper.get('[data-testid="roughness"]').findAll('dt').map((dt) => [dt.text(), dt.element.nextElementSibling?.textContent?.trim() ?? '']))
}

type Series = { type: string; name: string; data: [number, number][] }
const seriesOf = (wrapper: Mounted) => (wrapper.getComponent(VChart).props('option') as { series: Series[] }).series

describe('MotionRoughnessPanel', () => {
  it('When ζ is fitted, then it is shown with its standard error beside the theory value 2/3 and its distance from it in standard errors', async () => {
    const shown = values(await mountPanel(roughness()))
    expect(shown['Roughness exponent ζ']).toBe('0.710 ± 0.040') // rounded at the error's second digit
    // ζ = 2/3 for an elastic line in random-bond disorder (Huse & Henley 1985, from memory): 0.667 to three digits.
    expect(shown['Theory (elastic line, random-bond disorder)']).toBe('0.667 = 2/3')
    // |0.71 − 2/3| / 0.04 = 0.0433… / 0.04 = 1.083 → 1.1 to two digits.
    expect(shown['|ζ − 2/3| / SE']).toBe('1.1')
    expect(shown['Box-counting dimension']).toBe('1.086 ± 0.012')
    expect(shown['Noise floor of B']).toBe('0.12 px²')
    expect(shown['Lags in the fit']).toBe('18')
  })

  it('When ζ lies below 2/3, then the distance is still positive, and a small error makes it large', async () => {
    // |0.52 − 2/3| / 0.011 = 0.14667 / 0.011 = 13.33 → 13.
    const shown = values(await mountPanel(roughness({ zeta: 0.52, zetaStdErr: 0.011 })))
    expect(shown['Roughness exponent ζ']).toBe('0.520 ± 0.011')
    expect(shown['|ζ − 2/3| / SE']).toBe('13')
  })

  it('When the panel is shown, then the caption names the frame, the mean radius and the fitted lags, and the help cites the theory', async () => {
    const wrapper = await mountPanel(roughness())
    const caption = wrapper.get('figcaption').text()
    expect(caption).toContain('along the wall of frame 7')
    // 81.46 px to three significant digits.
    expect(caption).toContain('mean radius 81.5 px')
    expect(caption).toContain('r = 3–20 px')
    expect(wrapper.text()).toContain('Huse & Henley 1985')
  })

  it('When drawn, then B(r) is plotted out to half the wall and the fitted model only over the fit range, both on log–log axes', async () => {
    const wrapper = await mountPanel(roughness())
    const option = wrapper.getComponent(VChart).props('option') as { xAxis: { type: string }; yAxis: { type: string } }
    expect([option.xAxis.type, option.yAxis.type]).toEqual(['log', 'log'])
    const [measured, fit] = seriesOf(wrapper)
    // 64 lags: a closed wall's B is symmetric about half its length, so lags 1…32 are drawn.
    expect(measured.data.map(([r]) => r)).toEqual(LAGS.slice(0, 32))
    expect(fit.data.map(([r]) => r)).toEqual(LAGS.slice(2, 20))
    expect(fit.data[0][1]).toBeCloseTo(AMPLITUDE * 3 ** (2 * ZETA) + FLOOR, 12)
    expect(fit.name).toBe('Fit, ζ = 0.71')
  })

  it('When ζ could not be fitted, then ζ and its distance from 2/3 read "—", the theory is still given, no model is drawn and the reason is shown', async () => {
    const reason = 'Too few lags above the noise floor for a fit.'
    const wrapper = await mountPanel(roughness({ zeta: null, zetaStdErr: null, model: null, amplitude: null, fitPoints: 0, warning: reason }))
    const shown = values(wrapper)
    expect(shown['Roughness exponent ζ']).toBe('—')
    expect(shown['|ζ − 2/3| / SE']).toBe('—')
    expect(shown['Theory (elastic line, random-bond disorder)']).toBe('0.667 = 2/3')
    expect(shown['Lags in the fit']).toBe('0')
    expect(alertTexts(wrapper)).toContain(reason)
    const [measured, fit] = seriesOf(wrapper)
    expect(measured.data.length).toBeGreaterThan(0)
    expect(fit.data).toEqual([])
  })

  it('When ζ has no standard error, then ζ is shown alone and no distance from 2/3 is claimed', async () => {
    const shown = values(await mountPanel(roughness({ zetaStdErr: null })))
    expect(shown['Roughness exponent ζ']).toBe('0.71')
    expect(shown['|ζ − 2/3| / SE']).toBe('—')
  })

  it('When the fit has no warning, then the panel shows no alert', async () => {
    expect(alertTexts(await mountPanel(roughness()))).toEqual([])
  })
})
