/**
 * `Authorization: Bearer rmn_…` authentication with a personal API token (server/services/apiTokenService.ts), for
 * scripts that read data. Tokens have scope 'read': they authenticate GET and HEAD requests only; any other method
 * is refused with 403 `token-read-only`, so a leaked token can never change anything. A bearer request carries no
 * cookie, so app.ts skips the session middleware for it and csrf.ts exempts it (CSRF abuses cookies the browser sends
 * by itself; a bearer header is never sent by itself).
 */
import type { NextFunction, Request, Response } from 'express'
import { AppError } from '../errors'
import type { ApiTokenService } from '../services/apiTokenService'

const READ_METHODS = new Set(['GET', 'HEAD'])
const bearerRequests = new WeakSet<Request>()

/** True when the request was authenticated by an API token (not by a session cookie). */
export function isBearerRequest(req: Request): boolean {
  return bearerRequests.has(req)
}

function invalidToken(res: Response): AppError {
  // RFC 6750 §3: tell the client which scheme failed and why.
  res.set('WWW-Authenticate', 'Bearer error="invalid_token"')
  return new AppError(401, 'invalid-token', 'The API token is unknown, revoked or expired, or its account is deactivated.')
}

export function createBearerAuthentication(tokens: ApiTokenService) {
  return async function bearerAuthentication(req: Request, res: Response, next: NextFunction): Promise<void> {
    const header = req.get('authorization')
    const match = header ? /^Bearer\s+(\S+)\s*$/i.exec(header) : null
    if (!match) return next()
    try {
      const user = await tokens.authenticate(match[1])
      if (!user) return next(invalidToken(res))
      if (!READ_METHODS.has(req.method)) {
        return next(new AppError(403, 'token-read-only', 'API tokens are read-only (scope "read"): only GET requests are allowed. Sign in to make changes.'))
      }
      req.user = user
      bearerRequests.add(req)
      next()
    } catch (err) {
      next(err)
    }
  }
}
