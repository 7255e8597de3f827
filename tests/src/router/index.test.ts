import { beforeEach, describe, expect, it } from 'vitest'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia } from 'pinia'
import type { LabRole } from '@shared/auth/permissions'
import { createAppRouter, safeRedirect } from '@/router'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'

function signedInAs(role: LabRole): void {
  stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, {
        id: 4,
        email: 'priya.raman@kestrel-lab.example',
        name: 'Priya Raman',
        memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }],
        csrfToken: 't',
      }),
  })
}

beforeEach(() => setActivePinia(createPinia()))
describe('router guards', () => {
  it('When an anonymous person opens a page, then they land on sign-in with a way back', async () => {
    stubFetch({ 'GET /api/auth/me': () => errorResponse(401, 'not-signed-in', 'Please sign in.') })
    const router = createAppRouter(createMemoryHistory())
    await router.push('/projects/3')
    expect(router.currentRoute.value.name).toBe('sign-in')
    expect(router.currentRoute.value.query.redirect).toBe('/projects/3')
  })

  it('When a signed-in person opens a page their role allows, then it opens', async () => {
    signedInAs('annotator')
    const router = createAppRouter(createMemoryHistory())
    await router.push('/projects')
    expect(router.currentRoute.value.name).toBe('projects')
  })

  it("When the route's meta.requires is not allowed for any of the person's roles, then Forbidden names the action", async () => {
    signedInAs('annotator')
    const router = createAppRouter(createMemoryHistory())
    await router.push('/lab-admin')
    expect(router.currentRoute.value.name).toBe('forbidden')
    expect(router.currentRoute.value.query).toEqual({ action: 'lab.manage', from: '/lab-admin' })
  })

  it('When a signed-in person opens sign-in with a redirect, then they go straight there', async () => {
    signedInAs('pi')
    const router = createAppRouter(createMemoryHistory())
    await router.push({ name: 'sign-in', query: { redirect: '/samples' } })
    expect(router.currentRoute.value.name).toBe('samples')
  })
})

describe('safeRedirect', () => {
  it.each([
    ['/projects/3?tab=samples', '/projects/3?tab=samples'],
    ['//evil.example/steal', null],
    ['https://evil.example', null],
    [undefined, null],
  ])('When the redirect is %s, then %s is used', (value, expected) => {
    expect(safeRedirect(value)).toBe(expected)
  })
})
