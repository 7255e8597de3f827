/**
 * Image ingest against the real PostgreSQL and s3rver: good uploads, duplicates, every bad input, and isolation
 * between labs. After each refused upload: the documented 4xx, no rows, no objects, and the server still healthy.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { deflateSync } from 'node:zlib'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { Frame, Image } from '../../server/models'
import { frameObjectKey } from '../../server/services/imageService'
import type { GrayImage } from '../../shared/analysis/types'
import { breakPage } from './damagedTiff'

function ramp(width: number, height: number, offset = 0): GrayImage {
  const data = new Uint16Array(width * height)
  for (let i = 0; i < data.length; i++) data[i] = (i * 7 + offset * 131) % 65536
  return { width, height, data }
}

/** A PNG whose header declares width × height but whose data is tiny (a decompression bomb). */
function pngDeclaring(width: number, height: number): Buffer {
  const crcTable = Array.from({ length: 256 }, (_, n) => {
    let c = n
    for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1
    return c >>> 0
  })
  const crc = (buf: Buffer) => {
    let c = 0xffffffff
    for (const b of buf) c = crcTable[(c ^ b) & 0xff] ^ (c >>> 8)
    return (c ^ 0xffffffff) >>> 0
  }
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4)
    len.writeUInt32BE(data.length)
    const body = Buffer.concat([Buffer.from(type, 'ascii'), data])
    const sum = Buffer.alloc(4)
    sum.writeUInt32BE(crc(body))
    return Buffer.concat([len, body, sum])
  }
  const ihdr = Buffer.alloc(13)
  ihdr.writeUInt32BE(width, 0)
  ihdr.writeUInt32BE(height, 4)
  ihdr[8] = 8 // bit depth
  ihdr[9] = 0 // greyscale
  return Buffer.concat([Buffer.from([137, 80, 78, 71, 13, 10, 26, 10]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(Buffer.alloc(1000))), chunk('IEND', Buffer.alloc(0))])
}

