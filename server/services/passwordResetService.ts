/**
 * One-time account links sent by e-mail: password reset (asked for by the person) and unlock (sent when repeated
 * failed sign-ins lock the account, server/auth/passport.ts). Both links carry a random token stored only as its
 * SHA-256, work once, and expire after an hour.
 *
 * A reset request answers the same whether or not the address has an account (no account enumeration), and at most
 * RESET_MAILS_PER_HOUR messages go to one account per hour so the form cannot be used to flood a mailbox.
 */
import { Op, type Sequelize, type Transaction } from 'sequelize'
import type { AppConfig } from '../config'
import type { Mailer } from '../mail/mailer'
import { createSecretToken, hashSecretToken } from '../auth/secretToken'
import { hashPassword, passwordProblem } from '../auth/passwords'
import { AppError, notFound } from '../errors'
import { PasswordReset, User, type AccountLinkPurpose } from '../models'
import { recordAudit } from './auditService'
import { normalizeEmail } from './invitationService'

export const ACCOUNT_LINK_MINUTES = 60
export const RESET_MAILS_PER_HOUR = 3

export function createPasswordResetService(deps: { sequelize: Sequelize; mailer: Mailer; config: AppConfig }) {
  const { sequelize, mailer, config } = deps

  async function createLink(user: User, purpose: AccountLinkPurpose): Promise<string> {
    const { token, hash } = createSecretToken()
    // One clock reading for both, so a link is valid for exactly ACCOUNT_LINK_MINUTES after it was made.
    const now = Date.now()
    await PasswordReset.create({ userId: user.id, purpose, tokenHash: hash, createdAt: new Date(now), expiresAt: new Date(now + ACCOUNT_LINK_MINUTES * 60_000), usedAt: null })
    return token
  }

  /**
   * E-mail a reset link when `email` belongs to an active account; otherwise do nothing. Never reveals which case
   * happened (the route answers 202 in both and does this after answering).
   */
  async function requestReset(email: string): Promise<void> {
    const user = await User.findOne({ where: { email: normalizeEmail(email) } })
    if (!user || !user.active) return
    const recent = await PasswordReset.count({ where: { userId: user.id, purpose: 'password-reset', createdAt: { [Op.gt]: new Date(Date.now() - 3_600_000) } } })
    if (recent >= RESET_MAILS_PER_HOUR) return
    const token = await createLink(user, 'password-reset')
    await mailer.send({
      to: user.email,
      subject: 'Reset your Remanence password',
      text:
        `Someone (hopefully you) asked to reset the password of your Remanence account ${user.email}.\n\n` +
        `Choose a new password:\n${config.publicUrl}/reset-password?token=${encodeURIComponent(token)}\n\n` +
        `The link works once and expires in ${ACCOUNT_LINK_MINUTES} minutes. If you did not ask for this, ignore this message: your password stays as it is.\n`,
    })
  }

  /** Look a link up by token; 404 when unknown or of the other purpose. */
  async function findLink(token: string, purpose: AccountLinkPurpose, transaction?: Transaction) {
    const link = await PasswordReset.findOne({ where: { tokenHash: hashSecretToken(token), purpose }, transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined })
    if (!link) throw notFound(purpose === 'unlock' ? 'unlock-link' : 'password-reset')
    return link
  }

  function assertUsable(link: PasswordReset): void {
    if (link.usedAt) throw new AppError(410, 'link-used', 'This link was already used. Ask for a new one.')
    if (link.expiresAt.getTime() <= Date.now()) throw new AppError(410, 'link-expired', 'This link has expired. Ask for a new one.')
  }

  /** Whether a reset link can still be used (for the reset page, before the person types a password). */
  async function checkReset(token: string): Promise<{ expired: boolean; used: boolean }> {
    const link = await findLink(token, 'password-reset')
    return { expired: link.expiresAt.getTime() <= Date.now(), used: link.usedAt !== null }
  }

  /**
   * Set a new password with a reset link: the link is used up, the account's other open reset links are cancelled,
   * a lock-out is lifted, and every existing session of the account is signed out.
   */
  async function completeReset(token: string, password: string): Promise<void> {
    await sequelize.transaction(async (transaction) => {
      const link = await findLink(token, 'password-reset', transaction)
      assertUsable(link)
      const user = await User.findByPk(link.userId, { transaction })
      // Deactivated after the link was sent: a new link would not help (none is sent to inactive accounts), so say so.
      if (!user || !user.active) throw new AppError(410, 'account-inactive', 'This account was deactivated and can no longer be reset. Ask a lab administrator.')
      const problem = passwordProblem(password, user.email)
      if (problem) throw new AppError(400, 'weak-password', problem, { fields: { password: [problem] } })
      await user.update({ passwordHash: await hashPassword(password), failedLogins: 0, lockedUntil: null }, { transaction })
      const now = new Date()
      await link.update({ usedAt: now }, { transaction })
      await PasswordReset.update({ usedAt: now }, { where: { userId: user.id, usedAt: null }, transaction })
      // Whoever knew the old password must not stay signed in.
      await sequelize.query(`DELETE FROM "session" WHERE ("sess"::jsonb -> 'passport' ->> 'user') = :userId`, { replacements: { userId: String(user.id) }, transaction })
      await recordAudit({ labId: null, actorId: user.id, action: 'user.password-reset', entityType: 'user', entityId: user.id }, transaction)
    })
  }

  /** E-mail an unlock link to a just-locked account (called by the sign-in route). Unknown addresses do nothing. */
  async function sendUnlockLink(email: string): Promise<void> {
    const user = await User.findOne({ where: { email: normalizeEmail(email) } })
    if (!user || !user.active || !user.lockedUntil) return
    const token = await createLink(user, 'unlock')
    await mailer.send({
      to: user.email,
      subject: 'Your Remanence account was locked',
      text:
        `There were too many failed sign-ins to your Remanence account ${user.email}, so it is locked until ${user.lockedUntil.toUTCString()}.\n\n` +
        `If it was you, unlock it now:\n${config.publicUrl}/unlock-account?token=${encodeURIComponent(token)}\n\n` +
        `If it was not you, someone may be guessing your password: consider resetting it.\n`,
    })
  }

  /** Lift a lock-out with an unlock link. */
  async function unlock(token: string): Promise<void> {
    await sequelize.transaction(async (transaction) => {
      const link = await findLink(token, 'unlock', transaction)
      assertUsable(link)
      await link.update({ usedAt: new Date() }, { transaction })
      await User.update({ failedLogins: 0, lockedUntil: null }, { where: { id: link.userId }, transaction })
      await recordAudit({ labId: null, actorId: link.userId, action: 'user.unlock', entityType: 'user', entityId: link.userId }, transaction)
    })
  }

  return { requestReset, checkReset, completeReset, sendUnlockLink, unlock }
}

export type PasswordResetService = ReturnType<typeof createPasswordResetService>
