import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import VChart from 'vue-echarts'
import { summarizeCurie, type CurieSummary } from '@shared/analysis/analyzeStack'
import { createRandom } from '@shared/analysis/seededRandom'
import type { StackFrameResultDto } from '@shared/types/stack'
import StackCurieChart from '@/components/StackCurieChart.vue'
import { alertTexts } from '../domQueries'

/**
 * A constructed temperature ramp of sample KB24-A300: Kerr domain contrast C(T) = C0·(1 − T/Tc)^β below Tc and 0
 * above, with C0 = 820 grey levels, Tc = 412 K and β = 0.326 (the 3-D Ising value, from memory), plus normal
 * noise of σ grey levels from a fixed seed so that the fit has honest, non-zero standard errors.
 */
const C0 = 820
const TC_K = 412
const BETA = 0.326
const law = (t: number) => (t < TC_K ? C0 * (1 - t / TC_K) ** BETA : 0)

interface Ramp {
  frames: StackFrameResultDto[]
  curie: CurieSummary
}

/** Frames from `fromK` to `toK` in steps of `stepK`, fitted by the engine's Curie fit as a finished run would be. */
function ramp(fromK: number, toK: number, stepK: number, noise: number): Ramp {
  const random = createRandom(24)
  const temperatures: number[] = []
  for (let t = fromK; t <= toK; t += stepK) temperatures.push(t)
  const contrasts = temperatures.map((t) => law(t) + random.normal(0, noise))
  const maskFrame = 0
  const curie = summarizeCurie(contrasts, maskFrame, { pixelSizeNm: 100, fieldUnit: null, frames: temperatures.map((temperatureK) => ({ field: null, temperatureK })) })
  if (!curie) throw new Error('The constructed ramp has no Curie fit')
  const frames = temperatures.map((temperatureK, index) => ({ index, field: null, fieldUnit: null, temperatureK, measurements: null, error: null }))
  return { frames, curie }
}

/** 300…430 K in 5 K steps (27 frames), σ = 4: the fit reaches far below Tc. */
const wide = () => ramp(300, 430, 5, 4)
/** 380…430 K in 2 K steps (26 frames), σ = 2: only the critical region t ≲ 0.1. */
const narrow = () => ramp(380, 430, 2, 2)