describe('images', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let other: Awaited<ReturnType<typeof createLabWithRoles>>
  let microscopist: Awaited<ReturnType<typeof signIn>>

  const objectCount = async () => (await ctx.deps.store.list()).length
  const state = async () => ({ images: await Image.count(), frames: await Frame.count(), objects: await objectCount() })

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Ingest')
    other = await createLabWithRoles('Elsewhere')
    microscopist = await signIn(ctx.app, home.people.microscopist.email)
  })
  afterAll(() => ctx.stop())

  const upload = (files: { name: string; body: Buffer }[], fields: Record<string, string> = {}, csv?: { name: string; body: string }) => {
    let req = microscopist.agent.post(`/api/projects/${home.project.id}/images`).set('x-csrf-token', microscopist.csrf)
    for (const [k, v] of Object.entries(fields)) req = req.field(k, v)
    for (const f of files) req = req.attach('files', f.body, f.name)
    if (csv) req = req.attach('frames', Buffer.from(csv.body), csv.name)
    return req
  }

  describe('POST /api/projects/:projectId/images', () => {
    it('When a single 16-bit TIFF is uploaded, then 201 with its header values, the original unchanged in the store and preview/thumbnail served', async () => {
      const tiff = Buffer.from(encodeTiff([ramp(64, 48)], { pixelSizeNm: 250 }))
      const res = await upload([{ name: 'single.tif', body: tiff }], { technique: 'kerr-polar' })
      expect(res.status).toBe(201)
      expect(res.body).toHaveLength(1)
      const [img] = res.body
      expect(img).toMatchObject({ name: 'single.tif', width: 64, height: 48, bitDepth: 16, frameCount: 1 })
      expect(img.pixelSizeNm).toBeCloseTo(250, 6)
      const { createHash } = await import('node:crypto')
      expect(img.sha256).toBe(createHash('sha256').update(tiff).digest('hex'))
      const row = await Image.findByPk(img.id)
      expect(Buffer.compare(await ctx.deps.store.get(row!.objectKey), tiff)).toBe(0)
      const preview = await microscopist.agent.get(`/api/images/${img.id}/frames/0/preview.png`)
      expect(preview.status).toBe(200)
      expect(preview.headers['content-type']).toBe('image/png')
      expect(preview.headers['cache-control']).toContain('private')
      expect(preview.body.subarray(1, 4).toString()).toBe('PNG')
      const pixels = await microscopist.agent.get(`/api/images/${img.id}/frames/0/pixels.bin`).buffer(true).parse((r, cb) => {
        const chunks: Buffer[] = []
        r.on('data', (c: Buffer) => chunks.push(c))
        r.on('end', () => cb(null, Buffer.concat(chunks)))
      })
      const values = new Uint16Array(new Uint8Array(pixels.body as Buffer).buffer.slice(0))
      expect(Array.from(values.subarray(0, 4))).toEqual([0, 7, 14, 21])
    })

    it('When an image is uploaded, then its summary and detail name the uploader', async () => {
      const res = await upload([{ name: 'mine.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 61)])) }])
      const id = res.body[0].id
      const detail = await microscopist.agent.get(`/api/images/${id}`)
      expect(detail.body.uploadedById).toBe(home.people.microscopist.id)
      const list = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&search=mine.tif`)
      expect(list.body.items.map((i: { id: number; uploadedById: number }) => [i.id, i.uploadedById])).toEqual([[id, home.people.microscopist.id]])
    })

    it('When a field sweep starts saturated, then the frame with domains stands for it in the list and the detail', async () => {
      // Saturated frames are smooth ramps (uneven illumination); the middle frame has stripe domains on the same ramp.
      const size = 64
      const saturated = (offset: number): GrayImage => ({ width: size, height: size, data: Uint16Array.from({ length: size * size }, (_, i) => 9000 + offset + 30 * (i % size) + 20 * Math.floor(i / size)) })
      const striped = saturated(0)
      striped.data = striped.data.map((v, i) => v + (Math.floor((i % size) / 6) % 2 === 0 ? 0 : 2500))
      const res = await upload([{ name: 'cover-sweep.tif', body: Buffer.from(encodeTiff([saturated(0), saturated(5), striped, saturated(9)])) }])
      expect(res.status, JSON.stringify(res.body)).toBe(201)
      const id = res.body[0].id as number
      const list = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&search=cover-sweep.tif`)
      expect(list.body.items.map((i: { coverFrameIndex: number }) => i.coverFrameIndex)).toEqual([2])
      expect((await microscopist.agent.get(`/api/images/${id}`)).body.coverFrameIndex).toBe(2)
      // A single frame stands for itself.
      const single = await upload([{ name: 'cover-single.tif', body: Buffer.from(encodeTiff([saturated(0)])) }])
      expect((await microscopist.agent.get(`/api/images/${single.body[0].id}`)).body.coverFrameIndex).toBe(0)
    })

    it('When a 41-frame 16-bit stack comes with a fields CSV, then 41 frames with their fields in the stated unit', async () => {
      const frames = Array.from({ length: 41 }, (_, i) => ramp(32, 32, i))
      const fields = Array.from({ length: 41 }, (_, i) => (i <= 20 ? 20 - 2 * i : -20 + 2 * (i - 20)))
      const csv = 'frame,field_mT\n' + fields.map((f, i) => `${i},${f}`).join('\n') + '\n'
      const res = await upload([{ name: 'sweep.tif', body: Buffer.from(encodeTiff(frames)) }], { technique: 'kerr-polar' }, { name: 'sweep.csv', body: csv })
      expect(res.status).toBe(201)
      expect(res.body[0].frameCount).toBe(41)
      const detail = await microscopist.agent.get(`/api/images/${res.body[0].id}`)
      expect(detail.status).toBe(200)
      expect(detail.body.frames).toHaveLength(41)
      expect(detail.body.frames.map((f: { field: number }) => f.field)).toEqual(fields)
      expect(detail.body.frames[0].fieldUnit).toBe('mT')
      const last = await microscopist.agent.get(`/api/images/${res.body[0].id}/frames/40/thumbnail.png`)
      expect(last.status).toBe(200)
    })

    it('When a 6 MB stack of 12 frames of 512 × 512 is uploaded, then the original comes back byte for byte (stored in parts) and every frame keeps its pixels', async () => {
      const frames = Array.from({ length: 12 }, (_, i) => ramp(512, 512, i))
      const tiff = Buffer.from(encodeTiff(frames))
      // Constructed: above lib-storage's 5 MiB part size, so the original goes to the store as a multipart upload.
      expect(tiff.byteLength).toBeGreaterThan(5 * 1024 * 1024)
      const res = await upload([{ name: 'large-stack.tif', body: tiff }])
      expect(res.status).toBe(201)
      expect(res.body[0]).toMatchObject({ width: 512, height: 512, bitDepth: 16, frameCount: 12 })
      const row = await Image.findByPk(res.body[0].id)
      expect(Buffer.compare(await ctx.deps.store.get(row!.objectKey), tiff)).toBe(0)
      expect(await Frame.count({ where: { imageId: row!.id } })).toBe(12)
      expect(await ctx.deps.store.list(row!.objectKey.replace(/original\.tif$/, ''))).toHaveLength(1 + 12 * 3)
      for (const index of [0, 11]) {
        const pixels = await ctx.deps.store.get(frameObjectKey(row!, index, 'pixels.bin'))
        expect(new Uint16Array(pixels.buffer.slice(pixels.byteOffset, pixels.byteOffset + pixels.byteLength))).toEqual(frames[index].data)
      }
    })

    it('When the same bytes are uploaded again to the project, then it says so and links the existing image without a new row', async () => {
      const tiff = Buffer.from(encodeTiff([ramp(16, 16, 99)]))
      const first = await upload([{ name: 'a.tif', body: tiff }])
      const before = await state()
      const second = await upload([{ name: 'a-copy.tif', body: tiff }])
      expect(second.status).toBe(201)
      expect(second.body[0].duplicateOf).toBe(first.body[0].id)
      expect(await state()).toEqual(before)
    })

    const badInputs: { name: string; body: () => Buffer; status: number; code: string; csv?: string }[] = [
      { name: 'zero bytes', body: () => Buffer.alloc(0), status: 400, code: 'empty-file' },
      { name: 'text renamed .tif', body: () => Buffer.from('frame,field_mT\n0,1\n'), status: 415, code: 'unsupported-type' },
      { name: 'truncated PNG', body: () => pngDeclaring(32, 32).subarray(0, 40), status: 400, code: 'corrupt-image' },
      {
        name: 'corrupted TIFF',
        body: () => {
          const b = Buffer.from(encodeTiff([ramp(32, 32)]))
          b.writeUInt32LE(0x7ffffff0, 4) // first IFD offset far past the end
          return b
        },
        status: 400,
        code: 'corrupt-image',
      },
      { name: 'decompression bomb (PNG declaring 50,000 × 50,000)', body: () => pngDeclaring(50_000, 50_000), status: 413, code: 'image-too-large' },
      { name: 'stack with a CSV that does not match its frames', body: () => Buffer.from(encodeTiff([ramp(8, 8), ramp(8, 8, 1)])), status: 400, code: 'invalid-frames-csv', csv: 'frame,field_mT\n0,1\n1,2\n2,3\n' },
    ]
    for (const bad of badInputs) {
      it(`When the upload is a ${bad.name}, then ${bad.status} ${bad.code}, nothing stored, server healthy`, async () => {
        const before = await state()
        const res = await upload([{ name: `bad-${bad.code}.tif`, body: bad.body() }], {}, bad.csv ? { name: 'frames.csv', body: bad.csv } : undefined)
        expect(res.status).toBe(bad.status)
        expect(res.body.error.code).toBe(bad.code)
        expect(res.body.error.message).toMatch(/\S{3,}/)
        if (!bad.csv) expect(res.body.error.file).toBe(`bad-${bad.code}.tif`)
        expect(await state()).toEqual(before)
        expect((await request(ctx.app).get('/api/health')).status).toBe(200)
      })
    }

    it('When frame 3 of a 6-frame stack cannot be decoded, then 400 corrupt-image naming the file, and no row and no object are left', async () => {
      // The directories are intact, so the upload passes its checks and fails while frames render in parallel.
      const stack = breakPage(encodeTiff(Array.from({ length: 6 }, (_, k) => ramp(64, 64, 200 + k))), 3)
      const before = await state()
      const res = await upload([{ name: 'damaged-page.tif', body: Buffer.from(stack) }])
      expect(res.status).toBe(400)
      expect(res.body.error).toMatchObject({ code: 'corrupt-image', file: 'damaged-page.tif' })
      expect(res.body.error.message).toContain('damaged-page.tif')
      expect(await state()).toEqual(before)
      expect((await request(ctx.app).get('/api/health')).status).toBe(200)
    })

    it('When the file exceeds the size limit, then 413 file-too-large and nothing stored', async () => {
      const small = startTestApp({ maxUploadBytes: 4096 })
      try {
        const session = await signIn(small.app, home.people.microscopist.email)
        const before = await state()
        const big = Buffer.alloc(10_000)
        big.set([0x49, 0x49, 42, 0])
        const res = await session.agent.post(`/api/projects/${home.project.id}/images`).set('x-csrf-token', session.csrf).attach('files', big, 'huge.tif')
        expect(res.status).toBe(413)
        expect(res.body.error.code).toBe('file-too-large')
        expect(await state()).toEqual(before)
      } finally {
        await small.stop()
      }
    })

    it('When the object store is unreachable, then a clean 503-class error, no row and nothing half-written', async () => {
      const broken = startTestApp({ s3: { ...ctx.deps.config.s3, endpoint: 'http://127.0.0.1:9' } })
      try {
        const session = await signIn(broken.app, home.people.microscopist.email)
        const before = { images: await Image.count(), frames: await Frame.count() }
        const res = await session.agent
          .post(`/api/projects/${home.project.id}/images`)
          .set('x-csrf-token', session.csrf)
          .attach('files', Buffer.from(encodeTiff([ramp(16, 16, 5)])), 'offline.tif')
        expect(res.status).toBe(503)
        expect(res.body.error.code).toBe('storage-unavailable')
        expect({ images: await Image.count(), frames: await Frame.count() }).toEqual(before)
      } finally {
        await broken.stop()
      }
    })

    it('When an annotator uploads, then 403 and nothing stored', async () => {
      const annotator = await signIn(ctx.app, home.people.annotator.email)
      const res = await annotator.agent
        .post(`/api/projects/${home.project.id}/images`)
        .set('x-csrf-token', annotator.csrf)
        .attach('files', Buffer.from(encodeTiff([ramp(8, 8, 3)])), 'x.tif')
      expect(res.status).toBe(403)
    })
  })

  describe('other labs', () => {
    it('When a member of another lab asks for the image or its previews, then 404', async () => {
      const res = await upload([{ name: 'private.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 42)])) }])
      const id = res.body[0].id
      const outsider = await signIn(ctx.app, other.people.admin.email)
      expect((await outsider.agent.get(`/api/images/${id}`)).status).toBe(404)
      expect((await outsider.agent.get(`/api/images/${id}/frames/0/preview.png`)).status).toBe(404)
      expect((await outsider.agent.get(`/api/images/${id}/frames/0/thumbnail.png`)).status).toBe(404)
      const list = await outsider.agent.get('/api/images')
      expect(list.body.items.map((i: { id: number }) => i.id)).not.toContain(id)
    })
  })

  describe('GET /api/images', () => {
    it('When paginated and sorted by name, then pages are consistent and totals right', async () => {
      const page1 = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&pageSize=2&page=1&sort=name&order=asc`)
      const page2 = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&pageSize=2&page=2&sort=name&order=asc`)
      expect(page1.status).toBe(200)
      expect(page1.body.total).toBe(await Image.count({ where: { projectId: home.project.id } }))
      const names = [...page1.body.items, ...page2.body.items].map((i: { name: string }) => i.name)
      expect(names).toEqual([...names].sort())
    })

    it('When walked page by page in every sort order, then the pages join into the same order the rows sort to, and a page past the end keeps the total', async () => {
      // Reference: the same rows sorted by the model (Sequelize), independent of the list's hand-written SQL.
      const rows = await Image.findAll({ where: { projectId: home.project.id, deletedAt: null } })
      const keys: Record<string, (i: Image) => string | number> = { name: (i) => i.name, createdAt: (i) => i.createdAt.getTime(), frameCount: (i) => i.frameCount, technique: (i) => i.technique }
      for (const [sort, key] of Object.entries(keys)) {
        for (const order of ['asc', 'desc'] as const) {
          const sign = order === 'asc' ? 1 : -1
          const expected = [...rows].sort((a, b) => (key(a) < key(b) ? -sign : key(a) > key(b) ? sign : a.id - b.id)).map((i) => i.id)
          const walked: number[] = []
          for (let page = 1; walked.length < expected.length && page <= expected.length; page++) {
            const res = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&pageSize=3&page=${page}&sort=${sort}&order=${order}`)
            expect(res.status).toBe(200)
            expect(res.body.total).toBe(expected.length)
            walked.push(...res.body.items.map((i: { id: number }) => i.id))
          }
          expect(walked, `${sort} ${order}`).toEqual(expected)
        }
      }
      const past = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&pageSize=3&page=999`)
      expect(past.body).toMatchObject({ items: [], total: rows.length, page: 999 })
    })

    it('When filtered by technique, status, date or a search with wildcard characters, then only matching images are listed', async () => {
      const res = await upload([{ name: 'odd_100%.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 91), ramp(8, 8, 92)])) }])
      const id = res.body[0].id
      await microscopist.agent.patch(`/api/images/${id}`).set('x-csrf-token', microscopist.csrf).send({ technique: 'mfm' })
      const ids = async (query: string) => (await microscopist.agent.get(`/api/images?projectId=${home.project.id}&pageSize=200&${query}`)).body.items.map((i: { id: number }) => i.id)
      // '%' and '_' are literal characters of the search, not SQL wildcards.
      expect(await ids('search=_100%25')).toEqual([id])
      expect(await ids('search=odd%25')).toEqual([])
      const mfm = await ids('technique=mfm')
      expect(mfm).toContain(id)
      expect(mfm).toEqual((await Image.findAll({ where: { projectId: home.project.id, technique: 'mfm', deletedAt: null } })).map((i) => i.id).filter((i) => mfm.includes(i)))
      // The status filter follows the state the list shows: one of two frames submitted is "in progress", not "submitted".
      await Frame.update({ annotationStatus: 'submitted' }, { where: { imageId: id, index: 0 } })
      expect(await ids('status=submitted')).not.toContain(id)
      expect(await ids('status=in-progress')).toContain(id)
      expect(await ids('status=new')).not.toContain(id)
      const created = (await Image.findByPk(id))!.createdAt
      expect(await ids(`from=${new Date(created.getTime() + 60_000).toISOString()}`)).not.toContain(id)
      expect(await ids(`from=${new Date(created.getTime() - 60_000).toISOString()}&to=${new Date(created.getTime() + 60_000).toISOString()}`)).toContain(id)
    })

    it('When frames are annotated, then the list shows each image as new, in progress or submitted, as its detail does', async () => {
      // The list computes the state in SQL, the detail from the frame rows: both must follow the same rule.
      const res = await upload([{ name: 'states.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 71), ramp(8, 8, 72), ramp(8, 8, 73)])) }])
      const id = res.body[0].id
      const shown = async () => {
        const list = await microscopist.agent.get(`/api/images?projectId=${home.project.id}&search=states.tif`)
        const detail = await microscopist.agent.get(`/api/images/${id}`)
        expect(list.body.items).toHaveLength(1)
        expect(list.body.items[0].annotationStatus).toBe(detail.body.annotationStatus)
        return list.body.items[0].annotationStatus
      }
      expect(await shown()).toBe('new')
      await Frame.update({ annotationStatus: 'submitted' }, { where: { imageId: id, index: 0 } })
      expect(await shown()).toBe('in-progress')
      await Frame.update({ annotationStatus: 'submitted' }, { where: { imageId: id } })
      expect(await shown()).toBe('submitted')
      await Frame.update({ annotationStatus: 'in-progress' }, { where: { imageId: id, index: 2 } })
      expect(await shown()).toBe('in-progress')
    })
  })

  describe('GET /api/projects', () => {
    it('When images are uploaded and one is deleted, then the project lists its live images and samples by count', async () => {
      const { Sample } = await import('../../server/models')
      const res = await upload([{ name: 'counted.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 95)])) }])
      const counts = async () => (await microscopist.agent.get('/api/projects')).body.find((p: { id: number }) => p.id === home.project.id)
      const expected = async () => ({ imageCount: await Image.count({ where: { projectId: home.project.id, deletedAt: null } }), sampleCount: await Sample.count({ where: { projectId: home.project.id } }) })
      const before = await counts()
      expect(before).toMatchObject(await expected())
      expect(before.imageCount).toBeGreaterThan(0)
      await Image.update({ deletedAt: new Date() }, { where: { id: res.body[0].id } })
      expect(await counts()).toMatchObject({ ...(await expected()), imageCount: before.imageCount - 1 })
    })
  })

  describe('GET /api/projects/:projectId/samples', () => {
    it('When images are uploaded into one of two samples and one of them is deleted, then each sample lists the number of its live images', async () => {
      const { Sample } = await import('../../server/models')
      const filled = await Sample.create({ projectId: home.project.id, name: 'Counted A300' })
      const empty = await Sample.create({ projectId: home.project.id, name: 'Counted A350' })
      const ids: number[] = []
      for (const offset of [101, 102]) {
        const res = await upload([{ name: `sample-${offset}.tif`, body: Buffer.from(encodeTiff([ramp(8, 8, offset)])) }], { sampleId: String(filled.id) })
        expect(res.status, JSON.stringify(res.body)).toBe(201)
        ids.push(res.body[0].id)
      }
      // One image of the project without a sample: counted by neither.
      expect((await upload([{ name: 'no-sample.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 103)])) }])).status).toBe(201)
      const counts = async () => {
        const res = await microscopist.agent.get(`/api/projects/${home.project.id}/samples`)
        expect(res.status).toBe(200)
        const byId = new Map((res.body as { id: number; imageCount: number }[]).map((s) => [s.id, s.imageCount]))
        return [byId.get(filled.id), byId.get(empty.id)]
      }
      expect(await counts()).toEqual([2, 0])
      await Image.update({ deletedAt: new Date() }, { where: { id: ids[0] } })
      expect(await counts()).toEqual([1, 0])
    })
  })

  describe('PATCH /api/images/:imageId', () => {
    it('When the pixel size is typed in, then it is stored with its source and the edit is audited', async () => {
      const res = await upload([{ name: 'calib.tif', body: Buffer.from(encodeTiff([ramp(8, 8, 77)])) }])
      const id = res.body[0].id
      const patch = await microscopist.agent.patch(`/api/images/${id}`).set('x-csrf-token', microscopist.csrf).send({ pixelSizeNm: 80 })
      expect(patch.status).toBe(200)
      expect(patch.body.pixelSizeNm).toBe(80)
      expect(patch.body.pixelSizeSource).toBe('typed')
      const { AuditEvent } = await import('../../server/models')
      const audit = await AuditEvent.findOne({ where: { entityType: 'image', entityId: id, action: 'image.update' } })
      expect(audit!.before).toMatchObject({ pixelSizeNm: null })
      expect(audit!.after).toMatchObject({ pixelSizeNm: 80 })
    })
  })
})
