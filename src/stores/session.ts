/**
 * Who is signed in, their labs and roles, and what they may do. Views ask `can(action, labId?)` to show or hide
 * actions; the server checks the same table (shared/auth/permissions.ts) again on every request.
 */
import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { anyRoleAllows, roleAllows, roleMayDeleteImage, type LabAction, type LabRole } from '@shared/auth/permissions'
import type { CurrentUserDto } from '@shared/types/user'
import { getCurrentUser, login, logout, type Credentials } from '@/api/auth'
import { asApiError, isApiError, setCsrfToken, type ApiError } from '@/api/http'
import type { LoadStatus } from './loadStatus'

export const useSessionStore = defineStore('session', () => {
  const user = ref<CurrentUserDto | null>(null)
  /** 'ready' once we know whether someone is signed in; 'error' when the server could not tell us. */
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  let restoring: Promise<void> | null = null

  const isSignedIn = computed(() => user.value !== null)
  const memberships = computed(() => user.value?.memberships ?? [])
  const roles = computed<LabRole[]>(() => [...new Set(memberships.value.map((m) => m.role))])

  function setUser(next: CurrentUserDto | null): void {
    user.value = next
    setCsrfToken(next?.csrfToken ?? null)
  }

  /**
   * May the person do `action`? With `labId`: with their role in that lab (false when not a member). Without: with
   * any of their roles, which is what navigation and "New ..." buttons need before a lab is chosen.
   */
  function can(action: LabAction, labId?: number): boolean {
    if (labId === undefined) return anyRoleAllows(roles.value, action)
    const membership = memberships.value.find((m) => m.labId === labId)
    return membership !== undefined && roleAllows(membership.role, action)
  }

  /** May the person delete this image of lab `labId`? Their own uploads with 'image.delete', others' with 'image.deleteOthers'. */
  function canDeleteImage(image: { uploadedById: number | null }, labId: number): boolean {
    const membership = memberships.value.find((m) => m.labId === labId)
    return membership !== undefined && user.value !== null && roleMayDeleteImage(membership.role, image, user.value.id)
  }

  /** Ask the server whether a session cookie is still valid. Runs once; concurrent callers share the request. */
  function restore(): Promise<void> {
    if (status.value === 'ready') return Promise.resolve()
    restoring ??= (async () => {
      status.value = 'loading'
      error.value = null
      try {
        setUser(await getCurrentUser())
        status.value = 'ready'
      } catch (e) {
        setUser(null)
        if (isApiError(e) && e.status === 401) {
          status.value = 'ready'
        } else {
          status.value = 'error'
          error.value = asApiError(e)
        }
      } finally {
        restoring = null
      }
    })()
    return restoring
  }

  /** Ask the server again who is signed in (after a change to the person's own roles); a failure keeps what we had. */
  async function refresh(): Promise<void> {
    try {
      setUser(await getCurrentUser())
    } catch (e) {
      if (isApiError(e) && e.status === 401) clear()
    }
  }

  /** Throws `ApiError` (401 wrong credentials, 423 locked, 429 rate limited) for the sign-in form to show. */
  async function signIn(credentials: Credentials): Promise<void> {
    setUser(await login(credentials))
    status.value = 'ready'
    error.value = null
  }

  async function signOut(): Promise<void> {
    try {
      await logout()
    } finally {
      clear()
    }
  }

  /** Forget the person locally, e.g. after the server answered 401 to a request that needed a session. */
  function clear(): void {
    setUser(null)
    status.value = 'ready'
  }

  return { user, status, error, isSignedIn, memberships, roles, can, canDeleteImage, restore, refresh, signIn, signOut, clear }
})
