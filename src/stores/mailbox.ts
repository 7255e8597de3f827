/**
 * Development only: the local mail sink's messages, and whether the dev mailbox exists at all (always assumed in a
 * Vite dev build; elsewhere shown only after the endpoint answered).
 */
import { computed, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import { asApiError, type ApiError } from '@/api/http'
import { listMailbox, type DevMailMessage } from '@/api/mailbox'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

export const useMailboxStore = defineStore('mailbox', () => {
  const messages = ref<DevMailMessage[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const endpointAnswered = ref(false)

  const available = computed(() => import.meta.env.DEV || endpointAnswered.value)

  async function fetchMessages(): Promise<void> {
    status.value = 'loading'
    error.value = null
    try {
      messages.value = await listMailbox()
      endpointAnswered.value = true
      status.value = 'ready'
    } catch (e) {
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  /** Find out quietly whether the server has the dev mailbox (a 404 in production is expected, not an error). */
  async function probe(): Promise<void> {
    if (import.meta.env.DEV || status.value !== 'idle') return
    await fetchMessages()
  }

  const session = useSessionStore()
  watch(
    () => session.user?.id,
    () => {
      messages.value = []
      status.value = 'idle'
      error.value = null
    },
  )

  return { messages, status, error, available, fetchMessages, probe }
})
