import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import ImageCanvasToolbar from '@/components/ImageCanvasToolbar.vue'

function mountToolbar(compare = false) {
  return mount(ImageCanvasToolbar, { props: { scale: 0.9, compare }, global: { plugins: [ElementPlus] }, attachTo: document.body })
}

describe('ImageCanvasToolbar', () => {
  it('When a screen reader reads the toolbar, then every control has a name and the zoom reads in per cent', () => {
    const wrapper = mountToolbar()
    expect(wrapper.get('[role="toolbar"]').attributes('aria-label')).toBe('View')
    expect(wrapper.get('button[aria-label="Zoom level"]').text()).toBe('90 %')
    // The switch's visible text sits beside it, outside the control; without its own name it would be read as "switch".
    expect(wrapper.get('[role="switch"]').attributes('aria-label')).toBe('Side by side')
  })

  it('When "Side by side" is switched on, then the compare model turns true', async () => {
    const wrapper = mountToolbar(false)
    await wrapper.get('[role="switch"]').trigger('change')
    expect(wrapper.emitted('update:compare')).toEqual([[true]])
  })

  it('When the zoom buttons are pressed, then they ask for the zoom change', async () => {
    const wrapper = mountToolbar()
    await wrapper.get('button[aria-label="Zoom in"]').trigger('click')
    await wrapper.get('button[aria-label="Zoom out"]').trigger('click')
    expect(wrapper.emitted('zoomIn')).toHaveLength(1)
    expect(wrapper.emitted('zoomOut')).toHaveLength(1)
  })
})
