/**
 * The signed-in person is reused between requests for a few seconds (server/auth/sessionUser.ts), against the real
 * PostgreSQL: every change of a role, membership or account made through the app — through its API, a bulk update or
 * inside a transaction — shows on the very next request.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { Lab, Membership, User } from '../../server/models'

describe('the signed-in person between requests', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let admin: Awaited<ReturnType<typeof signIn>>

  beforeAll(async () => {
    ctx = startTestApp()
    home = await createLabWithRoles('Reuse')
    admin = await signIn(ctx.app, home.people.admin.email)
  })
  afterAll(() => ctx.stop())

  const roleOf = async (session: Awaited<ReturnType<typeof signIn>>) => {
    const me = await session.agent.get('/api/auth/me')
    return me.status === 200 ? (me.body.memberships as { labId: number; role: string }[]).find((m) => m.labId === home.lab.id)?.role ?? null : me.status
  }

  it('When an admin changes a role through the API, then the member\u2019s next request has the new role', async () => {
    const annotator = await signIn(ctx.app, home.people.annotator.email)
    expect(await roleOf(annotator)).toBe('annotator')
    expect((await annotator.agent.post(`/api/projects`).set('x-csrf-token', annotator.csrf).send({ labId: home.lab.id, name: 'not mine to make' })).status).toBe(403)
    const res = await admin.agent.patch(`/api/labs/${home.lab.id}/members/${home.people.annotator.id}`).set('x-csrf-token', admin.csrf).send({ role: 'pi' })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect(await roleOf(annotator)).toBe('pi')
    expect((await annotator.agent.post(`/api/projects`).set('x-csrf-token', annotator.csrf).send({ labId: home.lab.id, name: 'now allowed' })).status).toBe(201)
  })

  it('When a membership is ended or an account deactivated by a bulk update, then the next request no longer has it', async () => {
    const reviewer = await signIn(ctx.app, home.people.reviewer.email)
    expect(await roleOf(reviewer)).toBe('reviewer')
    await Membership.update({ active: false }, { where: { labId: home.lab.id, userId: home.people.reviewer.id } })
    expect(await roleOf(reviewer)).toBeNull()
    const microscopist = await signIn(ctx.app, home.people.microscopist.email)
    expect(await roleOf(microscopist)).toBe('microscopist')
    await User.update({ active: false }, { where: { id: home.people.microscopist.id } })
    expect(await roleOf(microscopist)).toBe(401)
  })

  it('When a change is made inside a transaction, then a request read before the commit is not reused after it', async () => {
    const pi = await signIn(ctx.app, home.people.pi.email)
    const newName = `Renamed ${home.lab.name}`
    await ctx.deps.sequelize.transaction(async (transaction) => {
      await Lab.update({ name: newName }, { where: { id: home.lab.id }, transaction })
      // Read while the rename is uncommitted: the old name, which must not be kept once the rename commits.
      const during = await pi.agent.get('/api/auth/me')
      expect(during.body.memberships.find((m: { labId: number }) => m.labId === home.lab.id).labName).toBe(home.lab.name)
    })
    const after = await pi.agent.get('/api/auth/me')
    expect(after.body.memberships.find((m: { labId: number }) => m.labId === home.lab.id).labName).toBe(newName)
  })
})
