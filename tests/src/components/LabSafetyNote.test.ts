import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import LabSafetyNote from '@/components/LabSafetyNote.vue'

function sectionText(wrapper: ReturnType<typeof mount>, heading: string): string {
  const section = wrapper.findAll('section').find((s) => s.find('h3').text() === heading)
  if (!section) throw new Error(`No section headed "${heading}"`)
  return section.text()
}

describe('LabSafetyNote', () => {
  const wrapper = mount(LabSafetyNote, { global: { plugins: [ElementPlus] } })

  it('When shown, then it has one headed section per hazard: electromagnets, light sources, cryogens', () => {
    expect(wrapper.findAll('section h3').map((h) => h.text())).toEqual(['Electromagnets', 'Lasers and arc lamps', 'Cryogens'])
  })

  it.each([
    ['Electromagnets', ['never open the circuit under load', '0.5 mT', 'pacemakers', 'ferromagnetic tools']],
    ['Lasers and arc lamps', ['laser class', 'eyewear', 'UV', 'cool']],
    ['Cryogens', ['700-fold', 'oxygen monitor', 'Never seal a dewar', 'face shield', 'gloves']],
  ])('When shown, then the %s section names its key cautions', (heading, phrases) => {
    const text = sectionText(wrapper, heading)
    for (const phrase of phrases) expect(text).toContain(phrase)
  })

  it('When shown, then it defers to local rules', () => {
    expect(wrapper.text()).toContain("your institution's rules")
  })
})
