/**
 * CSRF defence for cookie-authenticated mutations: a random token lives in the session; every POST, PUT, PATCH and
 * DELETE made with the session cookie must echo it in the `X-CSRF-Token` header (the client reads it from
 * `GET /api/auth/me` or the sign-in response). Sign-in itself is exempt: it has no session yet, and the
 * SameSite=Lax cookie plus the Origin check below keep other sites from using it. Requests authenticated by an API token
 * (server/auth/bearer.ts) are exempt too: they carry no cookie, and a browser never adds a bearer header by itself.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto'
import type { NextFunction, Request, Response } from 'express'
import { AppError } from '../errors'
import { isBearerRequest } from './bearer'

declare module 'express-session' {
  interface SessionData {
    csrfToken?: string
  }
}

export const CSRF_HEADER = 'x-csrf-token'
const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS'])
const EXEMPT_PATHS = new Set(['/api/auth/login'])

/** The session's CSRF token; '' for a bearer request, which has no session and needs none. */
export function csrfTokenFor(req: Request): string {
  if (!req.session) return ''
  if (!req.session.csrfToken) req.session.csrfToken = randomBytes(24).toString('base64url')
  return req.session.csrfToken
}

export function csrfProtection(req: Request, _res: Response, next: NextFunction): void {
  if (SAFE_METHODS.has(req.method) || isBearerRequest(req)) return next()
  const origin = req.get('origin')
  if (origin && origin !== `${req.protocol}://${req.get('host')}`) {
    return next(new AppError(403, 'cross-origin-request', 'Requests from other sites are refused.'))
  }
  if (EXEMPT_PATHS.has(req.originalUrl.split('?')[0]) || !req.session?.passport) return next()
  const expected = req.session.csrfToken
  const given = req.get(CSRF_HEADER)
  if (!expected || !given || expected.length !== given.length || !timingSafeEqual(Buffer.from(expected), Buffer.from(given))) {
    return next(new AppError(403, 'csrf-token-invalid', 'The form was out of date or sent from elsewhere; reload the page and try again.'))
  }
  next()
}

declare module 'express-session' {
  interface SessionData {
    passport?: { user?: number }
  }
}
