/** Public account links sent by e-mail: password reset (ask, check, complete) and unlocking a locked account. */
import { http } from './http'

/** Ask for a reset e-mail. The server answers 202 whether or not the address has an account; 429 when rate limited. */
export function requestPasswordReset(email: string): Promise<void> {
  return http.post<void>('/auth/password-reset', { email }, { expectUnauthorized: true })
}

/** Whether a reset link can still be used; 404 for an unknown link. */
export function checkPasswordReset(token: string): Promise<{ expired: boolean; used: boolean }> {
  return http.get<{ expired: boolean; used: boolean }>(`/auth/password-reset/${encodeURIComponent(token)}`, { expectUnauthorized: true })
}

/** Set the new password; 400 `weak-password` (with `fields.password`), 410 `link-used` / `link-expired`. */
export function completePasswordReset(token: string, password: string): Promise<void> {
  return http.post<void>(`/auth/password-reset/${encodeURIComponent(token)}`, { password }, { expectUnauthorized: true })
}

/** Lift a lock-out with the link e-mailed at the lock; 404 unknown, 410 used or expired. */
export function unlockAccount(token: string): Promise<void> {
  return http.post<void>(`/auth/unlock/${encodeURIComponent(token)}`, undefined, { expectUnauthorized: true })
}
