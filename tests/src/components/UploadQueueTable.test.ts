import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, createRouter } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import UploadQueueTable from '@/components/UploadQueueTable.vue'
import { useUploadStore } from '@/stores/upload'

let pinia: Pinia

/** The queue with one file that failed with `code`. */
async function mountFailed(code: string, message: string) {
  const upload = useUploadStore()
  upload.addFiles([new File([new Uint8Array(17)], 'sample.tif')])
  Object.assign(upload.items[0], { status: 'failed', error: { code, message } })
  // Only what the table links to; the app's router would sign someone in first.
  const router = createRouter({ history: createMemoryHistory(), routes: [{ path: '/', component: { render: () => null } }, { path: '/images/:imageId', name: 'image-detail', component: { render: () => null } }] })
  const wrapper = mount(UploadQueueTable, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, upload }
}

const buttonTexts = (wrapper: Awaited<ReturnType<typeof mountFailed>>['wrapper']) => wrapper.findAll('tbody button').map((b) => b.text() || b.attributes('aria-label'))

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('UploadQueueTable', () => {
  it('When a file is refused for its bytes, then the row offers to remove it, not a retry that would fail the same way', async () => {
    const { wrapper, upload } = await mountFailed('unsupported-type', '"sample.tif": this is not a PNG, JPEG or TIFF image (it contains text).')
    expect(wrapper.text()).toContain('it contains text')
    expect(buttonTexts(wrapper)).toEqual(['Remove sample.tif'])
    await wrapper.get('button[aria-label="Remove sample.tif"]').trigger('click')
    expect(upload.items).toHaveLength(0)
  })

  it('When the store was not reachable, then the row offers Retry', async () => {
    const { wrapper, upload } = await mountFailed('storage-unavailable', 'The image store is not reachable right now.')
    expect(buttonTexts(wrapper)).toEqual(['Retry'])
    await wrapper.findAll('tbody button')[0].trigger('click')
    expect(upload.items[0].status).toBe('queued')
  })
})
