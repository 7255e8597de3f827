/**
 * The signed-in person's API tokens. A new token's secret is kept here only until the person dismisses it: the server
 * has only its hash, so it can never be shown again.
 */
import { ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { ApiTokenDto, CreatedApiTokenDto } from '@shared/types/apiToken'
import { createApiToken, listApiTokens, revokeApiToken, type CreateApiTokenRequest } from '@/api/apiTokens'
import { asApiError, type ApiError } from '@/api/http'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

/** The listed form of a new token: the secret stays out of the list. */
function withoutSecret(token: CreatedApiTokenDto): ApiTokenDto {
  const { id, name, displayPrefix, scope, expiresAt, lastUsedAt, revokedAt, createdAt } = token
  return { id, name, displayPrefix, scope, expiresAt, lastUsedAt, revokedAt, createdAt }
}

export const useApiTokensStore = defineStore('apiTokens', () => {
  const tokens = ref<ApiTokenDto[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  /** The token just created, with its secret; null once dismissed. */
  const created = shallowRef<CreatedApiTokenDto | null>(null)

  async function fetchTokens(): Promise<void> {
    status.value = 'loading'
    error.value = null
    try {
      tokens.value = await listApiTokens()
      status.value = 'ready'
    } catch (e) {
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  async function create(request: CreateApiTokenRequest): Promise<CreatedApiTokenDto> {
    const token = await createApiToken(request)
    created.value = token
    tokens.value = [withoutSecret(token), ...tokens.value]
    return token
  }

  async function revoke(tokenId: number): Promise<void> {
    await revokeApiToken(tokenId)
    const now = new Date().toISOString()
    tokens.value = tokens.value.map((t) => (t.id === tokenId ? { ...t, revokedAt: now } : t))
    if (created.value?.id === tokenId) created.value = null
  }

  /** Forget the secret (the person copied it, or chose not to). */
  function dismissSecret(): void {
    created.value = null
  }

  const session = useSessionStore()
  watch(
    () => session.user?.id,
    () => {
      tokens.value = []
      status.value = 'idle'
      error.value = null
      created.value = null
    },
  )

  return { tokens, status, error, created, fetchTokens, create, revoke, dismissSecret }
})
