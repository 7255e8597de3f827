/**
 * Personal API tokens: `Authorization: Bearer rmn_…` authenticates as the token's owner for read-only GET routes
 * (scope 'read'); every other method is refused with 403 `token-read-only`.
 */

export const API_TOKEN_PREFIX = 'rmn_'

export interface ApiTokenDto {
  id: number
  name: string
  /** The first characters of the token, e.g. `rmn_Ab3d`, to tell tokens apart. */
  displayPrefix: string
  scope: 'read'
  expiresAt: string | null
  lastUsedAt: string | null
  revokedAt: string | null
  createdAt: string
}

/** The answer to creating a token: the only time the secret is shown. */
export interface CreatedApiTokenDto extends ApiTokenDto {
  token: string
}
