/**
 * The jump-size distribution on log-log axes: the empirical complementary cumulative distribution P(S ≥ s) of every
 * flipped cluster of the run, and the maximum-likelihood power law fitted to its tail (Clauset, Shalizi & Newman 2009,
 * SIAM Rev. 51:661, DOI 10.1137/070710111; METHODS §5.4). Plotting the CCDF instead of a binned histogram follows the
 * same paper: it needs no bin choice, and the fitted line is drawn from the fit, never fitted to the plot [R].
 * The fitted curve is scaled by n_tail/n so that it meets the data at x_min: P(S ≥ s) = (n_tail/n)·S_fit(s), with
 * S_fit(s) = ζ(α, s)/ζ(α, x_min) for the discrete fit (sizes in px) and (s/x_min)^(1−α) for the continuous one.
 */
import { hurwitzZeta, type PowerLawFit } from '@shared/analysis/powerLawFit'
import { OKABE_ITO } from '@/colorBlindPalette'
import { formatNumber } from '@/formatQuantity'
import { AXIS_NAME_STYLE, CHART_TEXT_STYLE, type ChartOption } from './chartOption'

/** Points (s, P(S ≥ s)) of the empirical CCDF at each distinct positive size, ascending. */
export function complementaryCumulative(sizes: readonly number[]): [number, number][] {
  const sorted = sizes.filter((s) => s > 0 && Number.isFinite(s)).sort((a, b) => a - b)
  const n = sorted.length
  const points: [number, number][] = []
  for (let i = 0; i < n; i++) {
    if (i > 0 && sorted[i] === sorted[i - 1]) continue
    points.push([sorted[i], (n - i) / n])
  }
  return points
}

/** Samples of the fitted CCDF from x_min to the largest size (about 40 per decade span, integers for discrete fits). */
export function fittedComplementaryCumulative(fit: PowerLawFit, largest: number): [number, number][] {
  if (fit.alpha === null || fit.xMin === null || fit.n === 0 || !(largest >= fit.xMin)) return []
  const { alpha, xMin } = fit
  const share = fit.nTail / fit.n
  const discrete = fit.method !== 'continuous'
  const zetaMin = discrete ? hurwitzZeta(alpha, xMin) : 1
  const steps = 40
  const ratio = largest / xMin
  const points: [number, number][] = []
  for (let k = 0; k <= steps; k++) {
    let s = xMin * ratio ** (k / steps)
    if (discrete) s = Math.round(s)
    if (points.length > 0 && points[points.length - 1][0] === s) continue
    const survival = discrete ? hurwitzZeta(alpha, s) / zetaMin : (s / xMin) ** (1 - alpha)
    points.push([s, share * survival])
  }
  return points
}

export function jumpSizeChartOption(sizes: readonly number[], fit: PowerLawFit | null): ChartOption {
  const empirical = complementaryCumulative(sizes)
  const largest = empirical.length ? empirical[empirical.length - 1][0] : 1
  const fitted = fit ? fittedComplementaryCumulative(fit, largest) : []
  const fitName = fit?.alpha != null ? `Power law, α = ${formatNumber(fit.alpha, 3)}` : 'Power law'
  return {
    animation: false,
    textStyle: CHART_TEXT_STYLE,
    aria: { enabled: true, label: { description: `Complementary cumulative distribution of ${sizes.length} jump cluster sizes on log-log axes${fit?.alpha != null ? `, with a fitted power law of exponent ${formatNumber(fit.alpha, 3)}` : ''}.` } },
    grid: { left: 72, right: 28, top: 44, bottom: 56 },
    legend: { top: 4, itemGap: 24 },
    tooltip: {
      trigger: 'item',
      formatter: (params: unknown) => {
        const p = params as { seriesName?: string; value?: [number, number] }
        return p.value ? `${p.seriesName}<br>size s = ${formatNumber(p.value[0], 4)} px<br>P(S ≥ s) = ${formatNumber(p.value[1], 3)}` : ''
      },
    },
    xAxis: { type: 'log', name: 'Cluster size s (px)', nameLocation: 'middle', nameGap: 32, nameTextStyle: AXIS_NAME_STYLE, axisLabel: { formatter: (v: number) => formatNumber(v, 2) }, splitLine: { lineStyle: { color: '#ece9e1' } } },
    yAxis: { type: 'log', name: 'P(S ≥ s)', nameLocation: 'middle', nameGap: 52, nameTextStyle: AXIS_NAME_STYLE, splitLine: { lineStyle: { color: '#ece9e1' } }, axisLabel: { formatter: (v: number) => formatNumber(v, 2) } },
    series: [
      {
        type: 'scatter',
        name: 'Measured clusters',
        data: empirical,
        symbol: 'circle',
        symbolSize: 6,
        itemStyle: { color: OKABE_ITO.blue, opacity: 0.8 },
      },
      {
        type: 'line',
        name: fitName,
        data: fitted,
        showSymbol: false,
        lineStyle: { color: OKABE_ITO.vermillion, width: 2 },
        itemStyle: { color: OKABE_ITO.vermillion },
        markLine:
          fit?.xMin != null && fitted.length
            ? {
                symbol: 'none',
                silent: true,
                lineStyle: { color: '#5b6a6c', type: 'dotted' as const },
                label: { formatter: `x_min = ${formatNumber(fit.xMin, 4)} px`, color: '#5b6a6c', position: 'insideEndTop' as const },
                data: [{ xAxis: fit.xMin }],
              }
            : undefined,
      },
    ],
  }
}
