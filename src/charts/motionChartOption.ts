/**
 * Wall-motion charts as ECharts options: velocity against field (log velocity axis) with the fitted creep law and the
 * flow-regime line, the linearised creep plot ln v against H^(−μ), and the roughness B(r) on log–log axes with its
 * fitted model. The creep law ln v = ln v₀ − C·H^(−μ) (S. Lemerle et al. 1998, Phys. Rev. Lett. 80:849 [M]) and the
 * flow line v = m·H (P. J. Metaxas et al. 2007, Phys. Rev. Lett. 99:217208 [M]) are drawn from the fits in
 * shared/analysis/creepLaw.ts, never fitted to the plot.
 */
import type { MotionCreep, MotionRoughness } from '@shared/analysis/analyzeMotion'
import { OKABE_ITO } from '@/colorBlindPalette'
import { formatNumber } from '@/formatQuantity'
import { AXIS_NAME_STYLE, CHART_TEXT_STYLE, type ChartOption } from './chartOption'

/** One measured step: field as μ0H in mT, velocity in the series' unit; `name` identifies it in tooltips. */
export interface VelocityPoint {
  name: string
  fieldMT: number
  velocity: number
  /** Which series it belongs to (a legend entry per series on the sample view). */
  group: string
}

const SPLIT_LINE = { lineStyle: { color: '#ece9e1' } }
const GROUP_COLOURS = [OKABE_ITO.blue, OKABE_ITO.orange, OKABE_ITO.bluishGreen, OKABE_ITO.reddishPurple, OKABE_ITO.skyBlue]
const GROUP_SYMBOLS = ['circle', 'diamond', 'triangle', 'rect', 'roundRect'] as const

/** The fitted creep curve v(H) = v₀·exp(−C·H^(−μ)) sampled from `from` to `to` (mT). */
export function creepCurve(creep: MotionCreep, from: number, to: number): [number, number][] {
  if (!(to > from) || !(from > 0)) return []
  const points: [number, number][] = []
  for (let k = 0; k <= 80; k++) {
    const h = from + ((to - from) * k) / 80
    points.push([h, Math.exp(creep.lnV0 - creep.slope * Math.pow(h, -creep.mu))])
  }
  return points
}

function groups(points: VelocityPoint[]): string[] {
  return [...new Set(points.map((p) => p.group))]
}

/** Velocity against field, log velocity axis, with the creep fit, the depinning estimate and the flow line. */
export function velocityChartOption(points: VelocityPoint[], creep: MotionCreep | null, velocityUnit: string): ChartOption {
  const fields = points.map((p) => p.fieldMT)
  const lo = Math.min(...fields)
  const hi = Math.max(...fields)
  const pad = (hi - lo) * 0.05 || 0.5
  const flow = creep?.flow ?? null
  return {
    animation: false,
    textStyle: CHART_TEXT_STYLE,
    aria: { enabled: true, label: { description: `Wall velocity against field for ${points.length} steps${creep ? `, with a fitted creep slope of ${formatNumber(creep.slope, 4)}` : ''}.` } },
    grid: { left: 78, right: 24, top: 44, bottom: 56 },
    legend: { top: 4, itemGap: 18 },
    tooltip: {
      trigger: 'item',
      formatter: (params: unknown) => {
        const p = params as { name?: string; seriesName?: string; value?: [number, number] }
        if (!p.value) return ''
        return `${p.name || p.seriesName || ''}<br>μ0H = ${formatNumber(p.value[0], 4)} mT<br>v = ${formatNumber(p.value[1], 4)} ${velocityUnit}`
      },
    },
    xAxis: { type: 'value', name: 'Pulse field μ0H (mT)', min: Math.max(0, lo - pad), max: hi + pad, nameLocation: 'middle', nameGap: 32, nameTextStyle: AXIS_NAME_STYLE, splitLine: SPLIT_LINE },
    yAxis: { type: 'log', name: `Velocity (${velocityUnit})`, nameLocation: 'middle', nameGap: 60, nameTextStyle: AXIS_NAME_STYLE, splitLine: SPLIT_LINE },
    series: [
      ...groups(points).map((group, i) => ({
        type: 'scatter' as const,
        name: group,
        data: points.filter((p) => p.group === group).map((p) => ({ name: p.name, value: [p.fieldMT, p.velocity] })),
        symbol: GROUP_SYMBOLS[i % GROUP_SYMBOLS.length],
        symbolSize: 9,
        itemStyle: { color: GROUP_COLOURS[i % GROUP_COLOURS.length] },
      })),
      ...(creep
        ? [
            {
              type: 'line' as const,
              name: `Creep fit (μ = ${formatNumber(creep.mu, 3)})`,
              data: creepCurve(creep, Math.max(lo - pad, 1e-3), hi + pad),
              showSymbol: false,
              lineStyle: { color: OKABE_ITO.vermillion, width: 2 },
              itemStyle: { color: OKABE_ITO.vermillion },
              markLine:
                creep.depinningField !== null
                  ? {
                      symbol: 'none',
                      silent: true,
                      lineStyle: { color: OKABE_ITO.vermillion, type: 'dashed' as const },
                      label: { formatter: `depinning ≈ ${formatNumber(creep.depinningField, 3)} mT`, color: OKABE_ITO.vermillion, position: 'insideEndTop' as const },
                      data: [{ xAxis: creep.depinningField }],
                    }
                  : undefined,
            },
          ]
        : []),
      ...(flow
        ? [
            {
              type: 'line' as const,
              name: 'Flow v = m·H',
              data: [
                [flow.fieldRange[0], flow.mobility * flow.fieldRange[0]],
                [hi + pad, flow.mobility * (hi + pad)],
              ],
              showSymbol: false,
              lineStyle: { color: OKABE_ITO.bluishGreen, width: 2, type: 'dotted' as const },
              itemStyle: { color: OKABE_ITO.bluishGreen },
            },
          ]
        : []),
    ],
  }
}

