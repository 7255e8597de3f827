/** Public account links: password reset (request, check, complete) and unlock after a lock-out. */
import { z } from 'zod'
import rateLimit from 'express-rate-limit'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import type { AppConfig } from '../config'
import type { PasswordResetService } from '../services/passwordResetService'

const tokenParams = z.object({ token: z.string().min(20).max(200).regex(/^[\w-]+$/) })

export function registerPasswordResetRoutes(api: ApiDefinition, resets: PasswordResetService, config: AppConfig): void {
  // The same budget as sign-in, per address: the form must not become a way to probe or flood mailboxes.
  const resetLimiter = rateLimit({
    windowMs: config.loginRateLimit.windowMs,
    limit: config.loginRateLimit.max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, res) => {
      res.status(429).json({ error: { code: 'too-many-requests', message: 'Too many requests from this address. Wait a few minutes and try again.' } })
    },
  })

  apiRoute(api, {
    method: 'post',
    path: '/auth/password-reset',
    summary: 'Public: ask for a password-reset e-mail. Always 202, whether or not the address has an account; the link expires in 1 hour and works once',
    tags: ['auth'],
    access: 'public',
    before: [resetLimiter],
    body: z.object({ email: z.email().max(320) }),
    responses: { 202: { description: 'Accepted (an e-mail goes out only when the account exists)' }, 429: { description: 'Rate limited' } },
    handler: (_req, res, { body }) => {
      res.status(202).end()
      // After answering, so the response time does not tell whether the account exists.
      resets.requestReset(body.email).catch((err) => console.error('[auth] password-reset e-mail failed', err))
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/auth/password-reset/:token',
    summary: 'Public: whether a password-reset link can still be used',
    tags: ['auth'],
    access: 'public',
    params: tokenParams,
    responses: { 200: { description: 'State of the link', schema: z.object({ expired: z.boolean(), used: z.boolean() }) }, 404: { description: 'Unknown link' } },
    handler: (_req, _res, { params }) => resets.checkReset(params.token),
  })

  apiRoute(api, {
    method: 'post',
    path: '/auth/password-reset/:token',
    summary: 'Public: set a new password with a reset link (once). Lifts a lock-out and signs out every session of the account',
    tags: ['auth'],
    access: 'public',
    params: tokenParams,
    body: z.object({ password: z.string().min(1).max(256) }),
    responses: {
      204: { description: 'Password changed; sign in with it' },
      400: { description: 'Weak password (weak-password)' },
      404: { description: 'Unknown link' },
      410: { description: 'Used or expired (link-used, link-expired), or the account was deactivated since (account-inactive)' },
    },
    handler: async (_req, res, { params, body }) => {
      await resets.completeReset(params.token, body.password)
      res.status(204).end()
    },
  })

  apiRoute(api, {
    method: 'post',
    path: '/auth/unlock/:token',
    summary: 'Public: lift a lock-out with the link e-mailed when repeated failed sign-ins locked the account (once, 1 hour)',
    tags: ['auth'],
    access: 'public',
    params: tokenParams,
    responses: { 204: { description: 'Unlocked' }, 404: { description: 'Unknown link' }, 410: { description: 'Used or expired' } },
    handler: async (_req, res, { params }) => {
      await resets.unlock(params.token)
      res.status(204).end()
    },
  })
}
