/**
 * Lab administration: invitations and member changes.
 *
 * Inviting: check the manager's permission → refuse people who are already active members → revoke older open
 * invitations to the same address (one live link per person and lab) → store the invitation with the SHA-256 of a
 * random token, audit, and e-mail the link, all in one transaction (a message that cannot be sent keeps nothing).
 * Accepting: find the invitation by the token's hash under a row lock (so a link works exactly once, also when clicked
 * twice at the same moment) → refuse used, revoked or expired ones → create the account, or check the existing
 * account's password → add or re-activate the membership → mark the invitation used → audit. Member changes (role, deactivation) keep at least one active administrator or PI in every lab.
 */
import { Op, type Sequelize, type Transaction } from 'sequelize'
import { PERMISSIONS, ROLE_LABELS, type LabRole } from '../../shared/auth/permissions'
import type { InvitationDto, InvitationPreviewDto } from '../../shared/types/invitation'
import type { LabMemberDto } from '../../shared/types/user'
import type { AppConfig } from '../config'
import type { Mailer } from '../mail/mailer'
import type { SessionUser } from '../auth/sessionUser'
import { loadSessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { createSecretToken, hashSecretToken } from '../auth/secretToken'
import { hashPassword, passwordProblem, verifyPassword } from '../auth/passwords'
import { AppError, ServiceUnavailableError, notFound } from '../errors'
import { Invitation, Lab, Membership, User } from '../models'
import { recordAudit } from './auditService'

/** Roles that can manage a lab; a lab must always keep one active member with one of them. */
const MANAGER_ROLES: readonly LabRole[] = PERMISSIONS['lab.manage']

/** Hours an invitation link stays valid: INVITATION_HOURS, default 72. */
export function invitationHoursFromEnv(env: NodeJS.ProcessEnv = process.env): number {
  const raw = env.INVITATION_HOURS
  if (raw === undefined || raw === '') return 72
  const hours = Number(raw)
  if (!Number.isFinite(hours) || hours <= 0) throw new Error(`INVITATION_HOURS must be a positive number, got "${raw}"`)
  return hours
}

export const normalizeEmail = (email: string) => email.trim().toLowerCase()

function toInvitationDto(inv: Invitation): InvitationDto {
  const invitedBy = (inv as unknown as { invitedBy?: User | null }).invitedBy
  return {
    id: inv.id,
    labId: inv.labId,
    email: inv.email,
    role: inv.role,
    invitedBy: invitedBy ? { id: invitedBy.id, name: invitedBy.name } : null,
    expiresAt: inv.expiresAt.toISOString(),
    usedAt: inv.usedAt?.toISOString() ?? null,
    revokedAt: inv.revokedAt?.toISOString() ?? null,
    createdAt: inv.createdAt.toISOString(),
  }
}

export function createInvitationService(deps: { sequelize: Sequelize; mailer: Mailer; config: AppConfig }, options: { invitationHours?: number } = {}) {
  const { sequelize, mailer, config } = deps
  const invitationHours = options.invitationHours ?? invitationHoursFromEnv()

  async function labFor(user: SessionUser, labId: number): Promise<Lab> {
    assertLabAction(user, labId, 'lab.read', 'lab')
    assertLabAction(user, labId, 'lab.manage', 'lab')
    const lab = await Lab.findByPk(labId)
    if (!lab) throw notFound('lab')
    return lab
  }

  /**
   * Invite `email` to the lab with `role` and e-mail the one-time link.
   * @throws 409 `already-member` when the address belongs to an active member; 503 `mail-unavailable` when the
   *   message could not be sent (nothing is kept then).
   */
  async function invite(user: SessionUser, labId: number, input: { email: string; role: LabRole }): Promise<InvitationDto> {
    const lab = await labFor(user, labId)
    const email = normalizeEmail(input.email)
    const existing = await User.findOne({ where: { email } })
    if (existing && (await Membership.findOne({ where: { labId, userId: existing.id, active: true } }))) {
      throw new AppError(409, 'already-member', `${email} is already an active member of this lab; change their role in the member list instead.`)
    }
    const { token, hash } = createSecretToken()
    const expiresAt = new Date(Date.now() + invitationHours * 3_600_000)
    const link = `${config.publicUrl}/accept-invitation?token=${encodeURIComponent(token)}`
    // The e-mail is sent inside the transaction: when it cannot be sent, nothing is kept and older links stay valid.
    const invitation = await sequelize.transaction(async (transaction) => {
      await Invitation.update({ revokedAt: new Date() }, { where: { labId, email, usedAt: null, revokedAt: null }, transaction })
      const created = await Invitation.create({ labId, email, role: input.role, tokenHash: hash, invitedById: user.id, expiresAt, usedAt: null, usedById: null, revokedAt: null }, { transaction })
      await recordAudit({ labId, actorId: user.id, action: 'invitation.create', entityType: 'invitation', entityId: created.id, after: { email, role: input.role, expiresAt: expiresAt.toISOString() } }, transaction)
      try {
        await mailer.send({
          to: email,
          subject: `Invitation to ${lab.name} on Remanence`,
          text:
            `${user.name} invites you to join the lab "${lab.name}" on Remanence as ${ROLE_LABELS[input.role]}.\n\n` +
            `Accept the invitation:\n${link}\n\n` +
            `The link works once and expires on ${expiresAt.toUTCString()}. If you did not expect this message, you can ignore it.\n`,
        })
      } catch (err) {
        throw new ServiceUnavailableError('mail', `The invitation e-mail could not be sent (${(err as Error).message}); nothing was saved. Try again in a moment.`)
      }
      return created
    })
    return toInvitationDto(Object.assign(invitation, { invitedBy: { id: user.id, name: user.name } }))
  }

  async function list(user: SessionUser, labId: number): Promise<InvitationDto[]> {
    await labFor(user, labId)
    const rows = await Invitation.findAll({ where: { labId }, include: [{ model: User, as: 'invitedBy', attributes: ['id', 'name'] }], order: [['id', 'DESC']], limit: 200 })
    return rows.map(toInvitationDto)
  }

  async function revoke(user: SessionUser, labId: number, invitationId: number): Promise<void> {
    await labFor(user, labId)
    const invitation = await Invitation.findOne({ where: { id: invitationId, labId } })
    if (!invitation) throw notFound('invitation')
    if (invitation.usedAt) throw new AppError(409, 'invitation-used', 'This invitation was already accepted; deactivate the member instead.')
    if (invitation.revokedAt) return
    await sequelize.transaction(async (transaction) => {
      await invitation.update({ revokedAt: new Date() }, { transaction })
      await recordAudit({ labId, actorId: user.id, action: 'invitation.revoke', entityType: 'invitation', entityId: invitation.id, before: { email: invitation.email } }, transaction)
    })
  }

  async function findByToken(token: string, transaction?: Transaction): Promise<Invitation> {
    const invitation = await Invitation.findOne({ where: { tokenHash: hashSecretToken(token) }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined })
    if (!invitation) throw notFound('invitation')
    return invitation
  }

  /** What the accept page needs to show; public, by token. */
  async function preview(token: string): Promise<InvitationPreviewDto> {
    const invitation = await findByToken(token)
    const lab = await Lab.findByPk(invitation.labId)
    if (!lab) throw notFound('invitation')
    return {
      labName: lab.name,
      role: invitation.role,
      email: invitation.email,
      expired: invitation.expiresAt.getTime() <= Date.now(),
      used: invitation.usedAt !== null,
      revoked: invitation.revokedAt !== null,
      accountExists: (await User.count({ where: { email: invitation.email } })) > 0,
    }
  }

  function assertUsable(invitation: Invitation): void {
    if (invitation.usedAt) throw new AppError(410, 'invitation-used', 'This invitation was already used. Sign in, or ask the lab for a new invitation.')
    if (invitation.revokedAt) throw new AppError(410, 'invitation-revoked', 'This invitation was withdrawn. Ask the lab for a new one.')
    if (invitation.expiresAt.getTime() <= Date.now()) throw new AppError(410, 'invitation-expired', 'This invitation has expired. Ask the lab for a new one.')
  }

  /**
   * Accept an invitation: a new account gets `name` and `password` (password rules of passwords.ts); an existing
   * account must give its current password. Returns the person to sign in.
   */
  async function accept(token: string, input: { name?: string; password: string }): Promise<SessionUser> {
    const userId = await sequelize.transaction(async (transaction) => {
      const invitation = await findByToken(token, transaction)
      assertUsable(invitation)
      let user = await User.findOne({ where: { email: invitation.email }, transaction })
      if (user) {
        if (!user.active) throw new AppError(403, 'account-deactivated', 'This account is deactivated. Ask an administrator.')
        if (user.lockedUntil && user.lockedUntil > new Date()) throw new AppError(423, 'account-locked', 'This account is locked after repeated failed sign-ins; use the unlock link in your e-mail or wait.')
        if (!(await verifyPassword(input.password, user.passwordHash))) {
          throw new AppError(401, 'bad-credentials', 'An account with this e-mail exists: enter its current password to join the lab.')
        }
      } else {
        const name = input.name?.trim()
        if (!name) throw new AppError(400, 'invalid-input', 'Invalid body — name: enter your name.', { fields: { name: ['Enter your name.'] } })
        const problem = passwordProblem(input.password, invitation.email)
        if (problem) throw new AppError(400, 'weak-password', problem, { fields: { password: [problem] } })
        user = await User.create({ email: invitation.email, name, passwordHash: await hashPassword(input.password), lockedUntil: null }, { transaction })
        await recordAudit({ labId: invitation.labId, actorId: user.id, action: 'user.create', entityType: 'user', entityId: user.id, after: { email: user.email, name, via: 'invitation' } }, transaction)
      }
      const membership = await Membership.findOne({ where: { labId: invitation.labId, userId: user.id }, transaction })
      if (membership) {
        const before = { role: membership.role, active: membership.active }
        await membership.update({ role: invitation.role, active: true }, { transaction })
        await recordAudit({ labId: invitation.labId, actorId: user.id, action: 'membership.update', entityType: 'user', entityId: user.id, before, after: { role: invitation.role, active: true, via: 'invitation' } }, transaction)
      } else {
        await Membership.create({ labId: invitation.labId, userId: user.id, role: invitation.role }, { transaction })
        await recordAudit({ labId: invitation.labId, actorId: user.id, action: 'membership.create', entityType: 'user', entityId: user.id, after: { role: invitation.role, via: 'invitation' } }, transaction)
      }
      await invitation.update({ usedAt: new Date(), usedById: user.id }, { transaction })
      await recordAudit({ labId: invitation.labId, actorId: user.id, action: 'invitation.accept', entityType: 'invitation', entityId: invitation.id, after: { userId: user.id } }, transaction)
      return user.id
    })
    const sessionUser = await loadSessionUser(userId)
    if (!sessionUser) throw new AppError(403, 'account-deactivated', 'This account is deactivated. Ask an administrator.')
    return sessionUser
  }

  /**
   * Change a member's role or deactivate/re-activate them. Deactivation keeps everything they made (masks, analyses,
   * reviews stay attributed) and only removes their access to this lab.
   * @throws 409 `own-membership` when a person deactivates themselves (they would be locked out at once; another
   * administrator or PI can do it), 409 `last-manager` when the change would leave the lab without an active
   * administrator or PI.
   */
  async function updateMember(user: SessionUser, labId: number, userId: number, patch: { role?: LabRole; active?: boolean }): Promise<LabMemberDto> {
    await labFor(user, labId)
    if (userId === user.id && patch.active === false) {
      throw new AppError(409, 'own-membership', 'You cannot deactivate yourself: another administrator or principal investigator of the lab can.')
    }
    return sequelize.transaction(async (transaction) => {
      // Lock the lab row: two managers demoting each other at the same moment must not both succeed.
      await Lab.findByPk(labId, { transaction, lock: transaction.LOCK.UPDATE })
      const membership = await Membership.findOne({ where: { labId, userId }, include: [{ model: User, attributes: ['id', 'name', 'email', 'active'] }], transaction })
      if (!membership) throw notFound('member')
      const member = (membership as unknown as { User: User }).User
      const before = { role: membership.role, active: membership.active }
      const after = { role: patch.role ?? membership.role, active: patch.active ?? membership.active }
      const wasManager = before.active && member.active && MANAGER_ROLES.includes(before.role)
      const staysManager = after.active && member.active && MANAGER_ROLES.includes(after.role)
      if (wasManager && !staysManager && (await otherActiveManagers(labId, userId, transaction)) === 0) {
        throw new AppError(409, 'last-manager', 'This is the last active administrator or principal investigator of the lab: make someone else one first.')
      }
      await membership.update(after, { transaction })
      await recordAudit({ labId, actorId: user.id, action: 'membership.update', entityType: 'user', entityId: userId, before, after }, transaction)
      return { userId, name: member.name, email: member.email, role: after.role, active: after.active && member.active }
    })
  }

  async function otherActiveManagers(labId: number, exceptUserId: number, transaction: Transaction): Promise<number> {
    return Membership.count({
      where: { labId, active: true, role: [...MANAGER_ROLES], userId: { [Op.ne]: exceptUserId } },
      include: [{ model: User, where: { active: true }, attributes: [] }],
      transaction,
    })
  }

  return { invite, list, revoke, preview, accept, updateMember }
}

export type InvitationService = ReturnType<typeof createInvitationService>
