/**
 * Request limits against the real app (PostgreSQL, s3rver): oversized and deeply nested JSON, long URLs, many query
 * parameters, deep pagination, malformed percent-encoding, fuzzed query strings, and multipart uploads that are
 * malformed or over the limits. Each refusal is the documented 4xx with a clear code and message, leaves no rows and
 * no objects behind, and the server still answers GET /api/health with 200.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import request from 'supertest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { Frame, Image } from '../../server/models'
import { MAX_JSON_DEPTH, MAX_QUERY_PARAMETERS, MAX_URL_LENGTH, jsonNestingDepth } from '../../server/http/requestLimits'

function nested(depth: number, innermost: unknown = 1): unknown {
  let value = innermost
  for (let i = 0; i < depth; i++) value = { a: value }
  return value
}

describe('request limits', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let microscopist: Awaited<ReturnType<typeof signIn>>

  const state = async () => ({ images: await Image.count(), frames: await Frame.count(), objects: (await ctx.deps.store.list()).length })
  const expectHealthy = async () => expect((await request(ctx.app).get('/api/health')).status).toBe(200)
  const expectRefusal = (res: request.Response, status: number, code: string) => {
    expect({ status: res.status, code: res.body?.error?.code }).toEqual({ status, code })
    expect(res.body.error.message).toMatch(/\S{3,}/)
  }
  const post = (path: string) => microscopist.agent.post(path).set('x-csrf-token', microscopist.csrf)

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Limits')
    microscopist = await signIn(ctx.app, home.people.microscopist.email)
  })
  afterAll(() => ctx.stop())

  describe('JSON bodies', () => {
    it('When a JSON body is larger than 2 MB, then 413 body-too-large and the server stays healthy', async () => {
      const res = await post('/api/images/assign').send({ imageIds: [1], assigneeId: null, padding: 'x'.repeat(3 * 1024 * 1024) })
      expectRefusal(res, 413, 'body-too-large')
      await expectHealthy()
    })

    it('When a JSON body nests 10,000 levels inside a free-form recipe, then 400 json-too-deep at once', async () => {
      // Without the limit this recipe reaches the route (z.record of unknown values), and JSON.stringify of it throws
      // RangeError when it is stored.
      const depth = 10_000
      const body = `{"recipe":${'{"a":'.repeat(depth)}1${'}'.repeat(depth)}}`
      const started = performance.now()
      const res = await post('/api/images/1/stack-runs').set('Content-Type', 'application/json').send(body)
      expectRefusal(res, 400, 'json-too-deep')
      expect(res.body.error.message).toContain(String(MAX_JSON_DEPTH))
      expect(performance.now() - started).toBeLessThan(2000)
      await expectHealthy()
    })

    it('When a 2 MB body is almost all opening brackets (a million levels), then 400 json-too-deep before it is parsed', async () => {
      const depth = 1_000_000
      const timed = async (body: string) => {
        const started = performance.now()
        const res = await post('/api/images/2147483647/stack-runs').set('Content-Type', 'application/json').send(body)
        return { res, ms: performance.now() - started }
      }
      // The same size without nesting (one long string) parses in a few milliseconds: the time of sending 2 MB.
      const flat = await timed(`{"recipe":{"note":"${'x'.repeat(2 * depth - 8)}"}}`)
      expectRefusal(flat.res, 404, 'image-not-found')
      const deep = await timed(`{"recipe":${'['.repeat(depth)}${']'.repeat(depth)}}`)
      expectRefusal(deep.res, 400, 'json-too-deep')
      // JSON.parse of the nested body alone takes about a second here; the byte scan stops at level 65.
      expect(deep.ms).toBeLessThan(flat.ms + 600)
      await expectHealthy()
    })

    it('When the body nests exactly the limit, or brackets sit inside strings, then the route answers (not json-too-deep)', async () => {
      // The body itself is one level, the recipe one more: MAX_JSON_DEPTH levels in all.
      const atLimit = await post('/api/images/2147483647/stack-runs').send({ recipe: nested(MAX_JSON_DEPTH - 2) })
      expectRefusal(atLimit, 404, 'image-not-found')
      const inStrings = await post('/api/images/2147483647/stack-runs').send({ recipe: { note: '[{'.repeat(10_000) + '\\"[' } })
      expectRefusal(inStrings, 404, 'image-not-found')
    })

    it('When the body is not JSON, then 400 invalid-json', async () => {
      expectRefusal(await post('/api/images/assign').set('Content-Type', 'application/json').send('{"imageIds": [1,'), 400, 'invalid-json')
    })

    it.each([
      ['{"a":[1,{"b":"]]]"}]}', 3],
      ['["\\\\", ["\\"[[["]]', 2],
      ['{}', 1],
      ['"[[["', 0],
    ])('When the nesting depth of %s is scanned, then it is %i', (text, depth) => {
      expect(jsonNestingDepth(Buffer.from(text), 100)).toBe(depth)
    })
  })

  describe('URLs and query strings', () => {
    it('When the URL is 10 kB long, then 414 uri-too-long naming the limit', async () => {
      const res = await microscopist.agent.get(`/api/images?search=${'a'.repeat(10 * 1024)}`)
      expectRefusal(res, 414, 'uri-too-long')
      expect(res.body.error.message).toContain(MAX_URL_LENGTH.toLocaleString('en'))
      await expectHealthy()
    })

    it('When the query string is 100 kB, then a 4xx (Node refuses request heads over 16 KB itself with 431) and the server stays healthy', async () => {
      const res = await microscopist.agent.get(`/api/images?search=${'a'.repeat(100 * 1024)}`).ok(() => true)
      expect([414, 431]).toContain(res.status)
      await expectHealthy()
    })

    it('When a URL has more query parameters than the limit, then 400 too-many-query-parameters; at the limit it is served', async () => {
      const many = Array.from({ length: MAX_QUERY_PARAMETERS + 50 }, (_, i) => `p${i}=1`).join('&')
      expectRefusal(await microscopist.agent.get(`/api/images?${many}`), 400, 'too-many-query-parameters')
      const enough = Array.from({ length: MAX_QUERY_PARAMETERS }, (_, i) => `p${i}=1`).join('&')
      expect((await microscopist.agent.get(`/api/images?${enough}`)).status).toBe(200)
      await expectHealthy()
    })

    it.each([
      ['page=100000', 'page'],
      ['page=0', 'page'],
      ['page=abc', 'page'],
      ['page=1&page=2', 'page'],
      ['pageSize=201', 'pageSize'],
      ['sort=password', 'sort'],
      ['from=not-a-date', 'from'],
    ])('When GET /api/images?%s, then 400 invalid-input naming %s', async (query, field) => {
      const res = await microscopist.agent.get(`/api/images?${query}`)
      expectRefusal(res, 400, 'invalid-input')
      expect(res.body.error.message).toContain(field)
    })

    it('When a path segment holds a broken percent-escape, then 400 malformed-url (the router\u2019s URIError used to become a 500)', async () => {
      expectRefusal(await microscopist.agent.get('/api/projects/%E0%A4%A/samples'), 400, 'malformed-url')
      expectRefusal(await microscopist.agent.get('/api/images/%'), 400, 'malformed-url')
      await expectHealthy()
    })
  })

  describe('fuzzed query strings', () => {
    /** Keys the routes read, keys that trip naive parsers, and random ones. */
    const keyArb = fc.oneof(
      fc.constantFrom('projectId', 'sampleId', 'technique', 'status', 'from', 'to', 'search', 'page', 'pageSize', 'sort', 'order'),
      fc.constantFrom('__proto__', 'constructor', 'page[]', 'page[0]', 'sort[$ne]', '', '%', '%zz', '%E0%A4%A', '..'),
      fc.string({ maxLength: 12 }).map(encodeURIComponent),
    )
    const valueArb = fc.oneof(
      fc.constantFrom('1', '0', '-1', '25', '10000', '10001', '1e309', 'NaN', 'Infinity', '0x10', '1.5', '', '%', '%00', '%E0%A4%A'),
      fc.constantFrom('kerr-polar', 'new', 'submitted', 'name', 'asc', 'desc', '2024-02-30', '2024-01-01T00:00:00Z', '9'.repeat(400)),
      fc.string({ maxLength: 40 }).map(encodeURIComponent),
      fc.string({ unit: 'binary', maxLength: 40 }).map(encodeURIComponent),
    )
    const queryArb = fc
      .array(fc.tuple(keyArb, valueArb, fc.boolean()), { maxLength: 12 })
      .map((pairs) => pairs.map(([k, v, withValue]) => (withValue ? `${k}=${v}` : k)).join('&'))

    it('When GET /api/images gets random query strings, then never a 5xx (only 2xx or 4xx with an error code)', async () => {
      const statuses = new Map<number, number>()
      // Fixed seed so that a failure reproduces exactly.
      await fc.assert(
        fc.asyncProperty(queryArb, async (query) => {
          const res = await microscopist.agent.get(`/api/images?${query}`)
          statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1)
          expect(res.status).toBeLessThan(500)
          if (res.status >= 400) expect(res.body.error.code).toMatch(/^[a-z-]+$/)
        }),
        { seed: 0x5eed_0101, numRuns: 100 },
      )
      // Both accepted and refused queries occur, so the generator reaches the handler and the validation.
      expect(statuses.get(200)).toBeGreaterThan(5)
      expect(statuses.get(400)).toBeGreaterThan(5)
      await expectHealthy()
    })

    it('When GET /api/projects/:projectId/samples gets random ids and query strings, then never a 5xx', async () => {
      const idArb = fc.oneof(
        fc.constant(String(home.project.id)),
        fc.constantFrom('0', '-1', '1e3', '9'.repeat(30), 'abc', '%41', '%', '%E0%A4%A', '%2F', '1.5', '1%20'),
        fc.string({ maxLength: 10 }).map(encodeURIComponent),
      )
      // Fixed seed so that a failure reproduces exactly.
      await fc.assert(
        fc.asyncProperty(idArb.filter((id) => id !== '' && id !== '.' && id !== '..'), queryArb, async (id, query) => {
          const res = await microscopist.agent.get(`/api/projects/${id}/samples?${query}`)
          expect(res.status).toBeLessThan(500)
          if (res.status >= 400) expect(res.body.error.code).toMatch(/^[a-z-]+$/)
        }),
        { seed: 0x5eed_0102, numRuns: 100 },
      )
      await expectHealthy()
    })
  })

  describe('POST /api/projects/:projectId/images multipart edge cases', () => {
    const tinyTiff = () => Buffer.from(encodeTiff([{ width: 4, height: 4, data: new Uint8Array(16).fill(9) }]))
    const uploadPath = () => `/api/projects/${home.project.id}/images`

    const cases: { name: string; send: () => request.Test; status: number; code: string }[] = [
      {
        name: 'a body whose parts use another boundary than the header',
        send: () =>
          post(uploadPath())
            .set('Content-Type', 'multipart/form-data; boundary=declared-boundary')
            .send('--other-boundary\r\nContent-Disposition: form-data; name="files"; filename="a.tif"\r\n\r\nabc\r\n--other-boundary--\r\n'),
        status: 400,
        code: 'invalid-upload',
      },
      {
        name: 'a multipart content type without a boundary',
        send: () => post(uploadPath()).set('Content-Type', 'multipart/form-data').send('--x\r\n\r\n--x--\r\n'),
        status: 400,
        code: 'invalid-upload',
      },
      {
        name: 'a body cut off inside a file part',
        send: () =>
          post(uploadPath())
            .set('Content-Type', 'multipart/form-data; boundary=cut')
            .send('--cut\r\nContent-Disposition: form-data; name="files"; filename="a.tif"\r\nContent-Type: image/tiff\r\n\r\nII*\0partial'),
        status: 400,
        code: 'invalid-upload',
      },
      {
        name: 'a file in an unexpected field ("image" instead of "files")',
        send: () => post(uploadPath()).attach('image', tinyTiff(), 'a.tif'),
        status: 400,
        code: 'too-many-files',
      },
      {
        name: 'sixty files in one request',
        send: () => {
          let req = post(uploadPath())
          for (let i = 0; i < 60; i++) req = req.attach('files', tinyTiff(), `f${i}.tif`)
          return req
        },
        status: 400,
        code: 'too-many-files',
      },
      {
        name: 'an empty multipart body (closing boundary only)',
        send: () => post(uploadPath()).set('Content-Type', 'multipart/form-data; boundary=empty').send('--empty--\r\n'),
        status: 400,
        code: 'no-files',
      },
      {
        name: 'fields but no file',
        send: () => post(uploadPath()).field('technique', 'kerr-polar'),
        status: 400,
        code: 'no-files',
      },
    ]
    for (const c of cases) {
      it(`When the upload is ${c.name}, then ${c.status} ${c.code}, no rows, no objects, server healthy`, async () => {
        const before = await state()
        const res = await c.send()
        expectRefusal(res, c.status, c.code)
        expect(await state()).toEqual(before)
        await expectHealthy()
      })
    }
  })
})