/** The linearised creep plot: ln v against H^(−μ) with the fitted straight line ln v₀ − C·x. */
export function creepLinearOption(points: VelocityPoint[], creep: MotionCreep, velocityUnit: string): ChartOption {
  const xs = points.map((p) => Math.pow(p.fieldMT, -creep.mu))
  const lo = Math.min(...xs)
  const hi = Math.max(...xs)
  const pad = (hi - lo) * 0.05 || 0.01
  const line = (x: number): [number, number] => [x, creep.lnV0 - creep.slope * x]
  return {
    animation: false,
    textStyle: CHART_TEXT_STYLE,
    aria: { enabled: true, label: { description: `Linearised creep plot: ln v against field to the power −${formatNumber(creep.mu, 3)}, with the fitted line of slope −${formatNumber(creep.slope, 4)}.` } },
    grid: { left: 64, right: 20, top: 24, bottom: 56 },
    tooltip: { trigger: 'item', formatter: (params: unknown) => (params as { name?: string }).name ?? '' },
    xAxis: { type: 'value', name: `(μ0H / mT)^(−${formatNumber(creep.mu, 3)})`, min: lo - pad, max: hi + pad, nameLocation: 'middle', nameGap: 32, nameTextStyle: AXIS_NAME_STYLE, splitLine: SPLIT_LINE },
    yAxis: { type: 'value', name: `ln(v / ${velocityUnit})`, scale: true, nameLocation: 'middle', nameGap: 42, nameTextStyle: AXIS_NAME_STYLE, splitLine: SPLIT_LINE },
    series: [
      {
        type: 'scatter',
        name: 'Steps',
        data: points.map((p, i) => ({ name: p.name, value: [xs[i], Math.log(p.velocity)] })),
        symbolSize: 8,
        itemStyle: { color: OKABE_ITO.blue },
      },
      {
        type: 'line',
        name: 'ln v₀ − C·H^(−μ)',
        data: [line(lo - pad), line(hi + pad)],
        showSymbol: false,
        lineStyle: { color: OKABE_ITO.vermillion, width: 2 },
      },
    ],
  }
}

/** B(r) on log–log axes (lags up to a quarter of the wall) with the fitted model over its fit range. */
export function roughnessChartOption(roughness: MotionRoughness): ChartOption {
  // B of a closed wall is symmetric about half its length; lags up to a quarter of it carry the information.
  const shown = Math.max(roughness.fitRange[1], Math.floor(roughness.r.length / 2))
  const data = roughness.r.map((r, i) => [r, roughness.B[i]] as [number, number]).filter(([r, b]) => r <= shown && b > 0)
  const [from, to] = roughness.fitRange
  const model = roughness.model ? roughness.r.map((r, i) => [r, roughness.model![i]] as [number, number]).filter(([r, b]) => r >= from && r <= to && b > 0) : []
  return {
    animation: false,
    textStyle: CHART_TEXT_STYLE,
    aria: { enabled: true, label: { description: `Wall displacement correlation B(r) on log–log axes${roughness.zeta !== null ? `, fitted roughness exponent ${formatNumber(roughness.zeta, 3)}` : ''}.` } },
    grid: { left: 70, right: 20, top: 40, bottom: 56 },
    legend: { top: 4, itemGap: 18 },
    tooltip: { trigger: 'item', formatter: (params: unknown) => { const v = (params as { value?: [number, number] }).value; return v ? `r = ${formatNumber(v[0], 3)} px<br>B = ${formatNumber(v[1], 3)} px²` : '' } },
    xAxis: { type: 'log', name: 'Distance along the wall r (px)', nameLocation: 'middle', nameGap: 32, nameTextStyle: AXIS_NAME_STYLE, splitLine: SPLIT_LINE },
    yAxis: { type: 'log', name: 'B(r) (px²)', nameLocation: 'middle', nameGap: 50, nameTextStyle: AXIS_NAME_STYLE, splitLine: SPLIT_LINE },
    series: [
      { type: 'scatter', name: 'B(r) measured', data, symbolSize: 5, itemStyle: { color: OKABE_ITO.blue } },
      { type: 'line', name: `Fit, ζ = ${formatNumber(roughness.zeta, 3)}`, data: model, showSymbol: false, lineStyle: { color: OKABE_ITO.vermillion, width: 2 }, itemStyle: { color: OKABE_ITO.vermillion } },
    ],
  }
}
