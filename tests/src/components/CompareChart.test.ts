import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import VChart from 'vue-echarts'
import type { ComparisonGroupDto, ComparisonResultDto, ComparisonValueDto } from '@shared/types/comparison'
import CompareChart from '@/components/CompareChart.vue'
import { comparisonChartData } from '@/stores/comparison'

/** One frame analysis of a KB24 film, as the comparison answers it. */
function frameValue(value: number, sample: string, frameIndex: number, draft = false): ComparisonValueDto {
  return {
    value,
    source: 'analysis',
    draft,
    sample: { id: sample.length, name: sample },
    image: { id: 40 + frameIndex, name: `${sample}_remanent.tif` },
    frameId: 400 + frameIndex,
    frameIndex,
    analysisId: 900 + frameIndex,
    stackRunId: null,
    creepFit: null,
  }
}

function group(key: number | null, label: string, values: ComparisonValueDto[], fiveNumber: ComparisonGroupDto['fiveNumber'], mean: number | null, ci: [number, number] | null): ComparisonGroupDto {
  return {
    key,
    label,
    samples: [...new Map(values.map((v) => [v.sample.id, v.sample])).values()],
    n: values.length,
    mean,
    standardDeviation: null,
    ci: { lower: ci?.[0] ?? null, upper: ci?.[1] ?? null, level: 0.95, resamples: 2000, seed: 1 },
    fiveNumber,
    hasDrafts: values.some((v) => v.draft),
    values,
  }
}

/**
 * Mean domain width of the KB24 anneal series (constructed numbers). Five-number summaries are type-7 quantiles,
 * worked by hand: 600, 610, 620, 640, 650 → Q1 at rank 1 = 610, median 620, Q3 at rank 3 = 640, mean 624;
 * 700, 720, 740, 760 → Q1 at rank 0.75 = 715, median 730, Q3 at rank 2.25 = 745, mean 730.
 * The CIs are as the server's bootstrap might give them; the third group has no values.
 */
const A250 = group(
  250,
  '250 °C',
  [frameValue(600, 'KB24-A250', 0), frameValue(610, 'KB24-A250', 1), frameValue(620, 'KB24-A250', 2), frameValue(640, 'KB24-A250', 3), frameValue(650, 'KB24-A250', 4)],
  { min: 600, q1: 610, median: 620, q3: 640, max: 650 },
  624,
  [608, 640],
)
const A300 = group(
  300,
  '300 °C',
  [frameValue(700, 'KB24-A300', 0), frameValue(760, 'KB24-A300', 1, true), frameValue(720, 'KB24-A300', 2), frameValue(740, 'KB24-A300', 3)],
  { min: 700, q1: 715, median: 730, q3: 745, max: 760 },
  730,
  [707.5, 752.5],
)
const NOT_RECORDED = group(null, 'Not recorded', [], null, null, null)

function result(groups: ComparisonGroupDto[], overrides: Partial<ComparisonResultDto> = {}): ComparisonResultDto {
  return {
    measure: 'meanWidth',
    label: 'Mean domain width',
    unit: 'nm',
    groupBy: 'annealTemperatureC',
    groupByLabel: 'Anneal temperature',
    includeDrafts: true,
    labId: 1,
    groups,
    pairs: [],
    excluded: { uncalibrated: 0, noSample: 0, notAtRemanence: 0, missing: 0, noMotionSeries: 0, noCreepFit: 0 },
    notes: [],
    ...overrides,
  }
}

