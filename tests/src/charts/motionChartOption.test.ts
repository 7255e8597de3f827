import { describe, expect, it } from 'vitest'
import type { MotionCreep } from '@shared/analysis/analyzeMotion'
import { creepCurve, creepLinearOption, velocityChartOption, type VelocityPoint } from '@/charts/motionChartOption'
import { formatDuration } from '@/motionFormat'

/** A constructed creep fit: ln v = 22.4 − 40·H^(−¼) (v in m/s, H in mT), with a flow regime above 8 mT. */
const CREEP: MotionCreep = {
  mu: 0.25,
  muStdErr: null,
  slope: 40,
  slopeStdErr: 0.5,
  lnV0: 22.4,
  lnV0StdErr: 0.3,
  v0: Math.exp(22.4),
  fieldUnit: 'mT',
  velocityUnit: 'm/s',
  depinningField: 7,
  depinningBracket: [7, 8],
  flow: { mobility: 0.05, mobilityStdErr: 0.001, points: 2, fieldRange: [8, 9] },
  usedPoints: 5,
  creepFieldRange: [3, 7],
  residualRms: 0.01,
  weighted: true,
}
const POINTS: VelocityPoint[] = [3, 4, 5, 6, 7].map((h) => ({ name: `${h} mT`, fieldMT: h, velocity: Math.exp(22.4 - 40 * h ** -0.25), group: 'Steps' }))

type Series = { type: string; name: string; data: unknown[]; markLine?: { data: { xAxis: number }[] } }

describe('velocityChartOption', () => {
  const option = velocityChartOption(POINTS, CREEP, 'm/s')
  const series = option.series as Series[]

  it('When drawn, then animation is off and velocity is on a log axis (creep spans decades)', () => {
    // STACK.md gotcha 21: a screenshot must not catch a half-drawn chart.
    expect(option.animation).toBe(false)
    expect((option.yAxis as { type: string }).type).toBe('log')
  })

  it('When a creep fit is given, then its curve passes through the constructed points and depinning is marked', () => {
    // [D]: the curve is the fitted law itself, v = v₀·exp(−C·H^(−μ)).
    const curve = creepCurve(CREEP, 3, 7)
    expect(curve[0][1]).toBeCloseTo(POINTS[0].velocity, 12)
    expect(curve[curve.length - 1][1]).toBeCloseTo(POINTS[4].velocity, 9)
    const fit = series.find((s) => s.name.startsWith('Creep fit'))!
    expect(fit.markLine?.data).toEqual([{ xAxis: 7 }])
    expect(series.some((s) => s.name === 'Flow v = m·H')).toBe(true)
  })

  it('When the linearised plot is drawn, then the points lie on the line ln v₀ − C·H^(−μ)', () => {
    // [D]: ln v of a constructed point = 22.4 − 40·H^(−¼) exactly.
    const linear = creepLinearOption(POINTS, CREEP, 'm/s').series as { data: ({ value: [number, number] } | [number, number])[] }[]
    const [points, line] = linear
    const [a, b] = line.data as [number, number][]
    const slope = (b[1] - a[1]) / (b[0] - a[0])
    expect(slope).toBeCloseTo(-40, 9)
    for (const p of points.data as { value: [number, number] }[]) expect(p.value[1]).toBeCloseTo(22.4 - 40 * p.value[0], 9)
  })
})

describe('motionFormat', () => {
  it.each([
    [4e-6, '4 µs'],
    [0.005, '5 ms'],
    [2.5, '2.5 s'],
    [5e-8, '50 ns'],
    [null, '—'],
  ])('When a duration of %s s is shown, then it reads %s', (seconds, text) => {
    expect(formatDuration(seconds)).toBe(text)
  })
})
