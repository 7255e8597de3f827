/**
 * The hysteresis loop of a field-sweep run as an ECharts option: M/Ms against H, the descending and the ascending
 * branch as two series (two colour-blind-safe colours and two marker shapes, so neither colour nor shape alone
 * carries the difference), Hc− and Hc+ as vertical lines on their branches, and Mr+ / Mr− marked at H = 0.
 * Branches come from the run's loop summary (METHODS §5.2), whose indices count the frames that have both a field and
 * a measurement, in acquisition order; the same selection is made here.
 */
import type { LoopSummary } from '@shared/analysis/analyzeStack'
import type { BranchDirection } from '@shared/analysis/hysteresisLoop'
import { OKABE_ITO } from '@/colorBlindPalette'
import { formatNumber } from '@/formatQuantity'
import { AXIS_NAME_STYLE, CHART_TEXT_STYLE, type ChartOption } from './chartOption'

/** One frame of the run: its field (in the run's field unit) and M/Ms, null where unknown or failed. */
export interface LoopChartFrame {
  index: number
  field: number | null
  magnetization: number | null
}

export const BRANCH_STYLE: Record<BranchDirection, { name: string; color: string; symbol: string }> = {
  descending: { name: 'Descending branch (H decreasing)', color: OKABE_ITO.blue, symbol: 'circle' },
  ascending: { name: 'Ascending branch (H increasing)', color: OKABE_ITO.vermillion, symbol: 'triangle' },
}

type LoopPoint = { name: string; value: [number, number] } | { name: string; value: [number, '-'] }

/** The points of each direction, a gap ('-') between two branches of the same direction. */
function branchPoints(frames: LoopChartFrame[], loop: LoopSummary): Record<BranchDirection, LoopPoint[]> {
  const usable = frames.filter((f): f is LoopChartFrame & { field: number; magnetization: number } => f.field !== null && f.magnetization !== null)
  const points: Record<BranchDirection, LoopPoint[]> = { descending: [], ascending: [] }
  for (const branch of loop.branches) {
    const list = points[branch.direction]
    const members = usable.slice(branch.startIndex, branch.endIndex + 1)
    if (list.length > 0 && members.length > 0) list.push({ name: '', value: [members[0].field, '-'] })
    for (const f of members) list.push({ name: String(f.index), value: [f.field, f.magnetization] })
  }
  return points
}

/**
 * The loop chart's option. Each point's `name` is its frame index, so a click can open that frame.
 * @param fieldUnit the unit of the frames' fields, shown on the axis and in the marks (e.g. 'mT' for μ0H).
 */
export function loopChartOption(frames: LoopChartFrame[], loop: LoopSummary, fieldUnit: string): ChartOption {
  const points = branchPoints(frames, loop)
  const unit = fieldUnit ? ` (${fieldUnit === 'mT' ? 'μ0H, mT' : fieldUnit})` : ''
  const fieldText = (value: number) => `${formatNumber(value, 4)} ${fieldUnit}`.trim()

  const coercive = { descending: loop.coerciveFieldDescending, ascending: loop.coerciveFieldAscending }
  const remanence = { descending: loop.remanenceDescending, ascending: loop.remanenceAscending }
  const labels = { descending: { hc: 'Hc−', mr: 'Mr+' }, ascending: { hc: 'Hc+', mr: 'Mr−' } }

  const series = (['descending', 'ascending'] as const).map((direction) => {
    const style = BRANCH_STYLE[direction]
    const hc = coercive[direction]
    const mr = remanence[direction]
    return {
      type: 'line' as const,
      name: style.name,
      data: points[direction],
      color: style.color,
      symbol: style.symbol,
      symbolSize: 8,
      showAllSymbol: true,
      lineStyle: { width: 1.5, color: style.color },
      itemStyle: { color: style.color },
      connectNulls: false,
      markLine:
        hc === null
          ? undefined
          : {
              symbol: 'none',
              silent: true,
              lineStyle: { color: style.color, type: 'dashed' as const, width: 1.5 },
              // Hc− labelled near the top of its line, Hc+ near the bottom: the two corners outside the loop left empty.
              label: { formatter: `${labels[direction].hc} = ${formatNumber(hc, 3)} ${fieldUnit}`.trim(), color: style.color, position: (direction === 'descending' ? 'insideEndTop' : 'insideStartTop') as 'insideStartTop' | 'insideEndTop' },
              data: [{ xAxis: hc, name: labels[direction].hc }],
            },
      markPoint:
        mr === null
          ? undefined
          : {
              symbol: 'diamond',
              symbolSize: 14,
              silent: true,
              itemStyle: { color: '#ffffff', borderColor: style.color, borderWidth: 2 },
              // Into the loop's interior (below right of Mr+, above left of Mr−), where no branch passes, clear of the H = 0 axis.
              label: {
                formatter: `${labels[direction].mr} = ${formatNumber(mr, 3)}`,
                position: (direction === 'descending' ? 'right' : 'left') as 'right' | 'left',
                offset: direction === 'descending' ? [2, 14] : [-2, -14],
                color: style.color,
                fontWeight: 600 as const,
              },
              data: [{ coord: [0, mr], name: labels[direction].mr }],
            },
    }
  })

  return {
    animation: false,
    textStyle: CHART_TEXT_STYLE,
    aria: { enabled: true, label: { description: `Hysteresis loop, M/Ms against the applied field${unit}: descending branch in blue circles, ascending branch in vermillion triangles.` } },
    grid: { left: 64, right: 28, top: 48, bottom: 56 },
    legend: { top: 4, itemGap: 24 },
    tooltip: {
      trigger: 'item',
      formatter: (params: unknown) => {
        const p = params as { name?: string; seriesName?: string; value?: [number, number] }
        if (!p.value || !p.name) return ''
        return `Frame ${p.name}<br>H = ${fieldText(p.value[0])}<br>M/Ms = ${formatNumber(p.value[1], 3)}<br><span style="color:#5b6a6c">Click to open the frame</span>`
      },
    },
    xAxis: { type: 'value', name: `Applied field${unit}`, nameLocation: 'middle', nameGap: 32, nameTextStyle: AXIS_NAME_STYLE, splitLine: { lineStyle: { color: '#ece9e1' } } },
    // A little room beyond ±1 so saturated points are not cut by the frame; labels only at the round values.
    yAxis: {
      type: 'value',
      name: 'M/Ms',
      min: -1.25,
      max: 1.25,
      interval: 0.25,
      nameLocation: 'middle',
      nameGap: 44,
      nameTextStyle: AXIS_NAME_STYLE,
      axisLabel: { formatter: (v: number) => (Math.abs(v * 2 - Math.round(v * 2)) < 1e-9 && Math.abs(v) <= 1 ? formatNumber(v, 2) : '') },
      axisTick: { show: false },
      splitLine: { lineStyle: { color: '#f1eee7' } },
    },
    series,
  }
}
