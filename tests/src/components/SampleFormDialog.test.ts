import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import SampleFormDialog from '@/components/SampleFormDialog.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { getButton, getByLabel } from '../domQueries'

let pinia: Pinia

function mountDialog() {
  return mount(SampleFormDialog, {
    props: { projectId: 3, modelValue: false },
    global: { plugins: [pinia, ElementPlus] },
    attachTo: document.body,
  })
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SampleFormDialog', () => {
  it('When the server rejects a field, then its message appears at that field and the dialog stays open', async () => {
    const requests = stubFetch({
      'POST /api/projects/3/samples': () =>
        errorResponse(400, 'invalid-input', 'Invalid body — annealAtmosphere: Too long', {
          annealAtmosphere: ['Atmosphere is too long for the record.'],
        }),
    })
    const wrapper = mountDialog()
    await wrapper.setProps({ modelValue: true })
    await flushPromises()

    await getByLabel(wrapper, 'Sample name').setValue('KB24-A275')
    await getByLabel(wrapper, 'Temperature (°C)').setValue('275')
    await getByLabel(wrapper, 'Atmosphere').setValue('argon')
    await getButton(wrapper, 'Add sample').trigger('click')

    await vi.waitFor(() => expect(wrapper.text()).toContain('Atmosphere is too long for the record.'))
    expect(requests[0].body).toMatchObject({ name: 'KB24-A275', annealTemperatureC: 275, annealAtmosphere: 'argon', thicknessNm: null })
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
  })

  it('When a temperature is below absolute zero, then the form says so and nothing is sent', async () => {
    const requests = stubFetch({ 'POST /api/projects/3/samples': () => jsonResponse(201, {}) })
    const wrapper = mountDialog()
    await wrapper.setProps({ modelValue: true })
    await flushPromises()

    await getByLabel(wrapper, 'Sample name').setValue('KB24-cold')
    await getByLabel(wrapper, 'Temperature (°C)').setValue('-300')
    await getButton(wrapper, 'Add sample').trigger('click')

    await vi.waitFor(() => expect(wrapper.text()).toContain('Between −273.15 °C and 3000 °C.'))
    expect(requests).toHaveLength(0)
  })
})
