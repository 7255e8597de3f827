/**
 * The ECharts parts the stack page uses, registered once (on-demand `echarts/core` imports keep the bundle small),
 * and the option type they compose. Every chart is drawn without animation: a half-drawn chart in a screenshot or a
 * report is worse than no transition (STACK.md gotcha 21).
 */
import { use, type ComposeOption } from 'echarts/core'
import { LineChart, ScatterChart, type LineSeriesOption, type ScatterSeriesOption } from 'echarts/charts'
import {
  AriaComponent,
  GridComponent,
  LegendComponent,
  MarkLineComponent,
  MarkPointComponent,
  TooltipComponent,
  type AriaComponentOption,
  type GridComponentOption,
  type LegendComponentOption,
  type MarkLineComponentOption,
  type MarkPointComponentOption,
  type TooltipComponentOption,
} from 'echarts/components'
import { CanvasRenderer } from 'echarts/renderers'

use([LineChart, ScatterChart, AriaComponent, GridComponent, LegendComponent, MarkLineComponent, MarkPointComponent, TooltipComponent, CanvasRenderer])

/** An option made of the registered parts only (a part not registered above does not type-check). */
export type ChartOption = ComposeOption<
  | LineSeriesOption
  | ScatterSeriesOption
  | AriaComponentOption
  | GridComponentOption
  | LegendComponentOption
  | MarkLineComponentOption
  | MarkPointComponentOption
  | TooltipComponentOption
>

/** Text and axis styling shared by the charts (the page font, muted axis names). */
export const CHART_TEXT_STYLE = { fontFamily: "'Work Sans', system-ui, sans-serif", color: '#1d2a2c' } as const
export const AXIS_NAME_STYLE = { color: '#5b6a6c', fontSize: 12 } as const

/** What a click on a data point reports: ECharts' `name` of the item, here the frame index as text. */
export interface ChartClick {
  name?: string
  seriesName?: string
}
