import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import SampleTheoryTable from '@/components/SampleTheoryTable.vue'
import { materialChoices } from '@/materialChoices'

function rowText(wrapper: ReturnType<typeof mount>, id: string): string {
  return wrapper.get(`.sample-theory-table__row--${id}`).text()
}

describe('SampleTheoryTable', () => {
  const fe = materialChoices([]).find((c) => c.key === 'builtin:fe')!

  it('When Fe is chosen, then the panel shows δ_B = 65.71 nm and σ_w = 4.016 mJ/m² (= 4.016 erg/cm²)', async () => {
    const wrapper = mount(SampleTheoryTable, { props: { choice: fe, thicknessNm: 50, measured: null }, global: { plugins: [ElementPlus] } })
    await flushPromises()
    // METHODS.md check #47 [D]: A = 21 pJ/m, K = 48 kJ/m³ → δ_B = 65.71 nm, σ_w = 4.016 mJ/m²; 1 erg/cm² = 1 mJ/m² (§9.3 [R]).
    expect(rowText(wrapper, 'bloch-width')).toContain('65.71 nm')
    expect(rowText(wrapper, 'wall-energy')).toContain('4.016 mJ/m²')
    expect(rowText(wrapper, 'wall-energy')).toContain('4.016 erg/cm²')
    // METHODS.md check #51 [D]: both exchange-length forms, the one used named.
    expect(rowText(wrapper, 'exchange-length')).toContain('3.381 nm')
    expect(rowText(wrapper, 'exchange-length')).toContain('√(2A/(μ0Ms²))')
    expect(rowText(wrapper, 'exchange-length')).toContain('2.391 nm')
  })

  it('When a calibrated width is given, then the wall energy inferred from it and the measured/predicted ratio are shown', async () => {
    const wrapper = mount(SampleTheoryTable, { props: { choice: fe, thicknessNm: 50, measured: { widthNm: 400, periodNm: 800 } }, global: { plugins: [ElementPlus] } })
    await flushPromises()
    expect(rowText(wrapper, 'wall-energy')).toContain('from the width')
    expect(rowText(wrapper, 'kittel-width')).toContain('400 nm mean width')
    expect(rowText(wrapper, 'kittel-period')).toContain('800 nm period')
    // Fe has Q = 2K/(μ0Ms²) ≈ 0.026 < 1: the Kittel width is flagged as indicative.
    expect(wrapper.text()).toContain('indicative only')
  })
})
