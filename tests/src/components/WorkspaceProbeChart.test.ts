import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import { fitTanhProfile } from '@shared/analysis/wallProfileFit'
import WorkspaceProbeChart from '@/components/WorkspaceProbeChart.vue'

/** METHODS.md check #46 [D]: I = 100 + 50·tanh((x − 32.3)/3) on x = 0…63, noise-free; the fit returns w = 3 px. */
function checkProfile() {
  const positions = Float64Array.from({ length: 64 }, (_, i) => i)
  const values = positions.map((x) => 100 + 50 * Math.tanh((x - 32.3) / 3))
  return { positions: Array.from(positions), values: Array.from(values), fit: fitTanhProfile(positions, values) }
}

async function mountChart(props: InstanceType<typeof WorkspaceProbeChart>['$props']) {
  const wrapper = mount(WorkspaceProbeChart, { props, global: { plugins: [ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}

/** Label → value of the widths list. */
function readings(wrapper: Awaited<ReturnType<typeof mountChart>>): Record<string, string> {
  return Object.fromEntries(wrapper.findAll('dt').map((dt) => [dt.text(), dt.element.nextElementSibling?.textContent?.trim() ?? '']))
}

describe('WorkspaceProbeChart', () => {
  it('When the pixel size is known, then w, the 10–90 % rise and the tangent width read in px and nm', async () => {
    const wrapper = await mountChart({ ...checkProfile(), pixelSizeNm: 120 })
    const values = readings(wrapper)
    // Noise-free data: SE(w) is below the 4 digits shown. w = 3 px = 360 nm; rise ln 9·w = 6.592 px = 791.0 nm;
    // tangent 2w = 6 px = 720 nm (METHODS.md check #46 [D]).
    expect(values['Fitted width w']).toBe('3.000 ± 0.000 px (360.0 ± 0.0 nm)')
    expect(values['10–90 % rise']).toBe('6.592 ± 0.000 px (791.0 ± 0.0 nm)')
    expect(values['Tangent width (2w)']).toBe('6.000 ± 0.000 px (720.0 ± 0.0 nm)')
    expect(wrapper.text()).toContain('not the width of the Bloch wall')
  })

  it('When the image is not calibrated, then the widths are in px only, with a note on calibration', async () => {
    const wrapper = await mountChart({ ...checkProfile(), pixelSizeNm: null })
    expect(readings(wrapper)['Fitted width w']).not.toContain('nm')
    expect(wrapper.text()).toContain('calibrate the pixel size')
  })

  it('When there is no fit or no profile, then the panel says why', async () => {
    const { positions, values } = checkProfile()
    expect((await mountChart({ positions, values, fit: null, pixelSizeNm: null })).text()).toContain('No fit')
    expect((await mountChart({ positions: [], values: [], fit: null, pixelSizeNm: null })).text()).toContain('Draw a probe line')
  })
})
