/**
 * A lab's own material constants (GET/POST /api/labs/:labId/materials, PATCH/DELETE …/:id) against the real
 * PostgreSQL: who may read and write (read 'lab.read', write 'sample.edit'), validation of SI values, unique names,
 * the audit trail, and isolation between labs.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { AuditEvent, LabMaterial } from '../../server/models'
import { LAB_ROLES, roleAllows } from '../../shared/auth/permissions'

/** A CoFeB-like film's constants as a lab might enter them (values only need to be valid SI here). */
const COFEB = { name: 'CoFeB 1 nm', msAPerM: 1.1e6, aJPerM: 15e-12, kJPerM3: 2.5e5, tcK: null, source: 'Own SQUID loop, 2026; A from literature' }

describe('lab materials', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let other: Awaited<ReturnType<typeof createLabWithRoles>>
  const sessions = {} as Record<(typeof LAB_ROLES)[number], Awaited<ReturnType<typeof signIn>>>

  beforeAll(async () => {
    ctx = startTestApp()
    home = await createLabWithRoles('Materials')
    other = await createLabWithRoles('Other materials')
    for (const role of LAB_ROLES) sessions[role] = await signIn(ctx.app, home.people[role].email)
  })
  afterAll(async () => {
    await ctx.stop()
  })

  const base = () => `/api/labs/${home.lab.id}/materials`

  describe('POST /api/labs/:labId/materials', () => {
    it.each(LAB_ROLES.map((role) => [role, roleAllows(role, 'sample.edit')] as const))('When a %s adds a material, then allowed = %s', async (role, allowed) => {
      const s = sessions[role]
      const res = await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: `${COFEB.name} by ${role}` })
      expect(res.status).toBe(allowed ? 201 : 403)
      const stored = await LabMaterial.findOne({ where: { labId: home.lab.id, name: `${COFEB.name} by ${role}` } })
      expect(stored !== null).toBe(allowed)
      if (allowed) {
        expect(res.body).toMatchObject({ ...COFEB, name: `${COFEB.name} by ${role}`, labId: home.lab.id })
        const audit = await AuditEvent.findOne({ where: { action: 'lab-material.create', entityId: res.body.id } })
        expect(audit?.actorId).toBe(home.people[role].id)
        expect(audit?.after).toMatchObject({ msAPerM: COFEB.msAPerM, source: COFEB.source })
      }
    })

    it('When the exchange stiffness is typed in pJ/m (21 instead of 21e-12), then 400 naming the field and nothing is stored', async () => {
      const s = sessions.microscopist
      const before = await LabMaterial.count()
      const res = await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: 'Fe typo', aJPerM: 21 })
      expect(res.status).toBe(400)
      expect(res.body.error.code).toBe('invalid-input')
      expect(res.body.error.fields).toHaveProperty('aJPerM')
      expect(await LabMaterial.count()).toBe(before)
    })

    it('When Ms is not positive, then 400', async () => {
      const s = sessions.pi
      const res = await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: 'Zero Ms', msAPerM: 0 })
      expect(res.status).toBe(400)
      expect(res.body.error.fields).toHaveProperty('msAPerM')
    })

    it('When a negative cubic K1 is given (Ni-like), then it is stored signed', async () => {
      const s = sessions.pi
      const res = await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ name: 'Ni film', msAPerM: 4.9e5, aJPerM: 9e-12, kJPerM3: -4.5e3, tcK: 628, source: 'METHODS §7.3 table' })
      expect(res.status).toBe(201)
      expect(res.body.kJPerM3).toBe(-4.5e3)
      expect(res.body.tcK).toBe(628)
    })

    it('When the name exists in the lab already, then 409 material-name-taken; another lab may use the name', async () => {
      const s = sessions.admin
      await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: 'Duplicate me' }).expect(201)
      const again = await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: 'Duplicate me' })
      expect(again.status).toBe(409)
      expect(again.body.error.code).toBe('material-name-taken')
      const elsewhere = await signIn(ctx.app, other.people.microscopist.email)
      await elsewhere.agent.post(`/api/labs/${other.lab.id}/materials`).set('x-csrf-token', elsewhere.csrf).send({ ...COFEB, name: 'Duplicate me' }).expect(201)
    })

    it('When a member of another lab posts to this lab, then 404 (no existence leak)', async () => {
      const elsewhere = await signIn(ctx.app, other.people.admin.email)
      const res = await elsewhere.agent.post(base()).set('x-csrf-token', elsewhere.csrf).send({ ...COFEB, name: 'Intruder' })
      expect(res.status).toBe(404)
      expect(await LabMaterial.count({ where: { name: 'Intruder' } })).toBe(0)
    })
  })

  describe('GET /api/labs/:labId/materials', () => {
    it('When any member reads the table, then the lab’s materials come back by name, and no other lab’s', async () => {
      for (const role of LAB_ROLES) {
        const res = await sessions[role].agent.get(base())
        expect(res.status).toBe(200)
        const names = (res.body as { name: string; labId: number }[]).map((m) => m.name)
        expect(names).toEqual([...names].sort((a, b) => a.localeCompare(b, 'en')))
        expect(names).toContain('Ni film')
        expect((res.body as { labId: number }[]).every((m) => m.labId === home.lab.id)).toBe(true)
      }
    })

    it('When nobody is signed in, then 401; when a non-member asks, then 404', async () => {
      await request(ctx.app).get(base()).expect(401)
      const elsewhere = await signIn(ctx.app, other.people.reviewer.email)
      await elsewhere.agent.get(base()).expect(404)
    })
  })

  describe('PATCH /api/labs/:labId/materials/:id', () => {
    it('When a microscopist corrects K, then only K changes and the audit log has before and after', async () => {
      const s = sessions.microscopist
      const created = (await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: 'To correct' }).expect(201)).body
      const res = await s.agent.patch(`${base()}/${created.id}`).set('x-csrf-token', s.csrf).send({ kJPerM3: 3e5 })
      expect(res.status).toBe(200)
      expect(res.body).toMatchObject({ ...COFEB, name: 'To correct', kJPerM3: 3e5 })
      const audit = await AuditEvent.findOne({ where: { action: 'lab-material.update', entityId: created.id } })
      expect(audit?.before).toMatchObject({ kJPerM3: COFEB.kJPerM3 })
      expect(audit?.after).toMatchObject({ kJPerM3: 3e5 })
    })

    it('When a reviewer tries to edit, then 403 and the row is unchanged', async () => {
      const material = await LabMaterial.findOne({ where: { labId: home.lab.id, name: 'Ni film' } })
      const s = sessions.reviewer
      await s.agent.patch(`${base()}/${material!.id}`).set('x-csrf-token', s.csrf).send({ msAPerM: 1 }).expect(403)
      await material!.reload()
      expect(material!.msAPerM).toBe(4.9e5)
    })

    it('When the id belongs to another lab’s material, then 404', async () => {
      const foreign = await LabMaterial.findOne({ where: { labId: other.lab.id } })
      const s = sessions.admin
      await s.agent.patch(`${base()}/${foreign!.id}`).set('x-csrf-token', s.csrf).send({ msAPerM: 1 }).expect(404)
    })
  })

  describe('DELETE /api/labs/:labId/materials/:id', () => {
    it('When a PI removes a material, then 204, the row is gone and the audit log keeps its values', async () => {
      const s = sessions.pi
      const created = (await s.agent.post(base()).set('x-csrf-token', s.csrf).send({ ...COFEB, name: 'To remove' }).expect(201)).body
      await s.agent.delete(`${base()}/${created.id}`).set('x-csrf-token', s.csrf).expect(204)
      expect(await LabMaterial.findByPk(created.id)).toBeNull()
      const audit = await AuditEvent.findOne({ where: { action: 'lab-material.delete', entityId: created.id } })
      expect(audit?.before).toMatchObject({ name: 'To remove', aJPerM: COFEB.aJPerM })
      await s.agent.delete(`${base()}/${created.id}`).set('x-csrf-token', s.csrf).expect(404)
    })

    it('When an annotator tries to remove one, then 403', async () => {
      const material = await LabMaterial.findOne({ where: { labId: home.lab.id, name: 'Ni film' } })
      const s = sessions.annotator
      await s.agent.delete(`${base()}/${material!.id}`).set('x-csrf-token', s.csrf).expect(403)
      expect(await LabMaterial.findByPk(material!.id)).not.toBeNull()
    })
  })
})
