/**
 * The role/permission matrix on the routes that exist, checked against the one permissions table in
 * shared/auth/permissions.ts (the same table the client reads to hide actions).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { LAB_ROLES, roleAllows, type LabAction, type LabRole } from '../../shared/auth/permissions'
import { Project, Sample } from '../../server/models'

interface Case {
  name: string
  action: LabAction
  call: (agent: ReturnType<typeof request.agent>, csrf: string, ids: { labId: number; projectId: number; sampleId: number }) => Promise<request.Response>
  success: number
}

const cases: Case[] = [
  { name: 'GET /api/projects/:id/samples', action: 'lab.read', success: 200, call: (a, _c, ids) => a.get(`/api/projects/${ids.projectId}/samples`) },
  { name: 'GET /api/labs/:id/members', action: 'lab.read', success: 200, call: (a, _c, ids) => a.get(`/api/labs/${ids.labId}/members`) },
  { name: 'POST /api/projects', action: 'project.create', success: 201, call: (a, c, ids) => a.post('/api/projects').set('x-csrf-token', c).send({ labId: ids.labId, name: 'Matrix project' }) },
  {
    name: 'POST /api/projects/:id/samples',
    action: 'sample.edit',
    success: 201,
    call: (a, c, ids) => a.post(`/api/projects/${ids.projectId}/samples`).set('x-csrf-token', c).send({ name: 'Matrix sample', annealTemperatureC: 300 }),
  },
  { name: 'PATCH /api/samples/:id', action: 'sample.edit', success: 200, call: (a, c, ids) => a.patch(`/api/samples/${ids.sampleId}`).set('x-csrf-token', c).send({ notes: 'edited' }) },
  { name: 'GET /api/labs/:id/invitations', action: 'lab.manage', success: 200, call: (a, _c, ids) => a.get(`/api/labs/${ids.labId}/invitations`) },
  {
    name: 'POST /api/comparisons/compute',
    action: 'comparison.use',
    success: 200,
    call: (a, c, ids) => a.post('/api/comparisons/compute').set('x-csrf-token', c).send({ projectId: ids.projectId, measure: 'meanWidth', groupBy: 'annealTemperatureC' }),
  },
  { name: 'GET /api/exports/measurements.csv', action: 'export.tables', success: 200, call: (a, _c, ids) => a.get(`/api/exports/measurements.csv?projectId=${ids.projectId}`) },
  { name: 'GET /api/samples/:id/report', action: 'export.tables', success: 200, call: (a, _c, ids) => a.get(`/api/samples/${ids.sampleId}/report`) },
]

describe('role/permission matrix', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let other: Awaited<ReturnType<typeof createLabWithRoles>>
  let sampleId: number
  const sessions = {} as Record<LabRole | 'outsider', { agent: ReturnType<typeof request.agent>; csrf: string }>

  beforeAll(async () => {
    ctx = startTestApp()
    home = await createLabWithRoles('Home')
    other = await createLabWithRoles('Other')
    sampleId = (await Sample.create({ projectId: home.project.id, name: 'S1', thicknessNm: 2, annealTemperatureC: 250, annealDurationMin: 30, annealFieldMT: null })).id
    for (const role of LAB_ROLES) sessions[role] = await signIn(ctx.app, home.people[role].email)
    sessions.outsider = await signIn(ctx.app, other.people.admin.email)
  })
  afterAll(() => ctx.stop())

  for (const c of cases) {
    for (const role of LAB_ROLES) {
      const allowed = roleAllows(role, c.action)
      it(`When a ${role} calls ${c.name}, then ${allowed ? c.success : 403}`, async () => {
        const { agent, csrf } = sessions[role]
        const res = await c.call(agent, csrf, { labId: home.lab.id, projectId: home.project.id, sampleId })
        expect(res.status).toBe(allowed ? c.success : 403)
        if (!allowed) expect(res.body.error.code).toBe('forbidden')
      })
    }
    it(`When an admin of another lab calls ${c.name}, then 404 (no existence leak)`, async () => {
      const { agent, csrf } = sessions.outsider
      const res = await c.call(agent, csrf, { labId: home.lab.id, projectId: home.project.id, sampleId })
      expect(res.status).toBe(404)
    })
    it(`When nobody is signed in and calls ${c.name}, then 401`, async () => {
      const res = await c.call(request.agent(ctx.app), '', { labId: home.lab.id, projectId: home.project.id, sampleId })
      expect(res.status).toBe(401)
    })
  }

  it('When a PI edits a sample, then the change is in the audit log with before and after', async () => {
    const { agent, csrf } = sessions.pi
    await agent.patch(`/api/samples/${sampleId}`).set('x-csrf-token', csrf).send({ annealTemperatureC: 275 })
    const { AuditEvent } = await import('../../server/models')
    const events = await AuditEvent.findAll({ where: { entityType: 'sample', entityId: sampleId, action: 'sample.update' }, order: [['id', 'DESC']] })
    const last = events[0]
    expect(last.actorId).toBe(home.people.pi.id)
    expect(last.after).toMatchObject({ annealTemperatureC: 275 })
  })

  it('When the project list is read, then only the own lab\'s projects appear', async () => {
    const res = await sessions.outsider.agent.get('/api/projects')
    const labIds = new Set(res.body.map((p: { labId: number }) => p.labId))
    expect([...labIds]).toEqual([other.lab.id])
    expect(await Project.count({ where: { labId: home.lab.id } })).toBeGreaterThan(0)
  })
})