async function mountChart(props: Ramp) {
  const wrapper = mount(StackCurieChart, { props, global: { plugins: [ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}
type Mounted = Awaited<ReturnType<typeof mountChart>>

const SUPERSCRIPT_DIGITS = '⁰¹²³⁴⁵⁶⁷⁸⁹'
/** A number as shown ("411.72", "−0.5", "4.2×10⁻³") read back. */
function readNumber(text: string): number {
  const plain = text.trim().replace(/−/g, '-')
  const power = /^(-?[\d.]+)×10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)$/.exec(plain)
  if (!power) return Number(plain)
  const exponent = Number([...power[2]].map((c) => (c === '⁻' ? '-' : String(SUPERSCRIPT_DIGITS.indexOf(c)))).join(''))
  return Number(power[1]) * 10 ** exponent
}

/** Label → value of the fit's list. */
function fitValues(wrapper: Mounted): Record<string, string> {
  return Object.fromEntries(wrapper.get('[data-testid="curie-fit"]').findAll('dt').map((dt) => [dt.text(), dt.element.nextElementSibling?.textContent?.trim() ?? '']))
}

/** "value ± error" (with an optional unit after it) read back. */
function withError(text: string, unit = ''): [number, number] {
  const parts = text.replace(new RegExp(`\\s*${unit}$`), '').split(' ± ')
  expect(parts).toHaveLength(2)
  return [readNumber(parts[0]), readNumber(parts[1])]
}

type Series = { type: string; name: string; data: unknown[]; markLine?: { data: { xAxis: number }[] } }
const seriesOf = (wrapper: Mounted) => (wrapper.getComponent(VChart).props('option') as { series: Series[] }).series

describe('StackCurieChart', () => {
  it('When a ramp of known Tc and β is fitted, then the Tc and β shown agree with the constructed ones within their standard errors', async () => {
    const wrapper = await mountChart(wide())
    const values = fitValues(wrapper)

    const [tc, tcError] = withError(values['Curie temperature Tc'], 'K')
    expect(values['Curie temperature Tc']).toMatch(/ K$/)
    expect(tcError).toBeGreaterThan(0)
    expect(Math.abs(tc - TC_K)).toBeLessThanOrEqual(3 * tcError)
    // Five significant digits for a Tc of some 400 K: two decimals.
    expect(values['Curie temperature Tc']).toMatch(/^\d{3}\.\d{2} ± /)

    const [beta, betaError] = withError(values['Exponent β'])
    expect(betaError).toBeGreaterThan(0)
    expect(Math.abs(beta - BETA)).toBeLessThanOrEqual(3 * betaError)
    // The amplitude is the constructed C0 within a few per cent.
    expect(Math.abs(readNumber(values['Amplitude C0']) - C0) / C0).toBeLessThan(0.05)

    // Frames below Tc (300…410 K, 23 of the 27) carry contrast well above the noise; those above it are zero.
    expect(values['Points in the fit']).toBe('23 of 27')
    // The coldest frame lies at t = 1 − 300/412 = 0.27 (two digits shown).
    expect(values['Fit window t = 1 − T/Tc']).toMatch(/^[\d.]+ – 0\.27$/)
  })

  it('When Tc and β are fitted, then their correlation is shown as Cov(Tc, β) / (SE(Tc)·SE(β)), strongly positive as for any such fit', async () => {
    const { frames, curie } = wide()
    const wrapper = await mountChart({ frames, curie })
    const shown = readNumber(fitValues(wrapper)['Correlation of Tc and β'])
    // Definition of the correlation coefficient from the covariance matrix of the fit.
    const expected = curie.covarianceTcBeta! / (curie.tcStdErr! * curie.betaStdErr!)
    expect(shown).toBeCloseTo(expected, 2)
    // A higher Tc is traded for a larger β along the data (METHODS §6: "Tc and β are strongly correlated").
    expect(shown).toBeGreaterThan(0.5)
    expect(shown).toBeLessThanOrEqual(1)
  })

  it('When the fit reaches t = 0.27, then the chart warns that it goes beyond the critical region; a fit on t ≤ 0.1 has no such warning', async () => {
    const beyond = await mountChart(wide())
    expect(alertTexts(beyond).join(' ')).toContain('The fit reaches beyond the critical region')
    beyond.unmount()

    const { curie } = narrow()
    // The coldest frame, 380 K, is at t = 1 − 380/412 = 0.078 < 0.1.
    expect(curie.reducedTemperatureRange![1]).toBeLessThan(0.1)
    const inside = await mountChart(narrow())
    expect(alertTexts(inside).join(' ')).not.toContain('beyond the critical region')
    const [beta, betaError] = withError(fitValues(inside)['Exponent β'])
    expect(Math.abs(beta - BETA)).toBeLessThanOrEqual(3 * betaError)
  })

  it('When drawn, then every frame with a temperature and a contrast is a point named by its frame, and the fitted curve follows the constructed law', async () => {
    const wrapper = await mountChart(wide())
    const [points, curve] = seriesOf(wrapper)

    expect(points.type).toBe('scatter')
    const drawn = points.data as { name: string; value: [number, number] }[]
    expect(drawn).toHaveLength(27)
    expect(drawn[4].name).toBe('4')
    // Frame 4 is at 300 + 4·5 = 320 K; its contrast is the constructed law plus a few grey levels of noise.
    expect(drawn[4].value[0]).toBe(320)
    expect(Math.abs(drawn[4].value[1] - law(320))).toBeLessThan(5 * 4)

    expect(curve.type).toBe('line')
    const line = curve.data as [number, number][]
    // The curve runs over the whole ramp, from 300 to 430 K.
    expect(line[0][0]).toBe(300)
    expect(line.at(-1)![0]).toBe(430)
    // Below Tc it is the constructed law within 2 % (the fit's accuracy on this noise); above the fitted Tc, zero.
    for (const [t, c] of line.filter(([t]) => t <= 400)) expect(Math.abs(c - law(t)) / law(t)).toBeLessThan(0.02)
    const [tc] = withError(fitValues(wrapper)['Curie temperature Tc'], 'K')
    for (const [, c] of line.filter(([t]) => t > tc + 0.01)) expect(c).toBe(0)
    // Tc is marked on the chart where the list gives it (to its five digits).
    expect(Math.abs(curve.markLine!.data[0].xAxis - tc)).toBeLessThan(0.006)
  })

  it('When a frame has no temperature or no finite contrast, then it is left off the chart and out of the count of points', async () => {
    const { frames, curie } = wide()
    const noTemperature = frames.map((f) => (f.index === 2 ? { ...f, temperatureK: null } : f))
    const contrasts = curie.contrasts.map((c, i) => (i === 5 ? Number.NaN : c))
    const wrapper = await mountChart({ frames: noTemperature, curie: { ...curie, contrasts } })
    const drawn = seriesOf(wrapper)[0].data as { name: string }[]
    expect(drawn).toHaveLength(25)
    expect(drawn.map((p) => p.name)).not.toContain('2')
    expect(drawn.map((p) => p.name)).not.toContain('5')
    expect(fitValues(wrapper)['Points in the fit']).toMatch(/ of 25$/)
  })

  it('When a point is clicked, then its frame is opened; a click on the fitted curve opens nothing', async () => {
    const wrapper = await mountChart(wide())
    // The click as ECharts reports it to its listeners (the chart instance vue-echarts exposes).
    const chart = (wrapper.getComponent(VChart).vm as unknown as { chart?: { trigger(event: string, params: unknown): void } }).chart
    expect(chart).toBeDefined()
    chart!.trigger('click', { name: '12', seriesName: 'Measured contrast' })
    chart!.trigger('click', { name: '', seriesName: 'C0·(1 − T/Tc)^β' })
    expect(wrapper.emitted('open')).toEqual([[12]])
  })

  it('When β is fitted near 0.326, then the reference table puts the 3-D Ising class within a few standard errors and mean field and 2-D Ising far away', async () => {
    const wrapper = await mountChart(wide())
    const [beta, betaError] = withError(fitValues(wrapper)['Exponent β'])
    const rows = Object.fromEntries(
      wrapper.findAll('[aria-label="Reference exponents"] tbody tr').map((row) => {
        const cells = row.findAll('td').map((cell) => cell.text())
        return [cells[0], { beta: cells[1], distance: readNumber(cells[2]) }]
      }),
    )
    expect(Object.keys(rows)).toEqual(['Mean field', '3-D Ising', '3-D XY', '3-D Heisenberg', '2-D Ising'])
    // Reference values, from memory: mean field 1/2, 3-D Ising 0.3264 (bootstrap), 2-D Ising 1/8 (Onsager).
    expect(rows['Mean field'].beta).toBe('0.5')
    expect(rows['2-D Ising'].beta).toBe('0.125')
    expect(rows['3-D Ising'].beta).toMatch(/^0\.3264/)
    // Distances from the β and SE as shown (rounded, so to 10 %).
    const distance = (reference: number) => Math.abs(reference - beta) / betaError
    expect(Math.abs(rows['Mean field'].distance - distance(0.5)) / distance(0.5)).toBeLessThan(0.1)
    expect(Math.abs(rows['2-D Ising'].distance - distance(0.125)) / distance(0.125)).toBeLessThan(0.1)
    expect(rows['3-D Ising'].distance).toBeLessThan(3)
    expect(rows['Mean field'].distance).toBeGreaterThan(10)
    expect(rows['2-D Ising'].distance).toBeGreaterThan(10)
  })

  it('When too few frames lie above the zero level for a fit, then the values read "—" with the fit’s reason, and no curve is drawn', async () => {
    // Four frames, only the first two with contrast: two parameters cannot carry a three-parameter fit.
    const temperatures = [380, 400, 420, 440]
    const contrasts = temperatures.map(law)
    const curie = summarizeCurie(contrasts, 0, { pixelSizeNm: 100, fieldUnit: null, frames: temperatures.map((temperatureK) => ({ field: null, temperatureK })) })!
    const frames = temperatures.map((temperatureK, index) => ({ index, field: null, fieldUnit: null, temperatureK, measurements: null, error: null }))
    const wrapper = await mountChart({ frames, curie })
    const values = fitValues(wrapper)
    expect(values['Curie temperature Tc']).toBe('— ± — K')
    expect(values['Exponent β']).toBe('— ± —')
    expect(values['Points in the fit']).toBe('2 of 4')
    expect(values['Fit window t = 1 − T/Tc']).toBe('—')
    expect(alertTexts(wrapper)).toContain('Need at least 3 points above the zero level.')
    const [points, curve] = seriesOf(wrapper)
    expect(points.data).toHaveLength(4)
    expect(curve.data).toEqual([])
    expect(curve.markLine).toBeUndefined()
  })
})
