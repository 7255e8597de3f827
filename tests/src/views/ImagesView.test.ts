import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { ImageSummaryDto } from '@shared/types/image'
import { createAppRouter } from '@/router'
import ImagesView from '@/views/ImagesView.vue'
import { useImagesStore } from '@/stores/images'
import { jsonResponse, stubFetch } from '../fakeApi'

let pinia: Pinia
let router: Router
const ME = 7
const COLLEAGUE = 8

function summary(id: number, name: string, uploadedById: number | null): ImageSummaryDto {
  return {
    id,
    name,
    sha256: 'ef'.repeat(32),
    width: 256,
    height: 256,
    bitDepth: 16,
    frameCount: 1,
    coverFrameIndex: 0,
    pixelSizeNm: 80,
    projectId: 3,
    sampleId: null,
    uploadedById,
    technique: 'kerr-polar',
    createdAt: '2026-03-02T10:00:00.000Z',
    acquiredAt: null,
    annotationStatus: 'new',
    approvedFrameCount: 0,
  }
}

const IMAGES = [
  summary(1, 'mine.tif', ME),
  // Reviewed: a stack with 3 of 41 frames approved, and an approved single frame.
  { ...summary(2, 'colleague.tif', COLLEAGUE), frameCount: 41, annotationStatus: 'submitted' as const, approvedFrameCount: 3 },
  { ...summary(3, 'former-member.tif', null), annotationStatus: 'submitted' as const, approvedFrameCount: 1 },
]

/** `earlier` sets the list's state as an earlier visit left it (after sign-in, which resets the store). */
async function mountImages(role: LabRole, path = '/images', earlier?: () => void) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: ME, email: 'me@kestrel-lab.example', name: 'Me', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }], csrfToken: 't' }),
    'GET /api/projects': () => jsonResponse(200, [{ id: 3, labId: 1, name: 'KB-24 anneal series', description: '', createdAt: '2026-01-01T00:00:00.000Z', sampleCount: 0, imageCount: 3 }]),
    'GET /api/projects/3/samples': () => jsonResponse(200, [{ id: 5, projectId: 3, name: 'KB24-A300', material: '', thicknessNm: null, substrate: '', annealTemperatureC: 300, annealDurationMin: null, annealAtmosphere: '', annealFieldMT: null, notes: '', imageCount: 2 }]),
    'GET /api/images': () => jsonResponse(200, { items: IMAGES, total: IMAGES.length, page: 1, pageSize: 25 }),
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(path)
  earlier?.()
  const wrapper = mount(ImagesView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  Object.assign(wrapper, { requests })
  return wrapper as typeof wrapper & { requests: typeof requests }
}

/** Names of the rows that offer a Delete button (found by its accessible name, as a screen reader would). */
function deletableNames(wrapper: Awaited<ReturnType<typeof mountImages>>): string[] {
  return wrapper.findAll('button[aria-label^="Delete "]').map((b) => b.attributes('aria-label')!.replace(/^Delete /, ''))
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ImagesView delete buttons', () => {
  it('When a microscopist looks at the list, then only their own upload offers Delete', async () => {
    const wrapper = await mountImages('microscopist')
    expect(wrapper.text()).toContain('colleague.tif')
    expect(deletableNames(wrapper)).toEqual(['mine.tif'])
  })

  it('When a PI looks at the list, then every image offers Delete, whoever uploaded it', async () => {
    const wrapper = await mountImages('pi')
    expect(deletableNames(wrapper)).toEqual(['mine.tif', 'colleague.tif', 'former-member.tif'])
  })

  it('When an annotator looks at the list, then no image offers Delete', async () => {
    const wrapper = await mountImages('annotator')
    expect(wrapper.text()).toContain('mine.tif')
    expect(deletableNames(wrapper)).toEqual([])
  })
})

describe('ImagesView review state', () => {
  it('When frames of an image are approved, then its row says how many; an image without approvals says nothing', async () => {
    const wrapper = await mountImages('reviewer')
    const approved = wrapper.findAll('tbody tr').map((row) => row.find('[data-testid="approved-frames"]')).map((cell) => (cell.exists() ? cell.text() : null))
    expect(approved).toEqual([null, '3 of 41 approved', 'approved'])
  })
})

describe('ImagesView opened from a link', () => {
  it("When a sample's image count links here, then the list asks for that project's sample only, clears earlier filters and drops the link's query", async () => {
    const images = useImagesStore()
    const wrapper = await mountImages('pi', '/images?projectId=3&sampleId=5', () => (images.query = { ...images.query, search: 'old search', technique: 'mfm' }))
    const lists = wrapper.requests.filter((r) => r.url.startsWith('/api/images?')).map((r) => new URL(r.url, 'http://x').searchParams)
    expect(lists).toHaveLength(1)
    expect(Object.fromEntries(lists[0])).toMatchObject({ projectId: '3', sampleId: '5', page: '1' })
    expect(lists[0].has('search')).toBe(false)
    expect(lists[0].has('technique')).toBe(false)
    expect(router.currentRoute.value.fullPath).toBe('/images')
    expect(wrapper.get('input[aria-label="Search by name"]').element).toHaveProperty('value', '')
  })

  it('When the link names no valid project, then the list keeps the filters it had', async () => {
    const images = useImagesStore()
    const wrapper = await mountImages('pi', '/images?projectId=abc', () => (images.query = { ...images.query, technique: 'mfm' }))
    const lists = wrapper.requests.filter((r) => r.url.startsWith('/api/images?')).map((r) => new URL(r.url, 'http://x').searchParams)
    expect(lists.map((q) => q.get('technique'))).toEqual(['mfm'])
  })
})

describe('ImagesView pagination', () => {
  it('When a screen reader reaches the page-size choice, then it is named for what it sets', async () => {
    const wrapper = await mountImages('pi')
    // Element Plus leaves this select unnamed; the view names it (src/directives/innerNames.ts).
    const pageSize = wrapper.get('.el-pagination__sizes input')
    expect(pageSize.attributes('role')).toBe('combobox')
    expect(pageSize.attributes('aria-label')).toBe('Images per page')
  })
})
