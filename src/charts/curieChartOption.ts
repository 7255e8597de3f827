/**
 * A temperature series as an ECharts option: the signed domain contrast of each frame against T, and the fitted
 * critical law C(T) = C0·(1 − T/Tc)^β below Tc, zero above (METHODS §6), with Tc marked.
 */
import type { CurieSummary } from '@shared/analysis/analyzeStack'
import { OKABE_ITO } from '@/colorBlindPalette'
import { formatNumber } from '@/formatQuantity'
import { AXIS_NAME_STYLE, CHART_TEXT_STYLE, type ChartOption } from './chartOption'

/** One frame of the series: temperature in K and the contrast measured on the run's fixed mask. */
export interface CurieChartPoint {
  index: number
  temperatureK: number
  contrast: number
}

/** The fitted curve sampled from the lowest temperature to the highest (flat zero above Tc). */
export function fittedCriticalCurve(curie: CurieSummary, fromK: number, toK: number): [number, number][] {
  const { tc, beta, amplitude } = curie
  if (tc === null || beta === null || amplitude === null || !(toK > fromK)) return []
  const points: [number, number][] = []
  const steps = 120
  const end = Math.min(tc, toK)
  for (let k = 0; k <= steps; k++) {
    const t = fromK + ((end - fromK) * k) / steps
    points.push([t, t < tc ? amplitude * (1 - t / tc) ** beta : 0])
  }
  if (toK > tc) points.push([toK, 0])
  return points
}

export function curieChartOption(points: CurieChartPoint[], curie: CurieSummary): ChartOption {
  const temperatures = points.map((p) => p.temperatureK)
  const fromK = Math.min(...temperatures)
  const toK = Math.max(...temperatures, curie.tc ?? -Infinity)
  return {
    animation: false,
    textStyle: CHART_TEXT_STYLE,
    aria: { enabled: true, label: { description: `Domain contrast against temperature for ${points.length} frames${curie.tc !== null ? `, with a fitted Curie temperature of ${formatNumber(curie.tc, 5)} K` : ''}.` } },
    grid: { left: 72, right: 28, top: 44, bottom: 56 },
    legend: { top: 4, itemGap: 24 },
    tooltip: {
      trigger: 'item',
      formatter: (params: unknown) => {
        const p = params as { name?: string; seriesName?: string; value?: [number, number] }
        if (!p.value) return ''
        const head = p.name ? `Frame ${p.name}` : (p.seriesName ?? '')
        return `${head}<br>T = ${formatNumber(p.value[0], 5)} K<br>contrast = ${formatNumber(p.value[1], 4)}`
      },
    },
    xAxis: { type: 'value', name: 'Temperature (K)', min: 'dataMin', max: 'dataMax', nameLocation: 'middle', nameGap: 32, nameTextStyle: AXIS_NAME_STYLE, splitLine: { lineStyle: { color: '#ece9e1' } } },
    yAxis: { type: 'value', name: 'Domain contrast (grey levels)', nameLocation: 'middle', nameGap: 52, nameTextStyle: AXIS_NAME_STYLE, axisLabel: { formatter: (v: number) => formatNumber(v, 4) }, splitLine: { lineStyle: { color: '#ece9e1' } } },
    series: [
      {
        type: 'scatter',
        name: 'Measured contrast',
        data: points.map((p) => ({ name: String(p.index), value: [p.temperatureK, p.contrast] })),
        symbol: 'circle',
        symbolSize: 8,
        itemStyle: { color: OKABE_ITO.blue },
      },
      {
        type: 'line',
        name: 'C0·(1 − T/Tc)^β',
        data: fittedCriticalCurve(curie, fromK, toK),
        showSymbol: false,
        lineStyle: { color: OKABE_ITO.vermillion, width: 2 },
        itemStyle: { color: OKABE_ITO.vermillion },
        markLine:
          curie.tc !== null
            ? {
                symbol: 'none',
                silent: true,
                lineStyle: { color: OKABE_ITO.vermillion, type: 'dashed' as const },
                label: { formatter: `Tc = ${formatNumber(curie.tc, 5)} K`, color: OKABE_ITO.vermillion, position: 'insideEndTop' as const },
                data: [{ xAxis: curie.tc }],
              }
            : undefined,
      },
    ],
  }
}
