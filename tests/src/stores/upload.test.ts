import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { flushPromises } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import type { UploadedImageDto } from '@shared/types/image'
import { setCsrfToken, setUnauthorizedHandler } from '@/api/http'
import { MAX_PARALLEL_UPLOADS, retryCanHelp, useUploadStore, type UploadTarget } from '@/stores/upload'
import { stubXhr, type FakeXhr } from '../fakeXhr'

const TARGET: UploadTarget = {
  projectId: 3,
  fields: { sampleId: 11, technique: 'mfm', pixelSizeNm: 80, notes: '', acquiredAt: null },
}

function file(name: string, bytes = 1000): File {
  return new File([new Uint8Array(bytes)], name)
}

function stored(id: number, name: string, extra: Partial<UploadedImageDto> = {}): UploadedImageDto[] {
  return [{ id, name, sha256: 'ab'.repeat(32), width: 64, height: 64, bitDepth: 16, frameCount: 5, pixelSizeNm: 80, ...extra }]
}

let requests: FakeXhr[]

beforeEach(() => {
  setActivePinia(createPinia())
  requests = stubXhr()
})
afterEach(() => {
  setCsrfToken(null)
  setUnauthorizedHandler(null)
})

describe('useUploadStore', () => {
  it('When files are added, then they wait as queued without a request until the upload starts', () => {
    const upload = useUploadStore()
    upload.addFiles([file('a.tif'), file('b.tif')])
    expect(upload.items.map((i) => i.status)).toEqual(['queued', 'queued'])
    expect(upload.ready).toBe(2)
    expect(requests).toHaveLength(0)
  })

  it('When three files are started, then two go at once (queued → uploading) and the third follows when one is stored', async () => {
    setCsrfToken('csrf-123')
    const upload = useUploadStore()
    upload.addFiles([file('a.tif', 4000), file('b.tif'), file('c.tif')])
    upload.start(TARGET)

    expect(MAX_PARALLEL_UPLOADS).toBe(2)
    expect(requests).toHaveLength(2)
    expect(upload.items.map((i) => i.status)).toEqual(['uploading', 'uploading', 'queued'])
    expect(requests[0]).toMatchObject({ method: 'POST', url: '/api/projects/3/images' })
    expect(requests[0].headers['X-CSRF-Token']).toBe('csrf-123')
    const form = requests[0].body!
    expect((form.get('files') as File).name).toBe('a.tif')
    expect([form.get('sampleId'), form.get('technique'), form.get('pixelSizeNm')]).toEqual(['11', 'mfm', '80'])
    expect(form.has('notes')).toBe(false)

    requests[0].progress(1000, 4000)
    expect(upload.items[0]).toMatchObject({ loaded: 1000, total: 4000 })

    requests[0].respond(201, stored(21, 'a.tif'))
    await flushPromises()
    expect(upload.items[0].status).toBe('stored')
    expect(upload.items[0].result?.id).toBe(21)
    expect(upload.items.map((i) => i.status)).toEqual(['stored', 'uploading', 'uploading'])
    expect(requests).toHaveLength(3)
  })

  it('When the server recognises the bytes, then the file is marked duplicate with the existing image', async () => {
    const upload = useUploadStore()
    upload.addFiles([file('again.tif')])
    upload.start(TARGET)
    requests[0].respond(201, stored(9, 'again.tif', { duplicateOf: 9 }))
    await flushPromises()
    expect(upload.items[0].status).toBe('duplicate')
    expect(upload.items[0].result?.duplicateOf).toBe(9)
  })

  it("When the server rejects a file, then it failed with the server's code and message and the next file goes", async () => {
    const upload = useUploadStore()
    upload.addFiles([file('notes.bmp'), file('b.tif'), file('c.tif')])
    upload.start(TARGET)
    requests[0].respond(415, { error: { code: 'unsupported-type', message: 'notes.bmp: not a PNG, JPEG or TIFF file.', file: 'notes.bmp' } })
    await flushPromises()

    expect(upload.items[0].status).toBe('failed')
    expect(upload.items[0].error).toEqual({ code: 'unsupported-type', message: 'notes.bmp: not a PNG, JPEG or TIFF file.' })
    expect(upload.items[2].status).toBe('uploading')
  })

  it('When the connection drops, then the file failed with a network error', async () => {
    const upload = useUploadStore()
    upload.addFiles([file('a.tif')])
    upload.start(TARGET)
    requests[0].fail()
    await flushPromises()
    expect(upload.items[0]).toMatchObject({ status: 'failed', error: { code: 'network-error' } })
  })

  it('When one file is cancelled, then its request is aborted and the waiting file takes its place', async () => {
    const upload = useUploadStore()
    upload.addFiles([file('a.tif'), file('b.tif'), file('c.tif')])
    upload.start(TARGET)
    upload.cancel(upload.items[0].id)
    await flushPromises()

    expect(requests[0].aborted).toBe(true)
    expect(upload.items.map((i) => i.status)).toEqual(['cancelled', 'uploading', 'uploading'])
    expect(upload.items[0].error).toBeNull()
  })

  it('When everything is cancelled, then both requests are aborted and the waiting file never starts', async () => {
    const upload = useUploadStore()
    upload.addFiles([file('a.tif'), file('b.tif'), file('c.tif')])
    upload.start(TARGET)
    upload.cancelAll()
    await flushPromises()

    expect(upload.items.map((i) => i.status)).toEqual(['cancelled', 'cancelled', 'cancelled'])
    expect(requests).toHaveLength(2)
    expect(requests.every((r) => r.aborted)).toBe(true)
    expect(upload.busy).toBe(false)
  })

  it('When a failed file is retried, then it is queued again and sent with the next start', async () => {
    const upload = useUploadStore()
    upload.addFiles([file('a.tif')])
    upload.start(TARGET)
    requests[0].respond(503, { error: { code: 'storage-unavailable', message: 'The image store is not reachable right now.' } })
    await flushPromises()
    upload.retry(upload.items[0].id)
    expect(upload.items[0]).toMatchObject({ status: 'queued', target: null, error: null })

    upload.start(TARGET)
    expect(requests).toHaveLength(2)
    expect(upload.items[0].status).toBe('uploading')
  })

  it.each([
    { code: 'unsupported-type', helps: false },
    { code: 'corrupt-image', helps: false },
    { code: 'empty-file', helps: false },
    { code: 'image-too-large', helps: false },
    { code: 'too-many-frames', helps: false },
    { code: 'file-too-large', helps: false },
    { code: 'storage-unavailable', helps: true },
    { code: 'network-error', helps: true },
    { code: 'invalid-frames-csv', helps: true },
    { code: 'sample-not-in-project', helps: true },
  ])('When an upload failed with $code, then a retry can help: $helps', ({ code, helps }) => {
    expect(retryCanHelp({ code })).toBe(helps)
  })

  it('When a CSV comes with its stack, then it is attached by name and sent as the frames part', () => {
    const upload = useUploadStore()
    const { unmatchedCsv } = upload.addFiles([file('sweep.tif'), file('other.tif'), file('sweep.csv'), file('loose.csv')])
    expect(upload.items).toHaveLength(2)
    expect(upload.items[0].framesCsv?.name).toBe('sweep.csv')
    expect(upload.items[1].framesCsv).toBeNull()
    expect(unmatchedCsv).toEqual(['loose.csv'])

    upload.start(TARGET)
    expect((requests[0].body!.get('frames') as File).name).toBe('sweep.csv')
    expect(requests[1].body!.has('frames')).toBe(false)
  })

  it('When a CSV with another name comes with a single image, then it is attached to that image', () => {
    const upload = useUploadStore()
    expect(upload.addFiles([file('stack_0042.tif'), file('fields.csv')]).unmatchedCsv).toEqual([])
    expect(upload.items[0].framesCsv?.name).toBe('fields.csv')
  })

  it('When bytes go out, then the overall progress counts every started file', async () => {
    const upload = useUploadStore()
    upload.addFiles([file('a.tif', 3000), file('b.tif', 1000)])
    upload.start(TARGET)
    requests[0].progress(1500, 3000)
    requests[1].respond(201, stored(2, 'b.tif'))
    await flushPromises()
    // (1500 + 1000) of 4000 bytes.
    expect(upload.overall).toEqual({ loaded: 2500, total: 4000, percent: 63 })
  })
})
