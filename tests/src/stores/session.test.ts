import { beforeEach, describe, expect, it } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import { LAB_ROLES, PERMISSIONS, type LabAction, type LabRole } from '@shared/auth/permissions'
import type { CurrentUserDto } from '@shared/types/user'
import { http } from '@/api/http'
import { useSessionStore } from '@/stores/session'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'

function userWith(memberships: { labId: number; role: LabRole }[]): CurrentUserDto {
  return {
    id: 7,
    email: 'elena.varga@kestrel-lab.example',
    name: 'Elena Varga',
    memberships: memberships.map((m) => ({ ...m, labName: `Lab ${m.labId}` })),
    csrfToken: 'csrf-from-me',
  }
}

async function signedInAs(memberships: { labId: number; role: LabRole }[]) {
  stubFetch({ 'GET /api/auth/me': () => jsonResponse(200, userWith(memberships)) })
  const session = useSessionStore()
  await session.restore()
  return session
}

beforeEach(() => setActivePinia(createPinia()))
describe('useSessionStore', () => {
  describe('can()', () => {
    // Every role × action cell of shared/auth/permissions.ts, so a change to the table shows up here.
    const cells = LAB_ROLES.flatMap((role) =>
      (Object.keys(PERMISSIONS) as LabAction[]).map((action) => ({
        role,
        action,
        allowed: (PERMISSIONS[action] as readonly LabRole[]).includes(role),
      })),
    )
    it.each(cells)('When the person is $role in lab 1, then can($action, 1) is $allowed', async ({ role, action, allowed }) => {
      const session = await signedInAs([{ labId: 1, role }])
      expect(session.can(action, 1)).toBe(allowed)
      expect(session.can(action)).toBe(allowed)
    })

    it.each([
      { role: 'annotator', action: 'mask.edit', allowed: true },
      { role: 'annotator', action: 'project.create', allowed: false },
      { role: 'reviewer', action: 'analysis.review', allowed: true },
      { role: 'reviewer', action: 'sample.edit', allowed: false },
      { role: 'microscopist', action: 'image.upload', allowed: true },
      { role: 'microscopist', action: 'lab.manage', allowed: false },
    ] as const)('When the person is $role, then can($action) is $allowed (spot checks)', async ({ role, action, allowed }) => {
      const session = await signedInAs([{ labId: 1, role }])
      expect(session.can(action)).toBe(allowed)
    })

    it('When the person is PI in one lab and reviewer in another, then the lab decides and no lab means any', async () => {
      const session = await signedInAs([
        { labId: 1, role: 'pi' },
        { labId: 2, role: 'reviewer' },
      ])
      expect(session.can('project.create', 1)).toBe(true)
      expect(session.can('project.create', 2)).toBe(false)
      expect(session.can('project.create')).toBe(true)
      expect(session.roles).toEqual(['pi', 'reviewer'])
    })

    it('When asked about a lab the person is not in, then nothing is allowed', async () => {
      const session = await signedInAs([{ labId: 1, role: 'admin' }])
      expect(session.can('lab.read', 99)).toBe(false)
    })

    it('When nobody is signed in, then nothing is allowed', () => {
      const session = useSessionStore()
      expect(session.can('lab.read')).toBe(false)
    })
  })

  describe('canDeleteImage()', () => {
    // The rule of the server's delete (shared/auth/permissions.ts): image.delete for one's own uploads, and
    // image.deleteOthers as well for anyone else's, including images whose uploader's account is gone (null).
    const cells = LAB_ROLES.flatMap((role) => {
      const own = (PERMISSIONS['image.delete'] as readonly LabRole[]).includes(role)
      const others = own && (PERMISSIONS['image.deleteOthers'] as readonly LabRole[]).includes(role)
      return [
        { role, uploader: 'themselves', uploadedById: 7, allowed: own },
        { role, uploader: 'someone else', uploadedById: 8, allowed: others },
        { role, uploader: 'a removed account', uploadedById: null, allowed: others },
      ]
    })
    it.each(cells)('When a $role asks about an image uploaded by $uploader, then canDeleteImage is $allowed', async ({ role, uploadedById, allowed }) => {
      const session = await signedInAs([{ labId: 1, role }])
      expect(session.canDeleteImage({ uploadedById }, 1)).toBe(allowed)
    })

    it.each([
      { role: 'microscopist', own: true, others: false },
      { role: 'pi', own: true, others: true },
      { role: 'annotator', own: false, others: false },
    ] as const)('When the person is $role, then own uploads: $own, uploads of others: $others (spot checks)', async ({ role, own, others }) => {
      const session = await signedInAs([{ labId: 1, role }])
      expect([session.canDeleteImage({ uploadedById: 7 }, 1), session.canDeleteImage({ uploadedById: 8 }, 1)]).toEqual([own, others])
    })

    it('When the image is of a lab the person is not in, then no', async () => {
      const session = await signedInAs([{ labId: 1, role: 'admin' }])
      expect(session.canDeleteImage({ uploadedById: 7 }, 2)).toBe(false)
    })
  })

  describe('restore()', () => {
    it('When /auth/me answers 401, then the store is ready with no user', async () => {
      stubFetch({ 'GET /api/auth/me': () => errorResponse(401, 'not-signed-in', 'Please sign in.') })
      const session = useSessionStore()
      await session.restore()
      expect(session.status).toBe('ready')
      expect(session.isSignedIn).toBe(false)
    })

    it('When the server cannot be reached, then the store records the error', async () => {
      stubFetch({ 'GET /api/auth/me': () => errorResponse(503, 'db-unavailable', 'The database is not reachable.') })
      const session = useSessionStore()
      await session.restore()
      expect(session.status).toBe('error')
      expect(session.error?.code).toBe('db-unavailable')
    })

    it('When signed in, then later mutations carry the CSRF token from /auth/me', async () => {
      await signedInAs([{ labId: 1, role: 'pi' }])
      const requests = stubFetch({ 'POST /api/projects': () => jsonResponse(201, {}) })
      await http.post('/projects', { labId: 1, name: 'P' })
      expect(requests[0].headers.get('X-CSRF-Token')).toBe('csrf-from-me')
    })
  })

  describe('signOut()', () => {
    it('When signing out, then the user and the CSRF token are forgotten', async () => {
      const session = await signedInAs([{ labId: 1, role: 'pi' }])
      const requests = stubFetch({ 'POST /api/auth/logout': () => jsonResponse(204), 'POST /api/projects': () => jsonResponse(201, {}) })
      await session.signOut()
      await http.post('/projects', {})
      expect(session.isSignedIn).toBe(false)
      expect(requests[0].headers.get('X-CSRF-Token')).toBe('csrf-from-me')
      expect(requests[1].headers.get('X-CSRF-Token')).toBeNull()
    })
  })
})
