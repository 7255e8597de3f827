/**
 * Lab administration (invitations, member changes) and the public side of an invitation link (preview, accept).
 * Needs `lab.manage` in the lab for everything but the two public calls.
 */
import type { LabRole } from '@shared/auth/permissions'
import type { AcceptInvitationRequest, InvitationDto, InvitationPreviewDto, UpdateMemberRequest } from '@shared/types/invitation'
import type { CurrentUserDto, LabMemberDto } from '@shared/types/user'
import { http } from './http'

export interface InviteRequest {
  email: string
  role: LabRole
}

/** Every invitation of the lab, newest first (open, accepted, withdrawn and expired). */
export function listInvitations(labId: number): Promise<InvitationDto[]> {
  return http.get<InvitationDto[]>(`/labs/${labId}/invitations`)
}

/** Send an invitation e-mail; 409 `already-member`, 503 when the e-mail could not be sent (nothing is saved then). */
export function inviteToLab(labId: number, request: InviteRequest): Promise<InvitationDto> {
  return http.post<InvitationDto>(`/labs/${labId}/invitations`, request)
}

/** Withdraw an open invitation (its link stops working); 409 `invitation-used` once it was accepted. */
export function withdrawInvitation(labId: number, invitationId: number): Promise<void> {
  return http.delete<void>(`/labs/${labId}/invitations/${invitationId}`)
}

/** Change a member's role or (de)activate them; 409 `last-manager` when the lab would be left without a manager. */
export function updateMember(labId: number, userId: number, patch: UpdateMemberRequest): Promise<LabMemberDto> {
  return http.patch<LabMemberDto>(`/labs/${labId}/members/${userId}`, patch)
}

/** Public: what an invitation link is for; 404 `invitation-not-found` for an unknown link. */
export function getInvitationPreview(token: string): Promise<InvitationPreviewDto> {
  return http.get<InvitationPreviewDto>(`/invitations/${encodeURIComponent(token)}`, { expectUnauthorized: true })
}

/**
 * Public: join the lab and sign in. 400 `weak-password` (with `fields.password`), 401 wrong password of an existing
 * account (left to the page: it is not an expired session), 410 used / withdrawn / expired.
 */
export function acceptInvitation(token: string, request: AcceptInvitationRequest): Promise<CurrentUserDto> {
  return http.post<CurrentUserDto>(`/invitations/${encodeURIComponent(token)}/accept`, request, { expectUnauthorized: true })
}
