/** Personal API tokens: create (shown once), list, revoke. */
import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import type { ApiTokenService } from '../services/apiTokenService'

const TokenSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  displayPrefix: z.string(),
  scope: z.literal('read'),
  expiresAt: z.string().nullable(),
  lastUsedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
  createdAt: z.string(),
})

export function registerApiTokenRoutes(api: ApiDefinition, tokens: ApiTokenService): void {
  apiRoute(api, {
    method: 'post',
    path: '/auth/tokens',
    summary:
      'Create a personal API token, returned once (it starts with rmn_; only its SHA-256 is kept). Send it as "Authorization: Bearer rmn_…". Scope "read": it authenticates GET requests only; other methods answer 403 token-read-only. No expiry unless expiresInDays',
    tags: ['auth'],
    access: 'signed-in',
    body: z.object({ name: z.string().trim().min(1).max(100), expiresInDays: z.number().int().min(1).max(3650).optional() }),
    responses: { 201: { description: 'Created; `token` is shown only now', schema: TokenSchema.extend({ token: z.string() }) } },
    handler: async (req, res, { body }) => res.status(201).json(await tokens.create(currentUser(req), body)),
  })

  apiRoute(api, {
    method: 'get',
    path: '/auth/tokens',
    summary: 'The signed-in person\u2019s API tokens (never the secrets), newest first',
    tags: ['auth'],
    access: 'signed-in',
    responses: { 200: { description: 'Tokens', schema: z.array(TokenSchema) } },
    handler: (req) => tokens.list(currentUser(req)),
  })

  apiRoute(api, {
    method: 'delete',
    path: '/auth/tokens/:tokenId',
    summary: 'Revoke one of one\u2019s API tokens; it stops working at once',
    tags: ['auth'],
    access: 'signed-in',
    params: z.object({ tokenId: z.coerce.number().int().positive() }),
    responses: { 204: { description: 'Revoked' }, 404: { description: 'No such token' } },
    handler: async (req, res, { params }) => {
      await tokens.revoke(currentUser(req), params.tokenId)
      res.status(204).end()
    },
  })
}
