/**
 * Personal API tokens against the real PostgreSQL: created once and stored hashed, listed without secrets; a bearer
 * token reads (GET) as its owner without a session or CSRF token, is refused for every write, and stops working when
 * revoked, expired, or its owner is deactivated.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createHash } from 'node:crypto'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { ApiToken, Membership, Project, User } from '../../server/models'

const sha256 = (text: string) => createHash('sha256').update(text).digest('hex')

describe('personal API tokens', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let reviewer: Awaited<ReturnType<typeof signIn>>

  beforeAll(async () => {
    ctx = startTestApp()
    home = await createLabWithRoles('Tokens')
    reviewer = await signIn(ctx.app, home.people.reviewer.email)
  })
  afterAll(() => ctx.stop())

  const createToken = async (session: Awaited<ReturnType<typeof signIn>>, body: object = { name: 'notebook' }) => {
    const res = await session.agent.post('/api/auth/tokens').set('x-csrf-token', session.csrf).send(body)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    return res.body as { id: number; token: string; displayPrefix: string; expiresAt: string | null }
  }
  const bearer = (token: string) => ({ Authorization: `Bearer ${token}` })

  describe('POST /api/auth/tokens and GET /api/auth/tokens', () => {
    it('When a token is created, then it is returned once with the rmn_ prefix, stored only as its SHA-256, and listed without the secret', async () => {
      const created = await createToken(reviewer, { name: 'analysis notebook' })
      expect(created.token).toMatch(/^rmn_[\w-]{43}$/)
      expect(created.displayPrefix).toBe(created.token.slice(0, 8))
      expect(created.expiresAt).toBeNull()
      const row = (await ApiToken.findByPk(created.id))!
      expect(row.tokenHash).toBe(sha256(created.token))
      expect(Object.values(row.get()).map(String)).not.toContain(created.token)
      const list = await reviewer.agent.get('/api/auth/tokens')
      expect(list.status).toBe(200)
      expect(list.body.find((t: { id: number }) => t.id === created.id)).toMatchObject({ name: 'analysis notebook', scope: 'read', revokedAt: null })
      expect(JSON.stringify(list.body)).not.toContain(created.token)
      expect(list.body.every((t: object) => !('token' in t))).toBe(true)
    })

    it('When expiresInDays is given, then the expiry is that many days ahead', async () => {
      const created = await createToken(reviewer, { name: 'short-lived', expiresInDays: 30 })
      expect(new Date(created.expiresAt!).getTime() - Date.now()).toBeCloseTo(30 * 86_400_000, -5)
    })
  })

  describe('Authorization: Bearer rmn_…', () => {
    it('When a token reads, then GET routes answer as its owner with no session cookie and no CSRF token, and last use is recorded', async () => {
      const { id, token } = await createToken(reviewer)
      const me = await request(ctx.app).get('/api/auth/me').set(bearer(token))
      expect(me.status).toBe(200)
      expect(me.body).toMatchObject({ id: home.people.reviewer.id, memberships: [{ labId: home.lab.id, role: 'reviewer' }], csrfToken: '' })
      expect(me.headers['set-cookie']).toBeUndefined()
      const projects = await request(ctx.app).get('/api/projects').set(bearer(token))
      expect(projects.status).toBe(200)
      expect(projects.body.map((p: { id: number }) => p.id)).toContain(home.project.id)
      // Scripts can pull the measurement table (the reviewer may export).
      const csv = await request(ctx.app).get(`/api/exports/measurements.csv?projectId=${home.project.id}`).set(bearer(token))
      expect(csv.status).toBe(200)
      expect(csv.text).toContain('mean width (nm)')
      expect((await ApiToken.findByPk(id))!.lastUsedAt).not.toBeNull()
    })

    const writes: { method: 'post' | 'patch' | 'delete'; path: string; body?: (labId: number) => object }[] = [
      { method: 'post', path: '/api/projects', body: (labId) => ({ labId, name: 'From a script' }) },
      { method: 'patch', path: '/api/samples/1', body: () => ({ notes: 'x' }) },
      { method: 'delete', path: '/api/auth/tokens/1' },
      { method: 'post', path: '/api/auth/tokens', body: () => ({ name: 'token minting a token' }) },
      { method: 'post', path: '/api/auth/logout' },
    ]
    it.each(writes)('When a token is used for $method $path, then 403 token-read-only and nothing changes', async ({ method, path, body }) => {
      const { token } = await createToken(reviewer)
      const projectsBefore = await Project.count()
      const tokensBefore = await ApiToken.count()
      const res = await request(ctx.app)[method](path).set(bearer(token)).send(body?.(home.lab.id))
      expect(res.status).toBe(403)
      expect(res.body.error.code).toBe('token-read-only')
      expect(await Project.count()).toBe(projectsBefore)
      expect(await ApiToken.count()).toBe(tokensBefore)
    })

    it('When the token is revoked, then it is refused with 401 invalid-token and a WWW-Authenticate header', async () => {
      const { id, token } = await createToken(reviewer)
      expect((await request(ctx.app).get('/api/projects').set(bearer(token))).status).toBe(200)
      const del = await reviewer.agent.delete(`/api/auth/tokens/${id}`).set('x-csrf-token', reviewer.csrf)
      expect(del.status).toBe(204)
      const res = await request(ctx.app).get('/api/projects').set(bearer(token))
      expect(res.status).toBe(401)
      expect(res.body.error.code).toBe('invalid-token')
      expect(res.headers['www-authenticate']).toBe('Bearer error="invalid_token"')
      expect((await reviewer.agent.get('/api/auth/tokens')).body.find((t: { id: number }) => t.id === id).revokedAt).not.toBeNull()
    })

    it('When the token is unknown, malformed or expired, then 401', async () => {
      expect((await request(ctx.app).get('/api/projects').set(bearer(`rmn_${'A'.repeat(43)}`))).status).toBe(401)
      expect((await request(ctx.app).get('/api/projects').set(bearer('not-a-remanence-token'))).status).toBe(401)
      const { id, token } = await createToken(reviewer, { name: 'expiring', expiresInDays: 1 })
      await ApiToken.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { id } })
      expect((await request(ctx.app).get('/api/projects').set(bearer(token))).status).toBe(401)
    })

    it('When the owner is deactivated, then the token stops working; when only their membership is, the lab\u2019s data answers 404', async () => {
      const lab = await createLabWithRoles('TokenOwner')
      const owner = await signIn(ctx.app, lab.people.pi.email)
      const { token } = await createToken(owner)
      expect((await request(ctx.app).get(`/api/labs/${lab.lab.id}/members`).set(bearer(token))).status).toBe(200)
      await Membership.update({ active: false }, { where: { labId: lab.lab.id, userId: lab.people.pi.id } })
      expect((await request(ctx.app).get(`/api/labs/${lab.lab.id}/members`).set(bearer(token))).status).toBe(404)
      await User.update({ active: false }, { where: { id: lab.people.pi.id } })
      const res = await request(ctx.app).get('/api/auth/me').set(bearer(token))
      expect(res.status).toBe(401)
      expect(res.body.error.code).toBe('invalid-token')
    })

    it('When someone else tries to revoke my token, then 404 and it keeps working', async () => {
      const { id, token } = await createToken(reviewer)
      const other = await signIn(ctx.app, home.people.admin.email)
      expect((await other.agent.delete(`/api/auth/tokens/${id}`).set('x-csrf-token', other.csrf)).status).toBe(404)
      expect((await request(ctx.app).get('/api/projects').set(bearer(token))).status).toBe(200)
    })
  })
})
