import type { LabRole } from '../auth/permissions'

export interface LabMembershipDto {
  labId: number
  labName: string
  role: LabRole
}

export interface CurrentUserDto {
  id: number
  email: string
  name: string
  memberships: LabMembershipDto[]
  /** Send back as the X-CSRF-Token header on every cookie-authenticated POST/PUT/PATCH/DELETE. */
  csrfToken: string
}

export interface LabMemberDto {
  userId: number
  name: string
  email: string
  role: LabRole
  active: boolean
}
