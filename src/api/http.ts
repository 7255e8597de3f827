/**
 * The client's only `fetch`: base `/api`, JSON in and out, the session cookie, the CSRF header on mutations, and one
 * error type. Resource modules (auth.ts, projects.ts, ...) call `http.get/post/...` and never see a `Response`.
 * The one request sent outside it is the image upload (images.ts), an XMLHttpRequest because `fetch` reports no upload
 * progress; it takes its CSRF header and its errors from here (`csrfHeaders`, `apiErrorFromText`).
 */
import type { ApiErrorBody } from '@shared/types/api'

const BASE = '/api'
const CSRF_HEADER = 'X-CSRF-Token'
const MUTATING = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])

/** A failed API call: the server's stable `code` and human `message`, the HTTP status, and per-field messages. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields: Readonly<Record<string, string[]>> = {},
  ) {
    super(message)
    this.name = 'ApiError'
  }
}

/** True for any error thrown by this module (a type guard for `catch (e: unknown)`). */
export function isApiError(error: unknown): error is ApiError {
  return error instanceof ApiError
}

/** Any thrown value as an `ApiError`, so stores keep one error type (programming errors keep their message). */
export function asApiError(error: unknown): ApiError {
  if (error instanceof ApiError) return error
  return new ApiError(0, 'unexpected', error instanceof Error ? error.message : String(error))
}

let csrfToken: string | null = null
let unauthorizedHandler: (() => void) | null = null

/** The session store sets this after sign-in or restore and clears it at sign-out. */
export function setCsrfToken(token: string | null): void {
  csrfToken = token
}

/**
 * Called once per 401 from a request that expected a live session (the session expired or was ended elsewhere).
 * Registered by main.ts so this module needs neither the router nor the stores.
 */
export function setUnauthorizedHandler(handler: (() => void) | null): void {
  unauthorizedHandler = handler
}

export interface RequestOptions {
  /** JSON body for POST/PUT/PATCH. */
  body?: unknown
  /**
   * Leave a 401 to the caller instead of sending the person to sign-in: sign-in itself (wrong password) and the
   * session probe at start-up, where 401 only means "not signed in yet".
   */
  expectUnauthorized?: boolean
  /** Non-2xx statuses whose JSON body is a normal answer, e.g. 503 from /health carrying the report. */
  acceptStatuses?: readonly number[]
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE'

/** Send one request below /api and return its parsed JSON body (`undefined` for 204). Throws `ApiError`. */
export async function request<T>(method: Method, path: string, options: RequestOptions = {}): Promise<T> {
  const headers: Record<string, string> = { Accept: 'application/json' }
  if (options.body !== undefined) headers['Content-Type'] = 'application/json'
  if (MUTATING.has(method) && csrfToken) headers[CSRF_HEADER] = csrfToken

  let response: Response
  try {
    response = await fetch(BASE + path, {
      method,
      headers,
      credentials: 'same-origin',
      body: options.body === undefined ? undefined : JSON.stringify(options.body),
    })
  } catch {
    throw new ApiError(0, 'network-error', 'The server could not be reached. Check your connection and try again.')
  }

  const body = await readJson(response)
  if (response.ok || options.acceptStatuses?.includes(response.status)) return body as T

  if (response.status === 401 && !options.expectUnauthorized) unauthorizedHandler?.()
  throw toApiError(response.status, body)
}

async function readJson(response: Response): Promise<unknown> {
  if (response.status === 204) return undefined
  return parseJsonText(await response.text())
}

function parseJsonText(text: string): unknown {
  if (!text) return undefined
  try {
    return JSON.parse(text)
  } catch {
    // A proxy or gateway page (HTML) rather than our API: treat it as having no body.
    return undefined
  }
}

function isErrorBody(body: unknown): body is ApiErrorBody {
  const error = (body as ApiErrorBody | undefined)?.error
  return typeof error?.code === 'string' && typeof error.message === 'string'
}

function toApiError(status: number, body: unknown): ApiError {
  if (isErrorBody(body)) return new ApiError(status, body.error.code, body.error.message, body.error.fields ?? {})
  const message =
    status >= 500
      ? `The server is not answering properly (HTTP ${status}). Try again in a moment.`
      : `The request failed (HTTP ${status}).`
  return new ApiError(status, `http-${status}`, message)
}

/** The URL of an API path, for what the browser loads itself (`<img src>`) or sends outside `request`. */
export function apiUrl(path: string): string {
  return BASE + path
}

/** The CSRF header for a mutation sent outside `request` (the XHR upload, which needs upload progress). */
export function csrfHeaders(): Record<string, string> {
  return csrfToken ? { [CSRF_HEADER]: csrfToken } : {}
}

/**
 * The `ApiError` for a failed answer received outside `request` (status and body text), handled as `request` does:
 * a 401 also runs the unauthorized handler.
 */
export function apiErrorFromText(status: number, text: string): ApiError {
  if (status === 401) unauthorizedHandler?.()
  return toApiError(status, parseJsonText(text))
}

/** GET binary bytes below /api with the answer's headers (e.g. raw frame pixels). Throws `ApiError`. */
export async function requestBytes(path: string): Promise<{ bytes: ArrayBuffer; headers: Headers }> {
  let response: Response
  try {
    response = await fetch(BASE + path, { method: 'GET', credentials: 'same-origin' })
  } catch {
    throw new ApiError(0, 'network-error', 'The server could not be reached. Check your connection and try again.')
  }
  if (!response.ok) throw apiErrorFromText(response.status, await response.text())
  return { bytes: await response.arrayBuffer(), headers: response.headers }
}

/** Shorthands for the resource modules. */
export const http = {
  get: <T>(path: string, options?: Omit<RequestOptions, 'body'>) => request<T>('GET', path, options),
  post: <T>(path: string, body?: unknown, options?: RequestOptions) => request<T>('POST', path, { ...options, body }),
  put: <T>(path: string, body?: unknown, options?: RequestOptions) => request<T>('PUT', path, { ...options, body }),
  patch: <T>(path: string, body?: unknown, options?: RequestOptions) => request<T>('PATCH', path, { ...options, body }),
  delete: <T>(path: string, options?: Omit<RequestOptions, 'body'>) => request<T>('DELETE', path, options),
}
