import { beforeEach, describe, expect, it } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { ImageSummaryDto } from '@shared/types/image'
import { imageListSearch } from '@/api/images'
import { DEFAULT_IMAGE_QUERY, useImagesStore } from '@/stores/images'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'

function summary(id: number, name: string): ImageSummaryDto {
  return {
    id,
    name,
    sha256: 'cd'.repeat(32),
    width: 512,
    height: 512,
    bitDepth: 16,
    frameCount: 1,
    coverFrameIndex: 0,
    pixelSizeNm: 120,
    projectId: 3,
    sampleId: null,
    uploadedById: 7,
    technique: 'kerr-polar',
    createdAt: '2026-03-02T10:00:00.000Z',
    acquiredAt: null,
    annotationStatus: 'new',
    approvedFrameCount: 0,
  }
}

function page(items: ImageSummaryDto[], total = items.length) {
  return jsonResponse(200, { items, total, page: 1, pageSize: 25 })
}

/** The path and query of each list request, as the server receives them. */
function listUrls(requests: RecordedRequest[]): string[] {
  return requests.filter((r) => r.url.startsWith('/api/images?')).map((r) => r.url)
}

beforeEach(() => setActivePinia(createPinia()))
describe('useImagesStore list', () => {
  it('When nothing is filtered, then only paging and sorting go to the server', async () => {
    const requests = stubFetch({ 'GET /api/images': () => page([summary(1, 'a.tif')], 40) })
    const images = useImagesStore()
    await images.fetchImages()
    expect(listUrls(requests)).toEqual(['/api/images?page=1&pageSize=25&sort=createdAt&order=desc'])
    expect(images.status).toBe('ready')
    expect(images.total).toBe(40)
  })

  it('When filters are set, then each becomes a query parameter (trimmed search, ISO dates) and paging restarts', async () => {
    const requests = stubFetch({ 'GET /api/images': () => page([]) })
    const images = useImagesStore()
    await images.setPage(3)
    await images.setFilters({
      projectId: 3,
      sampleId: 11,
      technique: 'mfm',
      status: 'in-progress',
      from: '2026-03-01T00:00:00.000Z',
      to: '2026-03-31T23:59:59.999Z',
      search: '  KB24 anneal ',
    })
    expect(listUrls(requests)[1]).toBe(
      '/api/images?projectId=3&sampleId=11&technique=mfm&status=in-progress&from=2026-03-01T00%3A00%3A00.000Z' +
        '&to=2026-03-31T23%3A59%3A59.999Z&search=KB24+anneal&page=1&pageSize=25&sort=createdAt&order=desc',
    )
  })

  it('When the page, page size or sort change, then the filters stay and a new sort or size starts at page 1', async () => {
    const requests = stubFetch({ 'GET /api/images': () => page([]) })
    const images = useImagesStore()
    await images.setFilters({ technique: 'kerr-longitudinal' })
    await images.setPage(2)
    await images.setPage(2, 100)
    await images.setSort('frameCount', 'asc')
    const queries = listUrls(requests).map((url) => Object.fromEntries(new URLSearchParams(url.split('?')[1])))
    expect(queries.slice(1)).toEqual([
      { technique: 'kerr-longitudinal', page: '2', pageSize: '25', sort: 'createdAt', order: 'desc' },
      { technique: 'kerr-longitudinal', page: '1', pageSize: '100', sort: 'createdAt', order: 'desc' },
      { technique: 'kerr-longitudinal', page: '1', pageSize: '100', sort: 'frameCount', order: 'asc' },
    ])
  })

  it('When filters are cleared, then "any" filters are left out again', () => {
    expect(imageListSearch({ ...DEFAULT_IMAGE_QUERY, projectId: null, search: '   ', technique: null })).toBe(
      'page=1&pageSize=25&sort=createdAt&order=desc',
    )
  })

  it('When an older answer arrives after a newer one, then the newer list stays', async () => {
    let resolveSlow: (response: Response) => void = () => undefined
    stubFetch({
      'GET /api/images': (request) =>
        request.url.includes('search=old') ? new Promise<Response>((resolve) => (resolveSlow = resolve)) : page([summary(2, 'new.tif')]),
    })
    const images = useImagesStore()
    const slow = images.setFilters({ search: 'old' })
    await images.setFilters({ search: 'new' })
    resolveSlow(page([summary(1, 'old.tif')]))
    await slow
    expect(images.items.map((i) => i.name)).toEqual(['new.tif'])
  })

  it('When the server fails, then the list is in error with the ApiError for a Retry', async () => {
    stubFetch({ 'GET /api/images': () => errorResponse(503, 'database-unavailable', 'The database is not reachable.') })
    const images = useImagesStore()
    await images.fetchImages()
    expect(images.status).toBe('error')
    expect(images.error).toMatchObject({ status: 503, code: 'database-unavailable' })
  })
})

describe('useImagesStore edits', () => {
  it('When images are assigned, then the ids and assignee are posted and the list reloads', async () => {
    const requests = stubFetch({
      'POST /api/images/assign': () => jsonResponse(200, { updatedImages: 2 }),
      'GET /api/images': () => page([summary(1, 'a.tif'), summary(2, 'b.tif')]),
    })
    const images = useImagesStore()
    await expect(images.assign([1, 2], 7)).resolves.toBe(2)
    expect(requests.map((r) => `${r.method} ${r.url.split('?')[0]}`)).toEqual(['POST /api/images/assign', 'GET /api/images'])
    expect(requests[0].body).toEqual({ imageIds: [1, 2], assigneeId: 7 })
  })

  it('When metadata is saved, then only the patch is sent and the detail and list row take the answer', async () => {
    const detail = { ...summary(1, 'renamed.tif'), notes: '', pixelSizeSource: 'scale-bar', mediaType: 'image/tiff', byteSize: 10, sample: null, frames: [] }
    const requests = stubFetch({
      'GET /api/images': () => page([summary(1, 'a.tif')]),
      'PATCH /api/images/1': () => jsonResponse(200, detail),
    })
    const images = useImagesStore()
    await images.fetchImages()
    await images.saveMetadata(1, { name: 'renamed.tif', pixelSizeNm: 120, pixelSizeSource: 'scale-bar' })
    expect(requests[1].body).toEqual({ name: 'renamed.tif', pixelSizeNm: 120, pixelSizeSource: 'scale-bar' })
    expect(images.detailOf(1).item?.name).toBe('renamed.tif')
    expect(images.items[0].name).toBe('renamed.tif')
  })
})
