/** Personal API tokens (read-only, for scripts): create — the secret is in this one answer only — list, revoke. */
import type { ApiTokenDto, CreatedApiTokenDto } from '@shared/types/apiToken'
import { http } from './http'

export interface CreateApiTokenRequest {
  name: string
  /** Omitted: the token does not expire. */
  expiresInDays?: number
}

export function createApiToken(request: CreateApiTokenRequest): Promise<CreatedApiTokenDto> {
  return http.post<CreatedApiTokenDto>('/auth/tokens', request)
}

/** The person's tokens, newest first, never with their secrets. */
export function listApiTokens(): Promise<ApiTokenDto[]> {
  return http.get<ApiTokenDto[]>('/auth/tokens')
}

/** The token stops working at once. */
export function revokeApiToken(tokenId: number): Promise<void> {
  return http.delete<void>(`/auth/tokens/${tokenId}`)
}
