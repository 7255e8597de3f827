import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import StackLoopSummary from '@/components/StackLoopSummary.vue'
import { LOOP_FRAMES, loopSummaryOf } from '../loopTestData'

function rowText(wrapper: ReturnType<typeof mount>, id: string): string {
  return wrapper.get(`[data-testid="loop-${id}"]`).text()
}

describe('StackLoopSummary', () => {
  it('When the fields were recorded in Oe, then Hc is shown in Oe and converted to A/m and μ0H in mT', () => {
    const wrapper = mount(StackLoopSummary, { props: { loop: loopSummaryOf(LOOP_FRAMES, 'Oe'), fieldStep: 10 }, global: { plugins: [ElementPlus] } })
    const hc = rowText(wrapper, 'hc')
    // METHODS.md check #33 [D]: Hc = 22.5 Oe = 1790.49 A/m, μ0Hc = 2.25 mT (1 Oe = 10³/4π A/m, §9.3 [R]).
    expect(hc).toContain('22.5 Oe')
    expect(hc).toContain('1790.49 A/m')
    expect(hc).toContain('2.25 mT (μ0H)')
    // METHODS.md check #34 [D]: H_E = 0, Mr = 0.8, S = 0.8.
    expect(rowText(wrapper, 'exchange-bias')).toContain('0 Oe')
    expect(rowText(wrapper, 'remanence')).toContain('0.8')
    expect(rowText(wrapper, 'squareness')).toContain('0.8')
    expect(wrapper.text()).not.toContain('Loop not saturated')
  })

  it('When the fields were recorded as μ0H in mT, then A/m and Oe follow the mT value', () => {
    const frames = LOOP_FRAMES.map((f) => ({ ...f, field: f.field / 10 }))
    const wrapper = mount(StackLoopSummary, { props: { loop: loopSummaryOf(frames, 'mT'), fieldStep: 1 }, global: { plugins: [ElementPlus] } })
    // The same loop with H in mT (1 Oe ↔ 0.1 mT in air, METHODS §9.3 [R]): 2.25 mT = 22.5 Oe = 1790.49 A/m.
    const hc = rowText(wrapper, 'hc')
    expect(hc).toContain('2.25 mT (μ0H)')
    expect(hc).toContain('1790.49 A/m')
    expect(hc).toContain('22.5 Oe')
  })

  it('When the end frames do not agree, then "Loop not saturated" is said and no squareness is given', () => {
    // Without the frames at |H| ≥ 60 Oe the sweep turns at ±30 Oe, where the two branches have not yet closed.
    const frames = LOOP_FRAMES.filter((f) => Math.abs(f.field) <= 10 || Math.abs(f.magnetization) < 0.99).map((f, index) => ({ ...f, index }))
    const loop = loopSummaryOf(frames)
    expect(loop.saturated).toBe(false)
    const wrapper = mount(StackLoopSummary, { props: { loop, fieldStep: 10 }, global: { plugins: [ElementPlus] } })
    expect(wrapper.text()).toContain('Loop not saturated')
    expect(rowText(wrapper, 'squareness')).toContain('not given')
  })
})
