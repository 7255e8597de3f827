import { afterEach, describe, expect, it, vi } from 'vitest'
import { ApiError, http, setCsrfToken, setUnauthorizedHandler } from '@/api/http'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'

afterEach(() => {
  setCsrfToken(null)
  setUnauthorizedHandler(null)
})

describe('http', () => {
  it('When the server answers 2xx JSON, then the parsed body is returned from /api', async () => {
    const requests = stubFetch({ 'GET /api/labs': () => jsonResponse(200, [{ id: 1, name: 'Lab', institution: 'X' }]) })
    await expect(http.get('/labs')).resolves.toEqual([{ id: 1, name: 'Lab', institution: 'X' }])
    expect(requests[0].url).toBe('/api/labs')
  })

  it('When the server answers with an error body, then an ApiError carries its code, message, status and fields', async () => {
    stubFetch({
      'POST /api/projects/3/samples': () =>
        errorResponse(400, 'invalid-input', 'Invalid body — name: Too small', { name: ['Too small'] }),
    })
    const error = await http.post('/projects/3/samples', { name: '' }).catch((e: unknown) => e)
    expect(error).toBeInstanceOf(ApiError)
    expect(error).toMatchObject({
      status: 400,
      code: 'invalid-input',
      message: 'Invalid body — name: Too small',
      fields: { name: ['Too small'] },
    })
  })

  it('When the error body is not ours (a proxy page), then the ApiError names the HTTP status', async () => {
    stubFetch({ 'GET /api/projects': () => new Response('<html>Bad gateway</html>', { status: 502 }) })
    await expect(http.get('/projects')).rejects.toMatchObject({ status: 502, code: 'http-502' })
  })

  it('When the network fails, then an ApiError with status 0 says the server could not be reached', async () => {
    vi.stubGlobal('fetch', vi.fn().mockRejectedValue(new TypeError('Failed to fetch')))
    await expect(http.get('/projects')).rejects.toMatchObject({ status: 0, code: 'network-error' })
  })

  it('When a token is set, then POST, PATCH and DELETE send X-CSRF-Token and GET does not', async () => {
    const requests = stubFetch({
      'GET /api/projects': () => jsonResponse(200, []),
      'POST /api/projects': () => jsonResponse(201, { id: 1 }),
      'PATCH /api/samples/4': () => jsonResponse(200, { id: 4 }),
      'DELETE /api/samples/4': () => jsonResponse(204),
    })
    setCsrfToken('token-123')
    await http.get('/projects')
    await http.post('/projects', { labId: 1, name: 'P' })
    await http.patch('/samples/4', { notes: 'x' })
    await expect(http.delete('/samples/4')).resolves.toBeUndefined()

    expect(requests.map((r) => [r.method, r.headers.get('X-CSRF-Token')])).toEqual([
      ['GET', null],
      ['POST', 'token-123'],
      ['PATCH', 'token-123'],
      ['DELETE', 'token-123'],
    ])
    expect(requests[1].headers.get('Content-Type')).toBe('application/json')
    expect(requests[1].body).toEqual({ labId: 1, name: 'P' })
  })

  it('When the session has expired (401), then the unauthorized handler runs once and the call still rejects', async () => {
    stubFetch({ 'GET /api/projects': () => errorResponse(401, 'not-signed-in', 'Please sign in.') })
    const onUnauthorized = vi.fn()
    setUnauthorizedHandler(onUnauthorized)
    await expect(http.get('/projects')).rejects.toMatchObject({ status: 401, code: 'not-signed-in' })
    expect(onUnauthorized).toHaveBeenCalledTimes(1)
  })

  it('When a 401 is expected (wrong password at sign-in), then the handler is not called', async () => {
    stubFetch({ 'POST /api/auth/login': () => errorResponse(401, 'bad-credentials', 'E-mail or password is wrong.') })
    const onUnauthorized = vi.fn()
    setUnauthorizedHandler(onUnauthorized)
    await expect(http.post('/auth/login', {}, { expectUnauthorized: true })).rejects.toMatchObject({ status: 401 })
    expect(onUnauthorized).not.toHaveBeenCalled()
  })

  it('When a status is accepted (503 from /health), then its body is returned instead of thrown', async () => {
    const report = { ok: false, db: 'down', storage: 'up', mail: 'up' }
    stubFetch({ 'GET /api/health': () => jsonResponse(503, report) })
    await expect(http.get('/health', { acceptStatuses: [503] })).resolves.toEqual(report)
  })
})
