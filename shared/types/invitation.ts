/** Invitations to a lab and the member changes a lab manager makes. */
import type { LabRole } from '../auth/permissions'

/** A sent invitation as the lab's managers see it (the token is only ever in the e-mail). */
export interface InvitationDto {
  id: number
  labId: number
  email: string
  role: LabRole
  invitedBy: { id: number; name: string } | null
  expiresAt: string
  usedAt: string | null
  revokedAt: string | null
  createdAt: string
}

/** What the accept page shows before the person signs up or in (public, by token). */
export interface InvitationPreviewDto {
  labName: string
  role: LabRole
  email: string
  expired: boolean
  used: boolean
  revoked: boolean
  /** True when an account with this e-mail exists: the page asks for its password instead of a name and a new one. */
  accountExists: boolean
}

/** New account: name and a new password. Existing account: its current password (name is ignored). */
export interface AcceptInvitationRequest {
  name?: string
  password: string
}

export interface UpdateMemberRequest {
  role?: LabRole
  active?: boolean
}
