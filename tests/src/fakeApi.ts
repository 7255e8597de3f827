import { vi } from 'vitest'

export interface RecordedRequest {
  method: string
  url: string
  headers: Headers
  body: unknown
}

type Handler = (request: RecordedRequest) => Response | Promise<Response>

/** A JSON response as the server would send it. */
export function jsonResponse(status: number, body?: unknown): Response {
  return new Response(body === undefined ? null : JSON.stringify(body), {
    status,
    headers: body === undefined ? {} : { 'Content-Type': 'application/json' },
  })
}

/** An error response in the API's shape `{ error: { code, message, fields? } }`. */
export function errorResponse(status: number, code: string, message: string, fields?: Record<string, string[]>): Response {
  return jsonResponse(status, { error: { code, message, ...(fields ? { fields } : {}) } })
}

/**
 * Replace the network (global `fetch`) with handlers keyed by "METHOD /path"; an unknown route answers 404
 * `route-not-found` like the server. Returns the requests made, for assertions on headers and bodies.
 */
export function stubFetch(handlers: Record<string, Handler>): RecordedRequest[] {
  const requests: RecordedRequest[] = []
  vi.stubGlobal(
    'fetch',
    vi.fn(async (input: RequestInfo | URL, init: RequestInit = {}) => {
      const url = String(input)
      const method = (init.method ?? 'GET').toUpperCase()
      const request: RecordedRequest = {
        method,
        url,
        headers: new Headers(init.headers),
        body: typeof init.body === 'string' ? JSON.parse(init.body) : undefined,
      }
      requests.push(request)
      const handler = handlers[`${method} ${new URL(url, 'http://localhost').pathname}`]
      return handler ? handler(request) : errorResponse(404, 'route-not-found', `No API route ${method} ${url}.`)
    }),
  )
  return requests
}
