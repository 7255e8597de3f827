/** The signed-in person as the request sees it: loaded once per request from the session's user id. */
import type { LabRole } from '../../shared/auth/permissions'
import { Lab, Membership, User, onIdentityRowsWritten } from '../models'

export interface SessionUser {
  id: number
  email: string
  name: string
  memberships: { labId: number; labName: string; role: LabRole }[]
}

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // passport's req.user is typed as Express.User; ours carries the memberships.
    interface User extends SessionUser {}
  }
}

/**
 * Load an active user with their active memberships, or null (unknown, deactivated). One query (user, memberships and
 * labs joined). Requests take it through `sessionUserFor`.
 */
export async function loadSessionUser(userId: number): Promise<SessionUser | null> {
  const user = await User.findByPk(userId, {
    include: [{ model: Membership, where: { active: true }, required: false, include: [{ model: Lab, attributes: ['id', 'name'] }] }],
    order: [[Membership, 'labId', 'ASC']],
  })
  if (!user || !user.active) return null
  const memberships = (user as unknown as { Memberships: (Membership & { Lab: Lab })[] }).Memberships
  return {
    id: user.id,
    email: user.email,
    name: user.name,
    memberships: memberships.map((m) => ({ labId: m.Lab.id, labName: m.Lab.name, role: m.role })),
  }
}

/**
 * How long a loaded session user is reused. Every write to users, labs or memberships through this process's models
 * forgets them all at once, so this bounds only what other processes change (a second web server, a script): a role
 * taken away there takes effect within this time.
 */
const SESSION_USER_REUSE_MS = 5_000
/** Past this many remembered users the memory is simply cleared. */
const MAX_REMEMBERED_USERS = 10_000

const remembered = new Map<number, { user: SessionUser | null; loadedAt: number }>()
/** Bumped on every identity write, so a load that was running across one is not remembered. */
let identityGeneration = 0
onIdentityRowsWritten(() => {
  identityGeneration++
  remembered.clear()
})

/**
 * The signed-in person for a request: `loadSessionUser`, reused for a few seconds. It runs on every signed-in request,
 * and the user query was about a fifth of the busiest endpoint's work. The object is frozen: requests share it.
 */
export async function sessionUserFor(userId: number): Promise<SessionUser | null> {
  const hit = remembered.get(userId)
  if (hit && Date.now() - hit.loadedAt < SESSION_USER_REUSE_MS) return hit.user
  const generation = identityGeneration
  const user = await loadSessionUser(userId)
  if (user) {
    user.memberships.forEach((m) => Object.freeze(m))
    Object.freeze(user.memberships)
    Object.freeze(user)
  }
  if (generation === identityGeneration) {
    if (remembered.size >= MAX_REMEMBERED_USERS) remembered.clear()
    remembered.set(userId, { user, loadedAt: Date.now() })
  }
  return user
}
