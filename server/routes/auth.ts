import { z } from 'zod'
import type { NextFunction, Request, Response } from 'express'
import rateLimit from 'express-rate-limit'
import type { PassportStatic } from 'passport'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { AppError } from '../errors'
import { csrfTokenFor } from '../auth/csrf'
import { currentUser } from '../auth/guards'
import type { SessionUser } from '../auth/sessionUser'
import type { AppDeps } from '../app'
import { LAB_ROLES } from '../../shared/auth/permissions'

const MembershipSchema = z.object({ labId: z.number().int(), labName: z.string(), role: z.enum(LAB_ROLES) })
export const CurrentUserSchema = z.object({ id: z.number().int(), email: z.string(), name: z.string(), memberships: z.array(MembershipSchema), csrfToken: z.string() })
const LoginSchema = z.object({ email: z.email().max(320), password: z.string().min(1).max(256) })

function currentUserBody(req: Request, user: SessionUser) {
  return { ...user, csrfToken: csrfTokenFor(req) }
}

/** Run passport's local strategy as a promise. */
function authenticateLocal(passport: PassportStatic, req: Request, res: Response) {
  return new Promise<{ user: SessionUser | false; info?: { message?: string } }>((resolve, reject) => {
    const next: NextFunction = (err) => (err ? reject(err) : undefined)
    passport.authenticate('local', (err: unknown, user: SessionUser | false, info?: { message?: string }) => (err ? reject(err) : resolve({ user, info })))(req, res, next)
  })
}

/** Optional reactions to sign-in events, wired in app.ts. */
export interface AuthHooks {
  /** Called once when failed sign-ins lock the account of `email` (e.g. to e-mail an unlock link). */
  accountLocked?: (email: string) => Promise<void>
}

export function registerAuthRoutes(api: ApiDefinition, deps: AppDeps, passport: PassportStatic, hooks: AuthHooks = {}): void {
  const loginLimiter = rateLimit({
    windowMs: deps.config.loginRateLimit.windowMs,
    limit: deps.config.loginRateLimit.max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, res) => {
      res.status(429).json({ error: { code: 'too-many-sign-in-attempts', message: 'Too many sign-in attempts from this address. Wait a few minutes and try again.' } })
    },
  })

  apiRoute(api, {
    method: 'post',
    path: '/auth/login',
    summary: 'Sign in with e-mail and password; sets the session cookie',
    tags: ['auth'],
    access: 'public',
    before: [loginLimiter],
    body: LoginSchema,
    responses: { 200: { description: 'Signed in', schema: CurrentUserSchema }, 401: { description: 'Wrong e-mail or password' }, 423: { description: 'Account locked after repeated failures' }, 429: { description: 'Rate limited' } },
    handler: async (req, res, { body }) => {
      const { user, info } = await authenticateLocal(passport, req, res)
      if (!user) {
        if (info?.message === 'locked-now' && hooks.accountLocked) {
          // The lock stands even when the message cannot be sent; the lock expires by itself.
          await hooks.accountLocked(body.email).catch((err) => console.error('[auth] unlock e-mail failed', err))
        }
        if (info?.message === 'locked' || info?.message === 'locked-now') throw new AppError(423, 'account-locked', 'Too many failed sign-ins: this account is locked for 15 minutes.')
        throw new AppError(401, 'bad-credentials', 'E-mail or password is wrong.')
      }
      // passport 0.7 regenerates the session id at login (defence against session fixation).
      await new Promise<void>((resolve, reject) => req.logIn(user, (err) => (err ? reject(err) : resolve())))
      return currentUserBody(req, user)
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/auth/me',
    summary: 'The signed-in person, their labs and roles, and the CSRF token',
    tags: ['auth'],
    access: 'signed-in',
    responses: { 200: { description: 'The current user', schema: CurrentUserSchema } },
    handler: (req) => currentUserBody(req, currentUser(req)),
  })

  apiRoute(api, {
    method: 'post',
    path: '/auth/logout',
    summary: 'Sign out and destroy the session',
    tags: ['auth'],
    access: 'signed-in',
    responses: { 204: { description: 'Signed out' } },
    handler: async (req, res) => {
      await new Promise<void>((resolve, reject) => req.logOut((err) => (err ? reject(err) : resolve())))
      await new Promise<void>((resolve) => req.session.destroy(() => resolve()))
      res.clearCookie('remanence.sid').status(204).end()
    },
  })
}
