/** Lab administration: invitations (send, list, withdraw, preview and accept by token) and member changes. */
import { z } from 'zod'
import type { Request } from 'express'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { csrfTokenFor } from '../auth/csrf'
import type { SessionUser } from '../auth/sessionUser'
import { LAB_ROLES } from '../../shared/auth/permissions'
import type { InvitationService } from '../services/invitationService'
import { CurrentUserSchema } from './auth'

const labParams = z.object({ labId: z.coerce.number().int().positive() })
/** A link token: 32 random bytes in base64url (43 characters). */
const tokenParams = z.object({ token: z.string().min(20).max(200).regex(/^[\w-]+$/) })
const PersonSchema = z.object({ id: z.number().int(), name: z.string() })
const InvitationSchema = z.object({
  id: z.number().int(),
  labId: z.number().int(),
  email: z.string(),
  role: z.enum(LAB_ROLES),
  invitedBy: PersonSchema.nullable(),
  expiresAt: z.string(),
  usedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
  createdAt: z.string(),
})
const PreviewSchema = z.object({
  labName: z.string(),
  role: z.enum(LAB_ROLES),
  email: z.string(),
  expired: z.boolean(),
  used: z.boolean(),
  revoked: z.boolean(),
  accountExists: z.boolean(),
})
const MemberSchema = z.object({ userId: z.number().int(), name: z.string(), email: z.string(), role: z.enum(LAB_ROLES), active: z.boolean() })

function signInAs(req: Request, user: SessionUser): Promise<void> {
  // passport 0.7 regenerates the session id at login (defence against session fixation).
  return new Promise((resolve, reject) => req.logIn(user, (err) => (err ? reject(err) : resolve())))
}

export function registerInvitationRoutes(api: ApiDefinition, invitations: InvitationService): void {
  apiRoute(api, {
    method: 'post',
    path: '/labs/:labId/invitations',
    summary: 'Invite someone to the lab by e-mail with a role; the one-time link expires after INVITATION_HOURS (default 72)',
    tags: ['labs'],
    access: 'signed-in',
    params: labParams,
    body: z.object({ email: z.email().max(320), role: z.enum(LAB_ROLES) }),
    responses: {
      201: { description: 'Invitation sent (the token is only in the e-mail)', schema: InvitationSchema },
      403: { description: 'Role may not manage the lab' },
      404: { description: 'No such lab' },
      409: { description: 'Already an active member (already-member)' },
      503: { description: 'The e-mail could not be sent; nothing saved' },
    },
    handler: async (req, res, { params, body }) => res.status(201).json(await invitations.invite(currentUser(req), params.labId, body)),
  })

  apiRoute(api, {
    method: 'get',
    path: '/labs/:labId/invitations',
    summary: 'Invitations of the lab, newest first (open, used, withdrawn and expired)',
    tags: ['labs'],
    access: 'signed-in',
    params: labParams,
    responses: { 200: { description: 'Invitations', schema: z.array(InvitationSchema) }, 403: { description: 'Role may not manage the lab' }, 404: { description: 'No such lab' } },
    handler: (req, _res, { params }) => invitations.list(currentUser(req), params.labId),
  })

  apiRoute(api, {
    method: 'delete',
    path: '/labs/:labId/invitations/:invitationId',
    summary: 'Withdraw an open invitation (its link stops working)',
    tags: ['labs'],
    access: 'signed-in',
    params: labParams.extend({ invitationId: z.coerce.number().int().positive() }),
    responses: { 204: { description: 'Withdrawn' }, 404: { description: 'No such invitation' }, 409: { description: 'Already accepted (invitation-used)' } },
    handler: async (req, res, { params }) => {
      await invitations.revoke(currentUser(req), params.labId, params.invitationId)
      res.status(204).end()
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/invitations/:token',
    summary: 'Public: what an invitation link is for (lab, role, e-mail) and whether it can still be used',
    tags: ['labs'],
    access: 'public',
    params: tokenParams,
    responses: { 200: { description: 'The invitation', schema: PreviewSchema }, 404: { description: 'Unknown link (invitation-not-found)' } },
    handler: (_req, _res, { params }) => invitations.preview(params.token),
  })

  apiRoute(api, {
    method: 'post',
    path: '/invitations/:token/accept',
    summary:
      'Public: accept an invitation and sign in. A new account gives name and password (at least 12 characters); an existing account gives its current password. Works once.',
    tags: ['labs'],
    access: 'public',
    params: tokenParams,
    body: z.object({ name: z.string().trim().min(1).max(200).optional(), password: z.string().min(1).max(256) }),
    responses: {
      200: { description: 'Joined and signed in (same body as POST /api/auth/login)', schema: CurrentUserSchema },
      400: { description: 'Missing name or weak password (weak-password)' },
      401: { description: 'Wrong password of the existing account' },
      404: { description: 'Unknown link' },
      410: { description: 'Used, withdrawn or expired (invitation-used, invitation-revoked, invitation-expired)' },
    },
    handler: async (req, _res, { params, body }) => {
      const user = await invitations.accept(params.token, body)
      await signInAs(req, user)
      return { ...user, csrfToken: csrfTokenFor(req) }
    },
  })

  apiRoute(api, {
    method: 'patch',
    path: '/labs/:labId/members/:userId',
    summary: 'Change a member\u2019s role or (de)activate them; deactivated members keep their work but lose access. The last active admin/PI cannot be demoted or deactivated, and nobody deactivates themselves. Audited.',
    tags: ['labs'],
    access: 'signed-in',
    params: labParams.extend({ userId: z.coerce.number().int().positive() }),
    body: z.object({ role: z.enum(LAB_ROLES).optional(), active: z.boolean().optional() }).refine((b) => b.role !== undefined || b.active !== undefined, { message: 'Give role or active.' }),
    responses: {
      200: { description: 'The member after the change', schema: MemberSchema },
      403: { description: 'Role may not manage the lab' },
      404: { description: 'No such lab or member' },
      409: { description: 'Would leave the lab without an active admin/PI (last-manager), or deactivates the caller (own-membership)' },
    },
    handler: (req, _res, { params, body }) => invitations.updateMember(currentUser(req), params.labId, params.userId, body),
  })
}
