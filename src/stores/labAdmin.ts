/**
 * The lab a manager looks after: its members (role changes, deactivation) and its invitations (send, withdraw).
 * Loads record their failure for the view's Retry; changes throw `ApiError` for the dialog or row that started them
 * (409 `last-manager`, 409 `already-member`, 503 mail not sent).
 */
import { computed, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { LabRole } from '@shared/auth/permissions'
import type { InvitationDto } from '@shared/types/invitation'
import type { LabMemberDto } from '@shared/types/user'
import { asApiError, type ApiError } from '@/api/http'
import { inviteToLab, listInvitations, updateMember, withdrawInvitation, type InviteRequest } from '@/api/invitations'
import { listLabMembers } from '@/api/labs'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

/** Where an invitation stands, from its dates (an open one whose time ran out reads as expired). */
export type InvitationState = 'open' | 'accepted' | 'withdrawn' | 'expired'

export function invitationState(invitation: InvitationDto, now = Date.now()): InvitationState {
  if (invitation.usedAt) return 'accepted'
  if (invitation.revokedAt) return 'withdrawn'
  return Date.parse(invitation.expiresAt) <= now ? 'expired' : 'open'
}

export const useLabAdminStore = defineStore('labAdmin', () => {
  const labId = ref<number | null>(null)
  const members = ref<LabMemberDto[]>([])
  const invitations = ref<InvitationDto[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)

  /** Invitations still waiting for an answer; the rest is history the page folds away. */
  const openInvitations = computed(() => invitations.value.filter((i) => invitationState(i) === 'open'))
  const pastInvitations = computed(() => invitations.value.filter((i) => invitationState(i) !== 'open'))

  async function load(id: number): Promise<void> {
    labId.value = id
    status.value = 'loading'
    error.value = null
    try {
      const [memberRows, invitationRows] = await Promise.all([listLabMembers(id), listInvitations(id)])
      // A slower answer for a lab the person has since switched away from must not overwrite the newer one.
      if (labId.value !== id) return
      members.value = memberRows
      invitations.value = invitationRows
      status.value = 'ready'
    } catch (e) {
      if (labId.value !== id) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  function requireLab(): number {
    if (labId.value === null) throw new Error('No lab chosen.')
    return labId.value
  }

  async function invite(request: InviteRequest): Promise<InvitationDto> {
    const invitation = await inviteToLab(requireLab(), request)
    invitations.value = [invitation, ...invitations.value]
    return invitation
  }

  async function withdraw(invitationId: number): Promise<void> {
    const id = requireLab()
    await withdrawInvitation(id, invitationId)
    const now = new Date().toISOString()
    invitations.value = invitations.value.map((i) => (i.id === invitationId ? { ...i, revokedAt: now } : i))
  }

  async function changeMember(userId: number, patch: { role?: LabRole; active?: boolean }): Promise<LabMemberDto> {
    const member = await updateMember(requireLab(), userId, patch)
    members.value = members.value.map((m) => (m.userId === member.userId ? member : m))
    return member
  }

  function reset(): void {
    labId.value = null
    members.value = []
    invitations.value = []
    status.value = 'idle'
    error.value = null
  }

  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return { labId, members, invitations, openInvitations, pastInvitations, status, error, load, invite, withdraw, changeMember, reset }
})
