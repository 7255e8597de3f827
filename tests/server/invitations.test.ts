/**
 * Lab administration against the real PostgreSQL and SMTP sink: invitations (e-mailed link, once, expiry, existing
 * accounts), member role changes and deactivation with the last-manager rule, password reset, and the unlock link
 * sent when failed sign-ins lock an account.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createHash } from 'node:crypto'
import { createLabWithRoles, signIn, startTestApp, TEST_PASSWORD } from './testApp'
import { linkToken, mailsTo, waitForMail } from './mailbox'
import { LOCK_AFTER_FAILURES } from '../../server/auth/passport'
import { AuditEvent, Invitation, Membership, PasswordReset, User } from '../../server/models'
import { invitationHoursFromEnv } from '../../server/services/invitationService'

const sha256 = (text: string) => createHash('sha256').update(text).digest('hex')
const NEW_PASSWORD = 'a brand new passphrase 42'

describe('lab collaboration: invitations, members, password reset, unlock', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let pi: Awaited<ReturnType<typeof signIn>>

  beforeAll(async () => {
    ctx = startTestApp()
    home = await createLabWithRoles('Invite')
    pi = await signIn(ctx.app, home.people.pi.email)
  })
  afterAll(() => ctx.stop())

  const invite = (session: Awaited<ReturnType<typeof signIn>>, email: string, role = 'annotator', labId = home.lab.id) =>
    session.agent.post(`/api/labs/${labId}/invitations`).set('x-csrf-token', session.csrf).send({ email, role })

  async function invitedToken(email: string, role = 'annotator'): Promise<string> {
    const res = await invite(pi, email, role)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    return linkToken(await waitForMail(email, /Invitation to/), '/accept-invitation')
  }

  describe('POST /api/labs/:labId/invitations', () => {
    it('When a PI invites a new address, then the e-mail arrives with a link to the public URL and only the token\u2019s hash is stored', async () => {
      const email = `new.person.${Date.now()}@test.example`
      const res = await invite(pi, email, 'reviewer')
      expect(res.status).toBe(201)
      expect(res.body).toMatchObject({ email, role: 'reviewer', labId: home.lab.id, usedAt: null, invitedBy: { id: home.people.pi.id } })
      expect(JSON.stringify(res.body)).not.toMatch(/token/i)
      const mail = await waitForMail(email, new RegExp(`Invitation to ${home.lab.name}`))
      expect(mail.text).toContain(`${ctx.deps.config.publicUrl}/accept-invitation?token=`)
      const token = linkToken(mail, '/accept-invitation')
      expect(token).toMatch(/^[\w-]{43}$/)
      const stored = await Invitation.findByPk(res.body.id)
      expect(stored!.tokenHash).toBe(sha256(token))
      expect(Object.values(stored!.get()).map(String)).not.toContain(token)
      // INVITATION_HOURS default: 72 h
      expect(new Date(res.body.expiresAt).getTime() - Date.now()).toBeGreaterThan(71.9 * 3_600_000)
      const audit = await AuditEvent.findOne({ where: { action: 'invitation.create', entityId: res.body.id } })
      expect(audit!.after).toMatchObject({ email, role: 'reviewer' })
    })

    it.each([
      ['microscopist', 403],
      ['annotator', 403],
      ['reviewer', 403],
      ['admin', 201],
    ] as const)('When the %s of the lab invites, then %i', async (role, status) => {
      const session = await signIn(ctx.app, home.people[role].email)
      const res = await invite(session, `by.${role}.${Date.now()}@test.example`)
      expect(res.status).toBe(status)
    })

    it('When an admin of another lab invites into this lab, then 404 (no existence leak)', async () => {
      const other = await createLabWithRoles('InviteOther')
      const outsider = await signIn(ctx.app, other.people.admin.email)
      expect((await invite(outsider, 'x@test.example')).status).toBe(404)
    })

    it('When the mail relay is down, then 503 mail-unavailable and no invitation is kept', async () => {
      const noMail = startTestApp({ smtpUrl: 'smtp://127.0.0.1:1' })
      try {
        const session = await signIn(noMail.app, home.people.pi.email)
        const email = `unreachable.${Date.now()}@test.example`
        const res = await invite(session, email)
        expect(res.status).toBe(503)
        expect(res.body.error.code).toBe('mail-unavailable')
        expect(await Invitation.count({ where: { email } })).toBe(0)
      } finally {
        await noMail.stop()
      }
    })

    it('When INVITATION_HOURS is set, then it is the validity; a bad value fails fast', () => {
      expect(invitationHoursFromEnv({})).toBe(72)
      expect(invitationHoursFromEnv({ INVITATION_HOURS: '24' })).toBe(24)
      expect(() => invitationHoursFromEnv({ INVITATION_HOURS: 'soon' })).toThrow(/INVITATION_HOURS/)
    })

    it('When the address is already an active member, then 409 already-member and no e-mail', async () => {
      const before = (await mailsTo(home.people.reviewer.email)).length
      const res = await invite(pi, home.people.reviewer.email.toUpperCase())
      expect(res.status).toBe(409)
      expect(res.body.error.code).toBe('already-member')
      expect((await mailsTo(home.people.reviewer.email)).length).toBe(before)
    })
  })

  describe('GET /api/invitations/:token and POST /api/invitations/:token/accept', () => {
    it('When a new person accepts, then an account and membership exist, they are signed in, and the link works only once', async () => {
      const email = `joiner.${Date.now()}@test.example`
      const token = await invitedToken(email, 'annotator')
      const preview = await request(ctx.app).get(`/api/invitations/${token}`)
      expect(preview.status).toBe(200)
      expect(preview.body).toEqual({ labName: home.lab.name, role: 'annotator', email, expired: false, used: false, revoked: false, accountExists: false })

      const agent = request.agent(ctx.app)
      const res = await agent.post(`/api/invitations/${token}/accept`).send({ name: 'Joiner Person', password: NEW_PASSWORD })
      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body).toMatchObject({ email, name: 'Joiner Person', memberships: [{ labId: home.lab.id, labName: home.lab.name, role: 'annotator' }] })
      expect(res.body.csrfToken).toMatch(/\S{20,}/)
      expect((await agent.get('/api/auth/me')).body.email).toBe(email)
      const user = await User.findOne({ where: { email } })
      expect(await Membership.findOne({ where: { userId: user!.id, labId: home.lab.id, role: 'annotator', active: true } })).not.toBeNull()
      expect((await Invitation.findOne({ where: { tokenHash: sha256(token) } }))!.usedById).toBe(user!.id)

      const again = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ name: 'Someone Else', password: NEW_PASSWORD })
      expect(again.status).toBe(410)
      expect(again.body.error.code).toBe('invitation-used')
      expect((await request(ctx.app).get(`/api/invitations/${token}`)).body.used).toBe(true)
    })

    it('When the invitation has expired, then the preview says so and accepting is refused with 410 and creates nothing', async () => {
      const email = `late.${Date.now()}@test.example`
      const token = await invitedToken(email)
      await Invitation.update({ expiresAt: new Date(Date.now() - 60_000) }, { where: { tokenHash: sha256(token) } })
      expect((await request(ctx.app).get(`/api/invitations/${token}`)).body.expired).toBe(true)
      const res = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ name: 'Late Person', password: NEW_PASSWORD })
      expect(res.status).toBe(410)
      expect(res.body.error.code).toBe('invitation-expired')
      expect(await User.findOne({ where: { email } })).toBeNull()
    })

    it('When the password breaks the rules, then 400 weak-password and the invitation stays usable', async () => {
      const email = `weak.${Date.now()}@test.example`
      const token = await invitedToken(email)
      const res = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ name: 'Weak', password: 'short' })
      expect(res.status).toBe(400)
      expect(res.body.error.code).toBe('weak-password')
      expect(res.body.error.fields.password[0]).toMatch(/12 characters/)
      expect((await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ name: 'Weak', password: NEW_PASSWORD })).status).toBe(200)
    })

    it('When an existing account of another lab is invited, then it must give its own password and gains a second membership', async () => {
      const other = await createLabWithRoles('InviteExisting')
      const person = other.people.microscopist
      const token = await invitedToken(person.email, 'reviewer')
      expect((await request(ctx.app).get(`/api/invitations/${token}`)).body.accountExists).toBe(true)
      const wrong = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ password: 'not the password at all' })
      expect(wrong.status).toBe(401)
      const res = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ password: TEST_PASSWORD })
      expect(res.status).toBe(200)
      expect(res.body.memberships.map((m: { labId: number; role: string }) => [m.labId, m.role]).sort()).toEqual(
        [
          [other.lab.id, 'microscopist'],
          [home.lab.id, 'reviewer'],
        ].sort(),
      )
    })

    it('When a newer invitation is sent to the same address, then the older link stops working', async () => {
      const email = `twice.${Date.now()}@test.example`
      const first = await invitedToken(email)
      await new Promise((r) => setTimeout(r, 5))
      await invite(pi, email, 'reviewer')
      const res = await request(ctx.app).post(`/api/invitations/${first}/accept`).send({ name: 'Twice', password: NEW_PASSWORD })
      expect(res.status).toBe(410)
      expect(res.body.error.code).toBe('invitation-revoked')
    })

    it('When the token is unknown, then 404 invitation-not-found', async () => {
      const res = await request(ctx.app).get(`/api/invitations/${'x'.repeat(43)}`)
      expect(res.status).toBe(404)
      expect(res.body.error.code).toBe('invitation-not-found')
    })
  })

  describe('PATCH /api/labs/:labId/members/:userId', () => {
    it('When a PI changes a role, then 200, the new role applies at once and the audit log has before and after', async () => {
      const lab = await createLabWithRoles('Roles')
      const manager = await signIn(ctx.app, lab.people.pi.email)
      const target = await signIn(ctx.app, lab.people.microscopist.email)
      const res = await manager.agent.patch(`/api/labs/${lab.lab.id}/members/${lab.people.microscopist.id}`).set('x-csrf-token', manager.csrf).send({ role: 'reviewer' })
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ userId: lab.people.microscopist.id, role: 'reviewer', active: true })
      expect((await target.agent.get('/api/auth/me')).body.memberships[0].role).toBe('reviewer')
      const audit = await AuditEvent.findOne({ where: { action: 'membership.update', entityId: lab.people.microscopist.id, labId: lab.lab.id } })
      expect(audit!.before).toEqual({ role: 'microscopist', active: true })
      expect(audit!.after).toEqual({ role: 'reviewer', active: true })
    })

    it('When a member is deactivated, then they lose access to the lab but their account, membership row and work remain', async () => {
      const lab = await createLabWithRoles('Deactivate')
      const manager = await signIn(ctx.app, lab.people.admin.email)
      const annotator = await signIn(ctx.app, lab.people.annotator.email)
      expect((await annotator.agent.get(`/api/labs/${lab.lab.id}/members`)).status).toBe(200)
      const res = await manager.agent.patch(`/api/labs/${lab.lab.id}/members/${lab.people.annotator.id}`).set('x-csrf-token', manager.csrf).send({ active: false })
      expect(res.status).toBe(200)
      expect(res.body.active).toBe(false)
      expect((await annotator.agent.get(`/api/labs/${lab.lab.id}/members`)).status).toBe(404)
      expect((await annotator.agent.get('/api/projects')).body).toEqual([])
      const row = await Membership.findOne({ where: { labId: lab.lab.id, userId: lab.people.annotator.id } })
      expect(row!.active).toBe(false)
      expect(row!.role).toBe('annotator')
      const members = await manager.agent.get(`/api/labs/${lab.lab.id}/members`)
      expect(members.body.find((m: { userId: number }) => m.userId === lab.people.annotator.id)).toMatchObject({ active: false })
      // re-activation restores access with the same role
      await manager.agent.patch(`/api/labs/${lab.lab.id}/members/${lab.people.annotator.id}`).set('x-csrf-token', manager.csrf).send({ active: true })
      expect((await annotator.agent.get(`/api/labs/${lab.lab.id}/members`)).status).toBe(200)
    })

    it('When the change would leave no active admin or PI, then 409 last-manager; while another manager exists it is allowed', async () => {
      const lab = await createLabWithRoles('LastManager')
      const manager = await signIn(ctx.app, lab.people.pi.email)
      const patch = (userId: number, body: object) => manager.agent.patch(`/api/labs/${lab.lab.id}/members/${userId}`).set('x-csrf-token', manager.csrf).send(body)
      expect((await patch(lab.people.admin.id, { role: 'reviewer' })).status).toBe(200)
      const demote = await patch(lab.people.pi.id, { role: 'annotator' })
      expect(demote.status).toBe(409)
      expect(demote.body.error.code).toBe('last-manager')
      const deactivate = await patch(lab.people.pi.id, { active: false })
      expect(deactivate.status).toBe(409)
      expect((await Membership.findOne({ where: { labId: lab.lab.id, userId: lab.people.pi.id } }))!.get()).toMatchObject({ role: 'pi', active: true })
      expect((await patch(lab.people.admin.id, { role: 'admin' })).status).toBe(200)
      expect((await patch(lab.people.pi.id, { role: 'annotator' })).status).toBe(200)
    })

    it('When a manager deactivates themselves, then 409 own-membership and nothing changes; another manager may', async () => {
      const lab = await createLabWithRoles('OwnMembership')
      const pi = await signIn(ctx.app, lab.people.pi.email)
      const admin = await signIn(ctx.app, lab.people.admin.email)
      const self = await pi.agent.patch(`/api/labs/${lab.lab.id}/members/${lab.people.pi.id}`).set('x-csrf-token', pi.csrf).send({ active: false })
      expect(self.status).toBe(409)
      expect(self.body.error.code).toBe('own-membership')
      expect((await Membership.findOne({ where: { labId: lab.lab.id, userId: lab.people.pi.id } }))!.active).toBe(true)
      expect((await pi.agent.get(`/api/labs/${lab.lab.id}/members`)).status).toBe(200)
      const byOther = await admin.agent.patch(`/api/labs/${lab.lab.id}/members/${lab.people.pi.id}`).set('x-csrf-token', admin.csrf).send({ active: false })
      expect(byOther.status).toBe(200)
      expect(byOther.body.active).toBe(false)
    })

    it('When an annotator tries to change a role, then 403', async () => {
      const session = await signIn(ctx.app, home.people.annotator.email)
      const res = await session.agent.patch(`/api/labs/${home.lab.id}/members/${home.people.reviewer.id}`).set('x-csrf-token', session.csrf).send({ role: 'admin' })
      expect(res.status).toBe(403)
    })
  })

  describe('password reset', () => {
    it('When an unknown address asks, then 202 and no e-mail is sent', async () => {
      const email = `nobody.${Date.now()}@test.example`
      const res = await request(ctx.app).post('/api/auth/password-reset').send({ email })
      expect(res.status).toBe(202)
      await new Promise((r) => setTimeout(r, 500))
      expect(await mailsTo(email)).toEqual([])
    })

    it('When the link is used, then the new password works, the old one and old sessions do not, and the link works once', async () => {
      const { people } = await createLabWithRoles('Reset')
      const before = await signIn(ctx.app, people.reviewer.email)
      expect((await request(ctx.app).post('/api/auth/password-reset').send({ email: people.reviewer.email })).status).toBe(202)
      const mail = await waitForMail(people.reviewer.email, /Reset your Remanence password/)
      const token = linkToken(mail, '/reset-password')
      expect((await PasswordReset.findOne({ where: { tokenHash: sha256(token) } }))!.purpose).toBe('password-reset')
      expect((await request(ctx.app).get(`/api/auth/password-reset/${token}`)).body).toEqual({ expired: false, used: false })

      const weak = await request(ctx.app).post(`/api/auth/password-reset/${token}`).send({ password: 'short' })
      expect(weak.status).toBe(400)
      expect(weak.body.error.code).toBe('weak-password')
      expect((await request(ctx.app).post(`/api/auth/password-reset/${token}`).send({ password: NEW_PASSWORD })).status).toBe(204)

      expect((await before.agent.get('/api/auth/me')).status).toBe(401)
      expect((await request(ctx.app).post('/api/auth/login').send({ email: people.reviewer.email, password: TEST_PASSWORD })).status).toBe(401)
      expect((await request(ctx.app).post('/api/auth/login').send({ email: people.reviewer.email, password: NEW_PASSWORD })).status).toBe(200)
      const reuse = await request(ctx.app).post(`/api/auth/password-reset/${token}`).send({ password: 'yet another passphrase 7' })
      expect(reuse.status).toBe(410)
      expect(reuse.body.error.code).toBe('link-used')
    })

    it('When the link is older than an hour, then 410 link-expired and the password is unchanged', async () => {
      const { people } = await createLabWithRoles('ResetLate')
      await request(ctx.app).post('/api/auth/password-reset').send({ email: people.annotator.email })
      const token = linkToken(await waitForMail(people.annotator.email, /Reset your/), '/reset-password')
      const link = await PasswordReset.findOne({ where: { tokenHash: sha256(token) } })
      // 1 h validity: the stored expiry is 60 min after creation
      expect(link!.expiresAt.getTime() - link!.createdAt.getTime()).toBe(3_600_000)
      await link!.update({ expiresAt: new Date(Date.now() - 1000) })
      const res = await request(ctx.app).post(`/api/auth/password-reset/${token}`).send({ password: NEW_PASSWORD })
      expect(res.status).toBe(410)
      expect(res.body.error.code).toBe('link-expired')
      expect((await request(ctx.app).post('/api/auth/login').send({ email: people.annotator.email, password: TEST_PASSWORD })).status).toBe(200)
    })

    it('When the account is deactivated after the link was sent, then 410 account-inactive, the link stays unused and the password unchanged', async () => {
      const { people } = await createLabWithRoles('ResetGone')
      await request(ctx.app).post('/api/auth/password-reset').send({ email: people.microscopist.email })
      const token = linkToken(await waitForMail(people.microscopist.email, /Reset your/), '/reset-password')
      await User.update({ active: false }, { where: { email: people.microscopist.email } })
      const res = await request(ctx.app).post(`/api/auth/password-reset/${token}`).send({ password: NEW_PASSWORD })
      expect(res.status).toBe(410)
      expect(res.body.error.code).toBe('account-inactive')
      expect(res.body.error.message).toMatch(/deactivated/)
      expect((await PasswordReset.findOne({ where: { tokenHash: sha256(token) } }))!.usedAt).toBeNull()
      const user = await User.findOne({ where: { email: people.microscopist.email } })
      await user!.update({ active: true })
      expect((await request(ctx.app).post('/api/auth/login').send({ email: people.microscopist.email, password: TEST_PASSWORD })).status).toBe(200)
    })

    it('When an address exceeds the request limit, then 429', async () => {
      const limited = startTestApp({ loginRateLimit: { windowMs: 60_000, max: 2 } })
      try {
        const codes = []
        for (let i = 0; i < 3; i++) codes.push((await request(limited.app).post('/api/auth/password-reset').send({ email: 'someone@test.example' })).status)
        expect(codes).toEqual([202, 202, 429])
      } finally {
        await limited.stop()
      }
    })
  })

  describe('POST /api/auth/unlock/:token', () => {
    it(`When ${LOCK_AFTER_FAILURES} failed sign-ins lock the account, then an unlock link is e-mailed and lifts the lock once`, async () => {
      const { people } = await createLabWithRoles('Unlock')
      const email = people.microscopist.email
      for (let i = 0; i < LOCK_AFTER_FAILURES; i++) await request(ctx.app).post('/api/auth/login').send({ email, password: `wrong password ${i}` })
      expect((await request(ctx.app).post('/api/auth/login').send({ email, password: TEST_PASSWORD })).status).toBe(423)
      const mail = await waitForMail(email, /locked/)
      expect((await mailsTo(email)).filter((m) => /locked/.test(m.subject))).toHaveLength(1)
      const token = linkToken(mail, '/unlock-account')
      expect((await request(ctx.app).post(`/api/auth/unlock/${token}`)).status).toBe(204)
      expect((await User.findByPk(people.microscopist.id))!.lockedUntil).toBeNull()
      expect((await request(ctx.app).post('/api/auth/login').send({ email, password: TEST_PASSWORD })).status).toBe(200)
      const reuse = await request(ctx.app).post(`/api/auth/unlock/${token}`)
      expect(reuse.status).toBe(410)
    })
  })
})
