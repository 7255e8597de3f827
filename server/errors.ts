/**
 * Application errors carry a stable kebab-case `code` and an HTTP `status`; the error handler turns them into the
 * `{ error: { code, message } }` body. Anything else becomes a 500 with a generic message and a logged stack.
 */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly extra: { file?: string; fields?: Record<string, string[]> } = {},
  ) {
    super(message)
    this.name = 'AppError'
  }
}

export const notFound = (what: string) => new AppError(404, `${what}-not-found`, `No such ${what.replace(/-/g, ' ')}.`)
export const forbidden = (message = 'Your role in this lab does not allow this.') => new AppError(403, 'forbidden', message)
export const unauthenticated = () => new AppError(401, 'not-signed-in', 'Please sign in.')

/** Marks a dependency outage (database, object store, mail) so the handler answers 503. */
export class ServiceUnavailableError extends AppError {
  constructor(part: 'db' | 'storage' | 'mail', message: string) {
    super(503, `${part}-unavailable`, message)
  }
}
