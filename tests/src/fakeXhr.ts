import { vi } from 'vitest'

/**
 * The network under XMLHttpRequest (which the image upload uses for its progress events): each request is recorded
 * and the test decides when bytes go out and what the server answers.
 */
export class FakeXhr {
  static requests: FakeXhr[] = []

  method = ''
  url = ''
  readonly headers: Record<string, string> = {}
  body: FormData | null = null
  status = 0
  responseText = ''
  aborted = false
  readonly upload: { onprogress: ((event: ProgressEvent) => void) | null } = { onprogress: null }
  onload: (() => void) | null = null
  onerror: (() => void) | null = null
  onabort: (() => void) | null = null

  constructor() {
    FakeXhr.requests.push(this)
  }

  open(method: string, url: string): void {
    this.method = method
    this.url = url
  }

  setRequestHeader(name: string, value: string): void {
    this.headers[name] = value
  }

  send(body: FormData): void {
    this.body = body
  }

  abort(): void {
    this.aborted = true
    this.onabort?.()
  }

  /** The browser reports `loaded` of `total` bytes sent. */
  progress(loaded: number, total: number): void {
    this.upload.onprogress?.({ loaded, total, lengthComputable: true } as ProgressEvent)
  }

  /** The server answers with a JSON body. */
  respond(status: number, body: unknown): void {
    this.status = status
    this.responseText = JSON.stringify(body)
    this.onload?.()
  }

  /** The connection drops. */
  fail(): void {
    this.onerror?.()
  }
}

/** Replace XMLHttpRequest for the test; returns the list the requests are recorded in. */
export function stubXhr(): FakeXhr[] {
  FakeXhr.requests = []
  vi.stubGlobal('XMLHttpRequest', FakeXhr)
  return FakeXhr.requests
}
