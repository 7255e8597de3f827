/** The person's labs (name, institution) and, per lab, its members with their roles. */
import { ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { LabDto } from '@shared/types/lab'
import type { LabMemberDto } from '@shared/types/user'
import { asApiError, type ApiError } from '@/api/http'
import { listLabMembers, listLabs } from '@/api/labs'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

export const useLabsStore = defineStore('labs', () => {
  const labs = ref<LabDto[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const members = ref<LabMemberDto[]>([])
  const membersLabId = ref<number | null>(null)
  const membersStatus = ref<LoadStatus>('idle')
  const membersError = shallowRef<ApiError | null>(null)

  async function fetchLabs(): Promise<void> {
    status.value = 'loading'
    error.value = null
    try {
      labs.value = await listLabs()
      status.value = 'ready'
    } catch (e) {
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  async function ensureLabs(): Promise<void> {
    if (status.value === 'idle') await fetchLabs()
  }

  /** Load the members of one lab (the admin page shows one lab at a time). */
  async function fetchMembers(labId: number): Promise<void> {
    membersLabId.value = labId
    membersStatus.value = 'loading'
    membersError.value = null
    try {
      const rows = await listLabMembers(labId)
      // A slower answer for a lab the person has since switched away from must not overwrite the newer one.
      if (membersLabId.value !== labId) return
      members.value = rows
      membersStatus.value = 'ready'
    } catch (e) {
      if (membersLabId.value !== labId) return
      membersError.value = asApiError(e)
      membersStatus.value = 'error'
    }
  }

  function reset(): void {
    labs.value = []
    status.value = 'idle'
    error.value = null
    members.value = []
    membersLabId.value = null
    membersStatus.value = 'idle'
    membersError.value = null
  }

  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return { labs, status, error, members, membersLabId, membersStatus, membersError, fetchLabs, ensureLabs, fetchMembers, reset }
})
