import { describe, expect, it } from 'vitest'
import { BRANCH_STYLE, loopChartOption } from '@/charts/loopChartOption'
import { LOOP_FRAMES, loopSummaryOf } from '../loopTestData'

type Series = { type: string; name: string; color: string; symbol: string; data: { name: string; value: [number, number | '-'] }[]; markLine?: { data: { xAxis: number }[] }; markPoint?: { data: { coord: [number, number] }[] } }

describe('loopChartOption', () => {
  const loop = loopSummaryOf(LOOP_FRAMES)
  const option = loopChartOption(LOOP_FRAMES, loop, 'Oe')
  const series = option.series as Series[]

  it('When given the METHODS §5.2 loop, then the engine finds Hc− = −22.5 Oe and Hc+ = +22.5 Oe (the values the chart marks)', () => {
    // METHODS.md check #33 [D]: linear interpolation between the bracketing frames.
    expect(loop.coerciveFieldDescending).toBeCloseTo(-22.5, 9)
    expect(loop.coerciveFieldAscending).toBeCloseTo(22.5, 9)
  })

  it('When drawn, then the descending and ascending branches are two series with different colours and marker shapes', () => {
    expect(series).toHaveLength(2)
    const [down, up] = series
    expect(down.name).toBe(BRANCH_STYLE.descending.name)
    expect(up.name).toBe(BRANCH_STYLE.ascending.name)
    expect(down.color).not.toBe(up.color)
    expect(down.symbol).not.toBe(up.symbol)
    // Frames 0–9 sweep down, 9–18 sweep up; the turning frame 9 ends one branch and starts the other.
    expect(down.data.map((d) => Number(d.name))).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9])
    expect(up.data.map((d) => Number(d.name))).toEqual([9, 10, 11, 12, 13, 14, 15, 16, 17, 18])
    expect(down.data.every((d) => d.value[0] === LOOP_FRAMES[Number(d.name)].field && d.value[1] === LOOP_FRAMES[Number(d.name)].magnetization)).toBe(true)
  })

  it('When drawn, then Hc− and Hc+ are vertical lines on their own branches and Mr± are marked at H = 0', () => {
    const [down, up] = series
    expect(down.markLine?.data).toEqual([expect.objectContaining({ xAxis: loop.coerciveFieldDescending })])
    expect(up.markLine?.data).toEqual([expect.objectContaining({ xAxis: loop.coerciveFieldAscending })])
    // METHODS.md check #34 [D]: Mr+ = 0.8 on the descending branch, Mr− = −0.8 on the ascending one.
    expect(down.markPoint?.data[0].coord[0]).toBe(0)
    expect(down.markPoint?.data[0].coord[1]).toBeCloseTo(0.8, 9)
    expect(up.markPoint?.data[0].coord[1]).toBeCloseTo(-0.8, 9)
  })

  it('When drawn, then animation is off (screenshots and reports never catch a half-drawn chart)', () => {
    expect(option.animation).toBe(false)
  })

  it('When a frame failed (no magnetization), then it is left out and the branches still line up with the loop indices', () => {
    const frames = LOOP_FRAMES.map((f) => (f.index === 2 ? { ...f, magnetization: null } : f))
    const usable = frames.filter((f): f is (typeof LOOP_FRAMES)[number] => f.magnetization !== null)
    const [down, up] = loopChartOption(frames, loopSummaryOf(usable), 'Oe').series as Series[]
    expect(down.data.map((d) => Number(d.name))).not.toContain(2)
    expect(down.data.at(-1)?.name).toBe('9')
    expect(up.data[0].name).toBe('9')
  })
})
