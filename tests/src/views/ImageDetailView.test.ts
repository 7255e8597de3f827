import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { ImageDetailDto } from '@shared/types/image'
import { createAppRouter } from '@/router'
import ImageDetailView from '@/views/ImageDetailView.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { getButton } from '../domQueries'

let pinia: Pinia
let router: Router
const ME = 7

function detail(uploadedById: number | null): ImageDetailDto {
  return {
    id: 9,
    name: 'anneal-300.tif',
    sha256: 'ab'.repeat(32),
    width: 4,
    height: 4,
    bitDepth: 16,
    frameCount: 1,
    coverFrameIndex: 0,
    pixelSizeNm: 100,
    projectId: 2,
    sampleId: null,
    uploadedById,
    technique: 'kerr-polar',
    createdAt: '2026-03-01T09:00:00Z',
    acquiredAt: null,
    annotationStatus: 'new',
    approvedFrameCount: 0,
    notes: '',
    pixelSizeSource: null,
    mediaType: 'image/tiff',
    byteSize: 100,
    sample: null,
    frames: [{ id: 11, index: 0, field: null, fieldUnit: null, temperatureK: null, annotationStatus: 'new', assignee: null }],
  }
}

/** The page's header only: the viewer, tables and panels below it are stubbed, as they play no part in deleting. */
const STUBBED = ['ImageCanvas', 'ImageCanvasToolbar', 'ImageCompareControls', 'ImageDisplayControls', 'ImageFramePlayer', 'ImageFrameTable', 'ImageMetadataPanel', 'ImageStackRunsPanel', 'ImageCalibrationDialog']

async function mountDetail(role: LabRole, uploadedById: number | null, image: () => Response = () => jsonResponse(200, detail(uploadedById)), path = '/images/9') {
  stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: ME, email: 'me@kestrel-lab.example', name: 'Me', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    'GET /api/projects': () => jsonResponse(200, [{ id: 2, labId: 1, name: 'Garnet film', description: '', createdAt: '2026-01-01T00:00:00.000Z', sampleCount: 0, imageCount: 1 }]),
    'GET /api/images/9': image,
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(path)
  const wrapper = mount(ImageDetailView, {
    props: { imageId: 9 },
    global: { plugins: [pinia, router, ElementPlus], stubs: Object.fromEntries(STUBBED.map((name) => [name, true])) },
    attachTo: document.body,
  })
  await flushPromises()
  return wrapper
}

const hasDeleteButton = (wrapper: Awaited<ReturnType<typeof mountDetail>>) => wrapper.findAll('button').some((b) => b.text().trim() === 'Delete image')

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ImageDetailView delete button', () => {
  it.each([
    { role: 'microscopist', uploader: 'themselves', uploadedById: ME, shown: true },
    { role: 'microscopist', uploader: 'someone else', uploadedById: 8, shown: false },
    { role: 'microscopist', uploader: 'a removed account', uploadedById: null, shown: false },
    { role: 'pi', uploader: 'someone else', uploadedById: 8, shown: true },
    { role: 'admin', uploader: 'a removed account', uploadedById: null, shown: true },
    { role: 'reviewer', uploader: 'themselves', uploadedById: ME, shown: false },
  ] as const)('When a $role opens an image uploaded by $uploader, then "Delete image" shown: $shown', async ({ role, uploadedById, shown }) => {
    const wrapper = await mountDetail(role, uploadedById)
    expect(wrapper.find('h1').text()).toBe('anneal-300.tif')
    expect(hasDeleteButton(wrapper)).toBe(shown)
  })
})

describe('ImageDetailView for a missing image', () => {
  it('When the image does not exist (or is in another lab), then the page says so and its button leads to the image list', async () => {
    const wrapper = await mountDetail('pi', null, () => errorResponse(404, 'not-found', 'image not found'))
    expect(wrapper.text()).toContain('Image not found')
    expect(hasDeleteButton(wrapper)).toBe(false)
    await getButton(wrapper, 'All images').trigger('click')
    // The image list is a lazily loaded route: wait for its module as a browser would.
    await vi.waitFor(() => expect(router.currentRoute.value.name).toBe('images'), { timeout: 5000 })
  })
})

describe('ImageDetailView opening frame', () => {
  const stack = (): ImageDetailDto => ({
    ...detail(ME),
    frameCount: 3,
    coverFrameIndex: 2,
    frames: [0, 1, 2].map((index) => ({ id: 11 + index, index, field: 10 - 10 * index, fieldUnit: 'mT', temperatureK: null, annotationStatus: 'new', assignee: null })),
  })

  it('When a stack is opened, then it shows its cover frame (the one the image list shows), not the saturated first one', async () => {
    const wrapper = await mountDetail('pi', ME, () => jsonResponse(200, stack()))
    expect(wrapper.text()).toContain('Annotate frame 2')
  })

  it('When a link names a frame (?frame=1), then that frame wins over the cover', async () => {
    const wrapper = await mountDetail('pi', ME, () => jsonResponse(200, stack()), '/images/9?frame=1')
    expect(wrapper.text()).toContain('Annotate frame 1')
  })
})

describe('ImageDetailView header links', () => {
  it('When the image belongs to a sample, then the header names it with a link to the sample page, beside the project link', async () => {
    const withSample = (): ImageDetailDto => ({ ...detail(ME), sampleId: 4, sample: { id: 4, name: 'KB24-A300', annealTemperatureC: 300 } })
    const wrapper = await mountDetail('pi', ME, () => jsonResponse(200, withSample()))
    const subtitle = wrapper.get('.image-detail__subtitle')
    expect(subtitle.text().replace(/\s+/g, ' ')).toBe('Kerr, polar · 4 × 4 px · 16-bit · 1 frame · sample KB24-A300 · Garnet film')
    const links = subtitle.findAll('a').map((a) => [a.text(), a.attributes('href')])
    expect(links).toEqual([
      ['KB24-A300', '/samples/4'],
      ['Garnet film', '/projects/2'],
    ])
  })
})
