/**
 * Route guards. `requireSignedIn` answers 401; `requireLabAction` answers 404 when the person is not a member of the
 * lab (so ids of other labs' objects leak nothing) and 403 when their role lacks the permission.
 */
import type { NextFunction, Request, Response } from 'express'
import { roleAllows, type LabAction } from '../../shared/auth/permissions'
import { AppError, unauthenticated } from '../errors'
import type { SessionUser } from './sessionUser'

export function requireSignedIn(req: Request, _res: Response, next: NextFunction): void {
  next(req.user ? undefined : unauthenticated())
}

export function currentUser(req: Request): SessionUser {
  if (!req.user) throw unauthenticated()
  return req.user
}

/**
 * Check that `user` may do `action` in lab `labId`. `what` names the object for the 404 code (e.g. 'project').
 */
export function assertLabAction(user: SessionUser, labId: number, action: LabAction, what: string): void {
  const membership = user.memberships.find((m) => m.labId === labId)
  if (!membership) throw new AppError(404, `${what}-not-found`, `No such ${what.replace(/-/g, ' ')}.`)
  if (!roleAllows(membership.role, action)) throw new AppError(403, 'forbidden', `Your role (${membership.role}) in this lab does not allow this.`)
}
