/**
 * One table-driven walk over every route in /api/openapi.json, for anonymous callers, a member of another lab, and
 * every role of the owning lab. Promises checked: anonymous callers get 401 on every non-public route; a member of
 * another lab never gets a 2xx or a 5xx on a route that names this lab's objects, and GET answers exactly 404 (no
 * existence leak); no role of the lab ever gets a 5xx from a GET. The role-by-role allowed/denied outcomes of the
 * mutating routes are checked against the permissions table in tests/server/permissions.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { saveAutoMask, uploadImage } from './analysisFixtures'
import { LAB_ROLES } from '../../shared/auth/permissions'
import { Sample, StackRun } from '../../server/models'

interface Operation {
  method: 'get' | 'post' | 'put' | 'patch' | 'delete'
  path: string
  isPublic: boolean
}

describe('access control over every documented route', () => {
  let ctx: ReturnType<typeof startTestApp>
  let operations: Operation[]
  const ids: Record<string, string> = {}
  const sessions: Record<string, Awaited<ReturnType<typeof signIn>>> = {}

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    const home = await createLabWithRoles('Walk')
    const other = await createLabWithRoles('WalkOther')
    for (const role of LAB_ROLES) sessions[role] = await signIn(ctx.app, home.people[role].email)
    sessions.outsider = await signIn(ctx.app, other.people.admin.email)

    const sample = await Sample.create({ projectId: home.project.id, name: 'W1', thicknessNm: 1, annealTemperatureC: 300, annealDurationMin: 60, annealFieldMT: null })
    const frames = [renderLabyrinth({ size: 64, periodPx: 12, seed: 1 }).image, renderLabyrinth({ size: 64, periodPx: 12, seed: 2 }).image]
    const { imageId, frameIds } = await uploadImage(sessions.microscopist, home.project.id, { name: 'walk.tif', frames, pixelSizeNm: 50, sampleId: sample.id, fieldsMT: [1, -1] })
    const analysis = await saveAutoMask(sessions.annotator, frameIds[0], frames[0], 50)
    const comment = await sessions.reviewer.agent.post(`/api/analyses/${analysis.id}/comments`).set('x-csrf-token', sessions.reviewer.csrf).send({ body: 'pin', x: 3, y: 4 })
    const run = await StackRun.create({ imageId, recipe: {}, engineVersion: 'walk', framesTotal: 2, threshold: null, summary: null, error: null, worker: null, heartbeatAt: null, startedAt: null, finishedAt: null, createdById: home.people.pi.id })
    const comparison = await sessions.pi.agent.post('/api/comparisons').set('x-csrf-token', sessions.pi.csrf).send({ name: 'walk', query: { projectId: home.project.id, measure: 'meanWidth', groupBy: 'annealTemperatureC' } })
    const material = await sessions.pi.agent.post(`/api/labs/${home.lab.id}/materials`).set('x-csrf-token', sessions.pi.csrf).send({ name: 'Walk alloy', msAPerM: 8e5, aJPerM: 1.3e-11, kJPerM3: 100, tcK: null, source: 'test' })
    const invitation = await sessions.admin.agent.post(`/api/labs/${home.lab.id}/invitations`).set('x-csrf-token', sessions.admin.csrf).send({ email: 'walk-invitee@test.example', role: 'annotator' })
    const token = await sessions.pi.agent.post('/api/auth/tokens').set('x-csrf-token', sessions.pi.csrf).send({ name: 'walk' })
    Object.assign(ids, {
      labId: String(home.lab.id),
      projectId: String(home.project.id),
      sampleId: String(sample.id),
      imageId: String(imageId),
      frameId: String(frameIds[0]),
      index: '0',
      version: '1',
      analysisId: String(analysis.id),
      commentId: String(comment.body.id ?? 1),
      runId: String(run.id),
      comparisonId: String(comparison.body.id ?? 1),
      id: String(material.body.id ?? 1),
      invitationId: String(invitation.body.id ?? 1),
      tokenId: String(token.body.id ?? 1),
      userId: String(home.people.annotator.id),
      token: 'not-a-real-token',
    })
    const doc = (await request(ctx.app).get('/api/openapi.json')).body as { paths: Record<string, Record<string, { security?: unknown[] }>> }
    operations = Object.entries(doc.paths).flatMap(([path, item]) =>
      Object.entries(item).map(([method, op]) => ({ method: method as Operation['method'], path, isPublic: Array.isArray(op.security) && op.security.length === 0 })),
    )
  }, 120_000)
  afterAll(() => ctx.stop())

  const url = (path: string) => path.replace(/^\/api/, '/api').replace(/\{(\w+)\}/g, (_, name: string) => ids[name] ?? '1')
  const call = (agent: ReturnType<typeof request.agent> | ReturnType<typeof request>, op: Operation, csrf = '') => {
    const target = url(op.path)
    const r = (agent as ReturnType<typeof request.agent>)[op.method](target)
    return op.method === 'get' ? r : r.set('x-csrf-token', csrf).send({})
  }

  it('When walked, then the document has every kind of route this test knows how to fill in', () => {
    expect(operations.length).toBeGreaterThan(40)
    const unknown = operations.flatMap((op) => [...op.path.matchAll(/\{(\w+)\}/g)].map((m) => m[1])).filter((name) => !(name in ids))
    expect(unknown).toEqual([])
  })

  it('When nobody is signed in, then every non-public route answers 401 and public ones never 5xx', async () => {
    const wrong: string[] = []
    for (const op of operations) {
      const res = await call(request(ctx.app), op)
      if (op.isPublic ? res.status >= 500 : res.status !== 401) wrong.push(`${op.method.toUpperCase()} ${op.path} → ${res.status}`)
    }
    expect(wrong).toEqual([])
  })

  it('When a member of another lab calls routes naming this lab\u2019s objects, then never 2xx or 5xx, and GET answers 404', async () => {
    const wrong: string[] = []
    let checked = 0
    const { agent, csrf } = sessions.outsider
    for (const op of operations) {
      const names = [...op.path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).filter((n) => n !== 'token')
      if (op.isPublic || names.length === 0) continue
      checked++
      const res = await call(agent, op, csrf)
      const ok = op.method === 'get' ? res.status === 404 : res.status >= 400 && res.status < 500 && res.status !== 401
      if (!ok) wrong.push(`${op.method.toUpperCase()} ${op.path} → ${res.status}`)
    }
    expect(wrong).toEqual([])
    expect(checked).toBeGreaterThan(30)
  })

  it.each(LAB_ROLES)('When the lab\u2019s %s reads every GET route, then no 5xx and only 2xx, 403 or a documented 4xx', async (role) => {
    const wrong: string[] = []
    const { agent } = sessions[role]
    for (const op of operations.filter((o) => o.method === 'get')) {
      const res = await call(agent, op)
      if (res.status >= 500 || res.status === 401) wrong.push(`${op.path} → ${res.status}`)
    }
    expect(wrong).toEqual([])
  })
})
