import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import SampleTheoryMaterialDialog from '@/components/SampleTheoryMaterialDialog.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { getButton, getByLabel } from '../domQueries'

let pinia: Pinia

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

async function openDialog() {
  const wrapper = mount(SampleTheoryMaterialDialog, {
    props: { labId: 4, material: null, start: null, modelValue: false },
    global: { plugins: [pinia, ElementPlus] },
    attachTo: document.body,
  })
  await wrapper.setProps({ modelValue: true })
  await flushPromises()
  return wrapper
}

describe('SampleTheoryMaterialDialog', () => {
  it('When constants are typed in MA/m, pJ/m and kJ/m³, then the lab table receives exact SI values', async () => {
    const requests = stubFetch({ 'POST /api/labs/4/materials': (r) => jsonResponse(201, { id: 9, labId: 4, createdAt: '', updatedAt: '', ...(r.body as object) }) })
    const wrapper = await openDialog()
    await getByLabel(wrapper, 'Name').setValue('Fe film')
    await getByLabel(wrapper, 'Ms (MA/m)').setValue('1.71')
    await getByLabel(wrapper, 'A (pJ/m)').setValue('21')
    await getByLabel(wrapper, 'K or K1 (kJ/m³, signed)').setValue('48')
    await getByLabel(wrapper, 'Source').setValue('METHODS §7.3 inputs')
    await getButton(wrapper, 'Add material').trigger('click')

    await vi.waitFor(() => expect(wrapper.emitted('saved')).toBeTruthy())
    // 21 pJ/m must arrive as 21e-12 exactly, not 2.1000000000000002e-11 (scaled through the decimal exponent).
    expect(requests[0].body).toEqual({ name: 'Fe film', msAPerM: 1.71e6, aJPerM: 21e-12, kJPerM3: 48e3, tcK: null, source: 'METHODS §7.3 inputs' })
  })

  it('When the lab already has the name, then the server message shows and the dialog stays open', async () => {
    stubFetch({ 'POST /api/labs/4/materials': () => errorResponse(409, 'material-name-taken', 'This lab already has a material named “Fe film”.', { name: ['A material of this name exists already.'] }) })
    const wrapper = await openDialog()
    await getByLabel(wrapper, 'Name').setValue('Fe film')
    await getByLabel(wrapper, 'Ms (MA/m)').setValue('1.71')
    await getByLabel(wrapper, 'A (pJ/m)').setValue('21')
    await getByLabel(wrapper, 'K or K1 (kJ/m³, signed)').setValue('48')
    await getByLabel(wrapper, 'Source').setValue('METHODS §7.3 inputs')
    await getButton(wrapper, 'Add material').trigger('click')

    await vi.waitFor(() => expect(wrapper.text()).toContain('A material of this name exists already.'))
    expect(wrapper.emitted('saved')).toBeUndefined()
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
  })
})
