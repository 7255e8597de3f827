/** The signed-in person as the request sees it: loaded once per request from the session's user id. */
import type { LabRole } from '../../shared/auth/permissions'
import { Lab, Membership, User } from '../models'

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
 * labs joined): it runs on every signed-in request.
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