/** As the comparison page does: the chart data from the store's mapping of the result. */
async function mountChart(value: ComparisonResultDto) {
  const wrapper = mount(CompareChart, { props: { result: value, chart: comparisonChartData(value) }, global: { plugins: [ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}
type Mounted = Awaited<ReturnType<typeof mountChart>>

type Formatter = (params: unknown) => string
type Series = { name: string; type: string; data: unknown[]; xAxisIndex?: number; tooltip?: { formatter?: Formatter; show?: boolean } }
interface Option {
  animation: boolean
  legend: { data: string[] }
  xAxis: [{ type: string; data: string[]; name: string }, { type: string; min: number; max: number; show: boolean }]
  yAxis: { name: string }
  series: Series[]
}
const optionOf = (wrapper: Mounted) => wrapper.getComponent(VChart).props('option') as unknown as Option
const seriesNamed = (option: Option, name: string, type: string) => option.series.find((s) => s.name === name && s.type === type)!

describe('CompareChart', () => {
  it('When three groups are compared, then each is a category of the anneal axis with a box of its five-number summary, an empty group an empty box', async () => {
    const option = optionOf(await mountChart(result([A250, A300, NOT_RECORDED])))
    // Drawn at once, so a screenshot never catches half-grown boxes.
    expect(option.animation).toBe(false)
    expect(option.xAxis[0]).toMatchObject({ type: 'category', data: ['250 °C', '300 °C', 'Not recorded'], name: 'Anneal temperature' })
    // The hidden continuous axis spans the same three bands, centred on 0, 1 and 2.
    expect(option.xAxis[1]).toMatchObject({ type: 'value', min: -0.5, max: 2.5, show: false })
    expect(option.yAxis.name).toBe('Mean domain width (nm)')
    // ECharts boxplot rows are [min, Q1, median, Q3, max] (hand-worked above).
    expect(seriesNamed(option, 'Median, quartiles and range', 'boxplot').data).toEqual([[600, 610, 620, 640, 650], [700, 715, 730, 745, 760], []])
  })

  it('When values are approved or drafts, then they are drawn as separate series on their group, and the legend names drafts only when there are some', async () => {
    const option = optionOf(await mountChart(result([A250, A300, NOT_RECORDED])))
    const approved = seriesNamed(option, 'Approved values', 'scatter').data as { value: [number, number] }[]
    const drafts = seriesNamed(option, 'Drafts (not reviewed)', 'scatter').data as { value: [number, number] }[]
    expect(approved.map((p) => p.value[1])).toEqual([600, 610, 620, 640, 650, 700, 720, 740])
    expect(drafts.map((p) => p.value[1])).toEqual([760])
    // Each point stays inside its group's band (a group's width is 1).
    for (const p of approved) expect(Math.abs(p.value[0] - (p.value[1] < 690 ? 0 : 1))).toBeLessThan(0.5)
    expect(Math.abs(drafts[0].value[0] - 1)).toBeLessThan(0.5)
    expect(option.legend.data).toEqual(['Median, quartiles and range', 'Approved values', 'Drafts (not reviewed)', 'Mean ± 95 % CI'])

    const approvedOnly = result([A250], { includeDrafts: false })
    expect(optionOf(await mountChart(approvedOnly)).legend.data).toEqual(['Median, quartiles and range', 'Approved values', 'Mean ± 95 % CI'])
  })

  it('When a group has a mean and a CI, then the mean is a diamond at its group and the CI a bar from the lower to the upper limit', async () => {
    const option = optionOf(await mountChart(result([A250, A300, NOT_RECORDED])))
    expect(seriesNamed(option, 'Mean ± 95 % CI', 'scatter').data).toEqual([
      [0, 624],
      [1, 730],
    ])
    const bars = seriesNamed(option, 'Mean ± 95 % CI', 'lines').data as { coords: [[number, number], [number, number]] }[]
    // Per group a vertical stem and two horizontal caps: 2 groups with a CI → 6 segments, none for the empty group.
    expect(bars).toHaveLength(6)
    const stems = bars.filter(({ coords: [a, b] }) => a[0] === b[0])
    expect(stems.map(({ coords }) => coords)).toEqual([
      [[0, 608], [0, 640]],
      [[1, 707.5], [1, 752.5]],
    ])
    const caps = bars.filter(({ coords: [a, b] }) => a[1] === b[1])
    expect(caps.map(({ coords: [a] }) => a[1]).sort((x, y) => x - y)).toEqual([608, 640, 707.5, 752.5])
    // The caps are centred on their group.
    for (const { coords: [a, b] } of caps) expect(Number.isInteger((a[0] + b[0]) / 2)).toBe(true)
  })

  it('When a box, a mean or a value is pointed at, then its tooltip gives the numbers with their unit', async () => {
    const option = optionOf(await mountChart(result([A250, A300, NOT_RECORDED])))
    const box = seriesNamed(option, 'Median, quartiles and range', 'boxplot').tooltip!.formatter!
    expect(box({ dataIndex: 0 })).toBe('<b>250 °C</b> · n = 5<br>median 620 nm<br>quartiles 610 nm – 640 nm<br>range 600 nm – 650 nm')
    expect(box({ dataIndex: 2 })).toBe('Not recorded: no values')

    const mean = seriesNamed(option, 'Mean ± 95 % CI', 'scatter').tooltip!.formatter!
    expect(mean({ data: [1, 730] })).toBe('<b>300 °C</b> · n = 4<br>mean 730 nm<br>95 % CI 707.5 nm – 752.5 nm')

    const approved = seriesNamed(option, 'Approved values', 'scatter')
    expect(approved.tooltip!.formatter!({ data: approved.data[3] })).toBe('<b>640 nm</b><br>KB24-A250<br>KB24-A250_remanent.tif, frame 3')
    const drafts = seriesNamed(option, 'Drafts (not reviewed)', 'scatter')
    expect(drafts.tooltip!.formatter!({ data: drafts.data[0] })).toBe('<b>760 nm</b> · draft, not reviewed<br>KB24-A300<br>KB24-A300_remanent.tif, frame 1')
    // The error bars themselves have no tooltip.
    expect(seriesNamed(option, 'Mean ± 95 % CI', 'lines').tooltip).toEqual({ show: false })
  })

  it('When a group has too few values for a CI, then its mean’s tooltip says so and no bar is drawn', async () => {
    const single = group(350, '350 °C', [frameValue(880, 'KB24-A350', 0)], { min: 880, q1: 880, median: 880, q3: 880, max: 880 }, 880, null)
    const option = optionOf(await mountChart(result([single])))
    const mean = seriesNamed(option, 'Mean ± 95 % CI', 'scatter').tooltip!.formatter!
    expect(mean({ data: [0, 880] })).toBe('<b>350 °C</b> · n = 1<br>mean 880 nm<br>no CI (too few values)')
    expect(seriesNamed(option, 'Mean ± 95 % CI', 'lines').data).toEqual([])
  })

  it('When the chart is read by a screen reader, then it hears the measure, the grouping and each group’s n and mean', async () => {
    const wrapper = await mountChart(result([A250, A300, NOT_RECORDED]))
    expect(wrapper.get('[role="img"]').attributes('aria-label')).toBe(
      'Box plot of Mean domain width by anneal temperature. 250 °C: n = 5, mean 624 nm; 300 °C: n = 4, mean 730 nm; Not recorded: n = 0, mean —',
    )
  })

  it('When the measure has no unit and negative values, then the axis name has no parentheses and means carry a true minus sign', async () => {
    // Remanence M/Ms of films annealed in two atmospheres; the negative branch after saturation in −H.
    const values = [-0.82, -0.78, -0.74].map((v, i) => ({ ...frameValue(v, 'KB24-A300', i), source: 'stack-run' as const, analysisId: null, stackRunId: 30 + i }))
    const argon = group(null, 'Ar', values, { min: -0.82, q1: -0.8, median: -0.78, q3: -0.76, max: -0.74 }, -0.78, [-0.81, -0.75])
    const remanence = result([argon], { measure: 'remanence', label: 'Remanence M/Ms', unit: '', groupBy: 'annealAtmosphere', groupByLabel: 'Anneal atmosphere' })
    const wrapper = await mountChart(remanence)
    const option = optionOf(wrapper)
    expect(option.yAxis.name).toBe('Remanence M/Ms')
    expect(wrapper.get('[role="img"]').attributes('aria-label')).toBe('Box plot of Remanence M/Ms by anneal atmosphere. Ar: n = 3, mean −0.78')
    expect(seriesNamed(option, 'Median, quartiles and range', 'boxplot').tooltip!.formatter!({ dataIndex: 0 })).toBe(
      '<b>Ar</b> · n = 3<br>median −0.78<br>quartiles −0.8 – −0.76<br>range −0.82 – −0.74',
    )
  })

  it('When a value is a sample’s creep slope, then its tooltip gives the slope with its standard error and what was fitted', async () => {
    const slope: ComparisonValueDto = {
      ...frameValue(40.35, 'KB24-A300', 0),
      source: 'motion',
      image: null,
      frameId: null,
      frameIndex: null,
      analysisId: null,
      creepFit: { slopeStdErr: 0.33, series: [{ id: 1, name: 'KB24-A300_bubble-growth.tif' }], steps: 7, usedSteps: 5, creepFieldRangeMT: [3, 6] },
    }
    const creep = result([group(300, '300 °C', [slope], { min: 40.35, q1: 40.35, median: 40.35, q3: 40.35, max: 40.35 }, 40.35, null)], {
      measure: 'creepSlope',
      label: 'Creep slope C',
      unit: 'mT^(1/4)',
    })
    const approved = seriesNamed(optionOf(await mountChart(creep)), 'Approved values', 'scatter')
    expect(approved.tooltip!.formatter!({ data: approved.data[0] })).toBe('<b>40.35 ± 0.33 mT^(1/4)</b><br>KB24-A300<br>1 series, 5 of 7 steps in the creep fit (3–6 mT)')
  })
})
