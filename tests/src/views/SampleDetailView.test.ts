import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { ImageSummaryDto } from '@shared/types/image'
import type { SampleMeasurementsDto } from '@shared/types/sampleMeasurements'
import { createAppRouter } from '@/router'
import ImageUploadView from '@/views/ImageUploadView.vue'
import SampleDetailView from '@/views/SampleDetailView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { sampleDto } from '../labDtos'

let pinia: Pinia

const SAMPLE = sampleDto({ material: 'Ta/CoFeB/MgO (perpendicular)' })
const MEASUREMENTS: SampleMeasurementsDto = { sample: SAMPLE, labId: 1, projectName: 'KB-24 anneal series', frames: [], stackRuns: [] }

function image(id: number, name: string, frameCount: number): ImageSummaryDto {
  return {
    id,
    name,
    sha256: 'ab'.repeat(32),
    width: 256,
    height: 256,
    bitDepth: 16,
    frameCount,
    coverFrameIndex: 0,
    pixelSizeNm: 80,
    projectId: 1,
    sampleId: 3,
    uploadedById: 3,
    technique: 'kerr-polar',
    createdAt: '2026-11-12T14:05:00.000Z',
    acquiredAt: null,
    annotationStatus: 'new',
    approvedFrameCount: 0,
  }
}

const PROJECTS = [{ id: 1, labId: 1, name: 'KB-24 anneal series', description: '', createdAt: '2026-11-01T00:00:00.000Z', sampleCount: 1, imageCount: 2 }]

function stubApi(role: LabRole, images: () => Response) {
  return stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 3, email: 'tl@kestrel-lab.example', name: 'T. L.', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    'GET /api/projects': () => jsonResponse(200, PROJECTS),
    'GET /api/projects/1/samples': () => jsonResponse(200, [SAMPLE]),
    'GET /api/samples/3/measurements': () => jsonResponse(200, MEASUREMENTS),
    'GET /api/labs/1/materials': () => jsonResponse(200, []),
    'GET /api/images': images,
  })
}

async function mountSample(role: LabRole, images: () => Response) {
  const requests = stubApi(role, images)
  const router = createAppRouter(createMemoryHistory())
  await router.push('/samples/3')
  const wrapper = mount(SampleDetailView, { props: { sampleId: 3 }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, router, requests }
}

/** What the upload form's selects show as chosen (their placeholders left out). */
const chosen = (upload: ReturnType<typeof mount>) =>
  upload.findAll('.el-select__placeholder:not(.is-transparent)').map((item) => item.text())

const imagesSection = (wrapper: Awaited<ReturnType<typeof mountSample>>['wrapper']) => wrapper.get('section[aria-labelledby="sample-images-heading"]')

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('SampleDetailView, images of the sample', () => {
  it('When the sample has images, then its page lists them by name with frames, without a sample column, and a name opens the image', async () => {
    const page = { items: [image(5, 'KB24-A300_field-sweep.tif', 41), image(4, 'KB24-A300_remanent.tif', 1)], total: 2, page: 1, pageSize: 200 }
    const { wrapper, router, requests } = await mountSample('microscopist', () => jsonResponse(200, page))

    const listRequest = requests.find((r) => r.url.startsWith('/api/images?'))
    expect(new URL(listRequest!.url, 'http://x').searchParams.get('sampleId')).toBe('3')
    const section = imagesSection(wrapper)
    expect(section.find('h2').text().replace(/\s+/g, ' ')).toBe('Images 2')
    const headers = section.findAll('th').map((th) => th.text())
    expect(headers).toContain('Frames')
    expect(headers).not.toContain('Sample')
    const names = section.findAll('.image-list-table__name').map((a) => a.text())
    expect(names).toEqual(['KB24-A300_field-sweep.tif', 'KB24-A300_remanent.tif'])

    await section.findAll('.image-list-table__name')[1].trigger('click')
    // The image page is a lazily loaded route: navigation ends once its module is in.
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe('/images/4'), { timeout: 10_000 })
  })

  it('When a sample has more images than one page holds, then the heading counts them all and a link leads to the full list', async () => {
    const page = { items: [image(4, 'KB24-A300_remanent.tif', 1)], total: 250, page: 1, pageSize: 200 }
    const { wrapper } = await mountSample('pi', () => jsonResponse(200, page))
    const section = imagesSection(wrapper)
    expect(section.find('h2').text().replace(/\s+/g, ' ')).toBe('Images 250')
    expect(section.text()).toContain('The first 1 by name.')
    const all = section.findAll('a').find((a) => a.text() === 'All 250 in the image list')!
    expect(all.attributes('href')).toBe('/images?projectId=1&sampleId=3')
  })

  it('When a microscopist uses "Upload to this sample", then the upload form opens with the project and the sample chosen, and leads back to the sample', async () => {
    const { wrapper, router } = await mountSample('microscopist', () => jsonResponse(200, { items: [], total: 0, page: 1, pageSize: 200 }))
    expect(imagesSection(wrapper).text()).toContain('No images of this sample yet. Upload Kerr or MFM images and stacks into it.')

    await imagesSection(wrapper).get('button').trigger('click')
    await flushPromises()
    expect(router.currentRoute.value.name).toBe('image-upload')
    expect(router.currentRoute.value.query).toEqual({ projectId: '1', sampleId: '3' })

    const upload = mount(ImageUploadView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
    await flushPromises()
    expect(chosen(upload)).toEqual(['KB-24 anneal series', 'KB24-A300'])
    const back = upload.get('.image-upload__back')
    expect([back.text(), back.attributes('href')]).toEqual(['KB24-A300', '/samples/3'])
  })

  it('When a link names a sample of another project, then the upload form leaves the sample unchosen', async () => {
    stubApi('microscopist', () => jsonResponse(200, { items: [], total: 0, page: 1, pageSize: 200 }))
    const router = createAppRouter(createMemoryHistory())
    await router.push('/images/upload?projectId=1&sampleId=99')
    const upload = mount(ImageUploadView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
    await flushPromises()
    expect(chosen(upload)).toEqual(['KB-24 anneal series'])
    expect(upload.get('.image-upload__back').text()).toBe('All images')
  })

  it('When the person may not upload (an annotator), then the sample page offers no upload', async () => {
    const { wrapper } = await mountSample('annotator', () => jsonResponse(200, { items: [], total: 0, page: 1, pageSize: 200 }))
    expect(imagesSection(wrapper).text()).toContain('No images of this sample yet.')
    expect(imagesSection(wrapper).findAll('button').map((b) => b.text())).not.toContain('Upload to this sample')
    expect(imagesSection(wrapper).text()).not.toContain('Upload Kerr')
  })

  it('When the images fail to load, then the section says so and Retry loads them again', async () => {
    let calls = 0
    const { wrapper } = await mountSample('pi', () => (++calls === 1 ? errorResponse(503, 'unavailable', 'The database is not answering.') : jsonResponse(200, { items: [image(4, 'KB24-A300_remanent.tif', 1)], total: 1, page: 1, pageSize: 200 })))
    expect(imagesSection(wrapper).text()).toContain('The database is not answering.')

    await imagesSection(wrapper).findAll('button').find((b) => b.text() === 'Retry')!.trigger('click')
    await flushPromises()
    expect(calls).toBe(2)
    expect(imagesSection(wrapper).findAll('.image-list-table__name').map((a) => a.text())).toEqual(['KB24-A300_remanent.tif'])
  })
})
