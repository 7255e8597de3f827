/**
 * Personal API tokens for scripts and notebooks. A token is `rmn_` + 32 random bytes, shown once at creation and
 * stored only as its SHA-256. Scope 'read': server/auth/bearer.ts lets a token authenticate GET requests only. A token
 * stops working when it is revoked, when it expires, or when its owner's account is deactivated (the owner is loaded
 * like a session user on every request, so lab memberships deactivated since also apply at once).
 */
import { API_TOKEN_PREFIX, type ApiTokenDto, type CreatedApiTokenDto } from '../../shared/types/apiToken'
import type { SessionUser } from '../auth/sessionUser'
import { sessionUserFor } from '../auth/sessionUser'
import { createSecretToken, hashSecretToken } from '../auth/secretToken'
import { notFound } from '../errors'
import { ApiToken } from '../models'
import { recordAudit } from './auditService'

/** Characters of the token kept in clear for lists: the prefix plus four of the secret (24 bits, not enough to guess with). */
const DISPLAY_PREFIX_LENGTH = API_TOKEN_PREFIX.length + 4
/** lastUsedAt is written at most this often per token, so a busy script does not turn every read into a write. */
const LAST_USED_RESOLUTION_MS = 60_000

function toDto(t: ApiToken): ApiTokenDto {
  return {
    id: t.id,
    name: t.name,
    displayPrefix: t.displayPrefix,
    scope: 'read',
    expiresAt: t.expiresAt?.toISOString() ?? null,
    lastUsedAt: t.lastUsedAt?.toISOString() ?? null,
    revokedAt: t.revokedAt?.toISOString() ?? null,
    createdAt: t.createdAt.toISOString(),
  }
}

export function createApiTokenService() {
  /** Create a token; the answer is the only place the secret ever appears. */
  async function create(user: SessionUser, input: { name: string; expiresInDays?: number | null }): Promise<CreatedApiTokenDto> {
    const { token, hash } = createSecretToken(API_TOKEN_PREFIX)
    const expiresAt = input.expiresInDays ? new Date(Date.now() + input.expiresInDays * 86_400_000) : null
    const row = await ApiToken.create({ userId: user.id, name: input.name.trim(), tokenHash: hash, displayPrefix: token.slice(0, DISPLAY_PREFIX_LENGTH), expiresAt, lastUsedAt: null, revokedAt: null })
    await recordAudit({ labId: null, actorId: user.id, action: 'api-token.create', entityType: 'api-token', entityId: row.id, after: { name: row.name, expiresAt: expiresAt?.toISOString() ?? null } })
    return { ...toDto(row), token }
  }

  async function list(user: SessionUser): Promise<ApiTokenDto[]> {
    const rows = await ApiToken.findAll({ where: { userId: user.id }, order: [['id', 'DESC']] })
    return rows.map(toDto)
  }

  async function revoke(user: SessionUser, tokenId: number): Promise<void> {
    const row = await ApiToken.findOne({ where: { id: tokenId, userId: user.id } })
    if (!row) throw notFound('api-token')
    if (row.revokedAt) return
    await row.update({ revokedAt: new Date() })
    await recordAudit({ labId: null, actorId: user.id, action: 'api-token.revoke', entityType: 'api-token', entityId: row.id, before: { name: row.name } })
  }

  /** The owner of a live token, or null (unknown, revoked, expired, or the owner deactivated). */
  async function authenticate(token: string): Promise<SessionUser | null> {
    if (!token.startsWith(API_TOKEN_PREFIX)) return null
    const row = await ApiToken.findOne({ where: { tokenHash: hashSecretToken(token), revokedAt: null } })
    if (!row || (row.expiresAt && row.expiresAt.getTime() <= Date.now())) return null
    const user = await sessionUserFor(row.userId)
    if (!user) return null
    if (!row.lastUsedAt || Date.now() - row.lastUsedAt.getTime() > LAST_USED_RESOLUTION_MS) await row.update({ lastUsedAt: new Date() })
    return user
  }

  return { create, list, revoke, authenticate }
}

export type ApiTokenService = ReturnType<typeof createApiTokenService>
