/** Sign-in, the current session, sign-out. */
import type { CurrentUserDto } from '@shared/types/user'
import { http } from './http'

export interface Credentials {
  email: string
  password: string
}

/** Sign in; a wrong password (401), a locked account (423) or rate limiting (429) throw `ApiError`. */
export function login(credentials: Credentials): Promise<CurrentUserDto> {
  return http.post<CurrentUserDto>('/auth/login', credentials, { expectUnauthorized: true })
}

/** The signed-in person with a fresh CSRF token; throws `ApiError` 401 when nobody is signed in. */
export function getCurrentUser(): Promise<CurrentUserDto> {
  return http.get<CurrentUserDto>('/auth/me', { expectUnauthorized: true })
}

export function logout(): Promise<void> {
  // An already-expired session is as good as signed out, so a 401 here must not bounce the person to sign-in twice.
  return http.post<void>('/auth/logout', undefined, { expectUnauthorized: true })
}
