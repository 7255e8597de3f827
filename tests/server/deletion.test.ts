/**
 * Deleting softly first (issue #9, data safety): a deleted image or project disappears from every list and every
 * route naming it answers 404, yet it comes back byte for byte within the retention period; a purge (on request or by
 * the retention sweep) removes the rows and every stored object and audits who, what, when and the SHA-256.
 * Expected values are constructed: the SHA-256 of the bytes the test uploads, the objects it made, the dates it set.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createHash } from 'node:crypto'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { saveAutoMask, submitAndApprove, type Session } from './analysisFixtures'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import type { GrayImage } from '../../shared/analysis/types'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { LAB_ROLES, roleAllows, type LabRole } from '../../shared/auth/permissions'
import type { DeletedItemsDto } from '../../shared/types/deletion'
import { Analysis, Annotation, AuditEvent, Comment, Frame, Image, Project, Review, Sample, StackFrameResult, StackRun } from '../../server/models'
import { createDeletionService } from '../../server/services/deletionService'

const DAY_MS = 86_400_000
/** The default of DELETE_RETENTION_DAYS, which the test app keeps. */
const RETENTION_DAYS = 30

interface Operation {
  path: string
  params: string[]
}

describe('deleting images and projects', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let getRoutes: Operation[]
  const sessions = {} as Record<LabRole | 'outsider', Session & { user: { id: number; name: string } }>
  let seed = 500

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Deletion')
    const other = await createLabWithRoles('DeletionOther')
    for (const role of LAB_ROLES) sessions[role] = await signIn(ctx.app, home.people[role].email)
    sessions.outsider = await signIn(ctx.app, other.people.admin.email)
    const doc = (await request(ctx.app).get('/api/openapi.json')).body as { paths: Record<string, Record<string, unknown>> }
    getRoutes = Object.entries(doc.paths)
      .filter(([, item]) => 'get' in item)
      .map(([path]) => ({ path, params: [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]) }))
  }, 120_000)
  afterAll(() => ctx.stop())

  /** A small stack of distinct labyrinth frames (a new seed each time, so no two uploads are duplicates). */
  function stackFile(frameCount = 2): { bytes: Buffer; frames: GrayImage[] } {
    const frames = Array.from({ length: frameCount }, () => renderLabyrinth({ size: 32, periodPx: 8, seed: seed++ }).image)
    return { bytes: Buffer.from(encodeTiff(frames, { pixelSizeNm: 50 })), frames }
  }

  async function upload(who: Session, projectId = home.project.id, file = stackFile()) {
    const name = `film-${seed}.tif`
    const res = await who.agent.post(`/api/projects/${projectId}/images`).set('x-csrf-token', who.csrf).attach('files', file.bytes, name)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const imageId = res.body[0].id as number
    const image = (await Image.findByPk(imageId))!
    const frameIds = (await Frame.findAll({ where: { imageId }, order: [['index', 'ASC']] })).map((f) => f.id)
    return { imageId, image, frameIds, file, sha256: createHash('sha256').update(file.bytes).digest('hex'), folder: image.objectKey.replace(/original[^/]*$/, '') }
  }

  const send = (who: Session, method: 'post' | 'delete', path: string) => who.agent[method](path).set('x-csrf-token', who.csrf).send({})
  const deleteImage = (who: Session, imageId: number, confirm = false) => send(who, 'delete', `/api/images/${imageId}${confirm ? '?confirmApproved=true' : ''}`)
  const deleteProject = (who: Session, projectId: number, confirm = false) => send(who, 'delete', `/api/projects/${projectId}${confirm ? '?confirmApproved=true' : ''}`)
  const restore = (who: Session, kind: 'images' | 'projects', id: number) => send(who, 'post', `/api/deleted-items/${kind}/${id}/restore`)
  const purge = (who: Session, kind: 'images' | 'projects', id: number) => send(who, 'delete', `/api/deleted-items/${kind}/${id}`)
  const deletedItems = async (who: Session = sessions.pi) => (await who.agent.get(`/api/labs/${home.lab.id}/deleted-items`)).body as DeletedItemsDto
  const listedImageIds = async (query = '') => ((await sessions.pi.agent.get(`/api/images?pageSize=200${query}`)).body.items as { id: number }[]).map((i) => i.id)
  const binary = (res: request.Response) => res.body as Buffer
  const getBytes = (who: Session, path: string) =>
    who.agent
      .get(path)
      .buffer(true)
      .parse((res, done) => {
        const chunks: Buffer[] = []
        res.on('data', (chunk: Buffer) => chunks.push(chunk))
        res.on('end', () => done(null, Buffer.concat(chunks)))
      })

  /** Every documented GET whose path parameters are all among `ids`, filled in; each must answer 404 for the PI. */
  async function getRoutesNot404(ids: Record<string, number>): Promise<string[]> {
    const wrong: string[] = []
    const routes = getRoutes.filter((op) => op.params.length > 0 && op.params.every((name) => name in ids))
    expect(routes.length).toBeGreaterThan(5)
    for (const op of routes) {
      const url = op.path.replace(/\{(\w+)\}/g, (_, name: string) => String(ids[name]))
      const res = await sessions.pi.agent.get(url)
      if (res.status !== 404) wrong.push(`GET ${url} → ${res.status}`)
    }
    return wrong
  }

  async function approvedAnalysisOn(up: Awaited<ReturnType<typeof upload>>) {
    const analysis = await saveAutoMask(sessions.annotator, up.frameIds[0], up.file.frames[0], 50)
    await submitAndApprove(sessions.annotator, sessions.reviewer, analysis.id)
    return analysis
  }

  describe('DELETE /api/images/:imageId', () => {
    it('When a microscopist deletes their own upload, then it leaves the list, every GET naming it, its frames, masks, analyses or runs answers 404, and its files stay', async () => {
      const up = await upload(sessions.microscopist)
      const analysis = await saveAutoMask(sessions.annotator, up.frameIds[0], up.file.frames[0], 50)
      const run = await StackRun.create({ imageId: up.imageId, recipe: {}, engineVersion: 'test', framesTotal: 2, threshold: null, summary: null, error: null, worker: null, heartbeatAt: null, startedAt: null, finishedAt: null, createdById: home.people.pi.id })
      const ids = { imageId: up.imageId, frameId: up.frameIds[0], index: 0, version: 1, analysisId: analysis.id, runId: run.id }
      expect(await listedImageIds(`&projectId=${home.project.id}`)).toContain(up.imageId)
      expect((await sessions.pi.agent.get(`/api/images/${up.imageId}/frames/0/preview.png`)).status).toBe(200)
      const draftIds = async () => ((await sessions.reviewer.agent.get('/api/reviews?status=draft')).body as { analysisId: number }[]).map((a) => a.analysisId)
      expect(await draftIds()).toContain(analysis.id)
      const filesBefore = (await ctx.deps.store.list(up.folder)).sort()

      const res = await deleteImage(sessions.microscopist, up.imageId)

      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body).toMatchObject({ kind: 'image', id: up.imageId, imageCount: 1 })
      expect(Date.parse(res.body.purgeAfter) - Date.parse(res.body.deletedAt)).toBe(RETENTION_DAYS * DAY_MS)
      expect(await listedImageIds()).not.toContain(up.imageId)
      expect(await getRoutesNot404(ids)).toEqual([])
      expect((await sessions.pi.agent.get(`/api/exports/measurements.csv?imageId=${up.imageId}`)).status).toBe(404)
      expect(await draftIds()).not.toContain(analysis.id)
      expect((await ctx.deps.store.list(up.folder)).sort()).toEqual(filesBefore)
      const audit = await AuditEvent.findOne({ where: { action: 'image.delete', entityId: up.imageId } })
      expect(audit?.actorId).toBe(home.people.microscopist.id)
      expect(audit?.before).toMatchObject({ sha256: up.sha256 })
    })

    it.each(LAB_ROLES)('When a %s deletes an image the PI uploaded, then allowed exactly when the role may delete others\u2019 images', async (role) => {
      const up = await upload(sessions.pi)
      const res = await deleteImage(sessions[role], up.imageId)
      const allowed = roleAllows(role, 'image.deleteOthers')
      expect(res.status).toBe(allowed ? 200 : 403)
      if (!allowed) expect(res.body.error.code).toBe('forbidden')
      expect((await Image.findByPk(up.imageId))!.deletedAt === null).toBe(!allowed)
    })

    it('When the image has an approved analysis, then without confirmApproved the answer is 409 confirmation-needed and nothing changes; with it, the image is deleted', async () => {
      const up = await upload(sessions.microscopist)
      await approvedAnalysisOn(up)

      const refused = await deleteImage(sessions.pi, up.imageId)

      expect(refused.status).toBe(409)
      expect(refused.body.error.code).toBe('confirmation-needed')
      expect(refused.body.error.message).toContain('1 approved analysis')
      expect((await sessions.pi.agent.get(`/api/images/${up.imageId}`)).status).toBe(200)
      const confirmed = await deleteImage(sessions.pi, up.imageId, true)
      expect(confirmed.status).toBe(200)
      expect((await sessions.pi.agent.get(`/api/images/${up.imageId}`)).status).toBe(404)
    })

    it('When a member of another lab deletes, lists, restores or purges, then 404 every time and nothing changes', async () => {
      const live = await upload(sessions.microscopist)
      const deleted = await upload(sessions.microscopist)
      expect((await deleteImage(sessions.microscopist, deleted.imageId)).status).toBe(200)
      const { outsider } = sessions

      const answers = [
        await deleteImage(outsider, live.imageId, true),
        await deleteProject(outsider, home.project.id, true),
        await outsider.agent.get(`/api/labs/${home.lab.id}/deleted-items`),
        await restore(outsider, 'images', deleted.imageId),
        await purge(outsider, 'images', deleted.imageId),
        await purge(outsider, 'images', live.imageId),
      ]

      expect(answers.map((r) => r.status)).toEqual([404, 404, 404, 404, 404, 404])
      expect((await Image.findByPk(live.imageId))!.deletedAt).toBeNull()
      expect((await Image.findByPk(deleted.imageId))!.deletedAt).not.toBeNull()
      expect(await Project.findByPk(home.project.id)).toMatchObject({ deletedAt: null })
    })
  })

  describe('POST /api/deleted-items/images/:imageId/restore', () => {
    it('When a PI restores a deleted image, then it is back identical: same detail, same preview bytes, the original with the uploaded file\u2019s SHA-256', async () => {
      const up = await upload(sessions.microscopist)
      const detailBefore = (await sessions.pi.agent.get(`/api/images/${up.imageId}`)).body
      const previewBefore = binary(await getBytes(sessions.pi, `/api/images/${up.imageId}/frames/1/preview.png`))
      expect((await deleteImage(sessions.microscopist, up.imageId)).status).toBe(200)
      expect((await getBytes(sessions.pi, `/api/images/${up.imageId}/frames/1/preview.png`)).status).toBe(404)

      const listed = (await deletedItems()).items.find((i) => i.kind === 'image' && i.id === up.imageId)
      expect(listed).toMatchObject({ name: up.image.name, project: { id: home.project.id }, deletedBy: { id: home.people.microscopist.id, name: home.people.microscopist.name }, approvedAnalyses: 0 })
      const res = await restore(sessions.pi, 'images', up.imageId)

      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect((await sessions.pi.agent.get(`/api/images/${up.imageId}`)).body).toEqual(detailBefore)
      expect(binary(await getBytes(sessions.pi, `/api/images/${up.imageId}/frames/1/preview.png`)).equals(previewBefore)).toBe(true)
      const original = await ctx.deps.store.get(up.image.objectKey)
      expect(createHash('sha256').update(original).digest('hex')).toBe(up.sha256)
      expect(await listedImageIds()).toContain(up.imageId)
      expect((await deletedItems()).items.some((i) => i.kind === 'image' && i.id === up.imageId)).toBe(false)
      expect(await AuditEvent.count({ where: { action: 'image.restore', entityId: up.imageId, actorId: home.people.pi.id } })).toBe(1)
    })

    it.each(LAB_ROLES)('When a %s opens the deleted items and restores, then allowed exactly when the role may restore', async (role) => {
      const up = await upload(sessions.microscopist)
      await deleteImage(sessions.microscopist, up.imageId)
      const allowed = roleAllows(role, 'deleted.restore')

      const list = await sessions[role].agent.get(`/api/labs/${home.lab.id}/deleted-items`)
      const restored = await restore(sessions[role], 'images', up.imageId)

      expect([list.status, restored.status]).toEqual(allowed ? [200, 200] : [403, 403])
      expect((await Image.findByPk(up.imageId))!.deletedAt === null).toBe(allowed)
    })

    it('When the retention period has passed, then restore answers 409 retention-over', async () => {
      const up = await upload(sessions.microscopist)
      await deleteImage(sessions.microscopist, up.imageId)
      await Image.update({ deletedAt: new Date(Date.now() - (RETENTION_DAYS + 1) * DAY_MS) }, { where: { id: up.imageId } })

      const res = await restore(sessions.pi, 'images', up.imageId)

      expect(res.status).toBe(409)
      expect(res.body.error.code).toBe('retention-over')
      expect((await Image.findByPk(up.imageId))!.deletedAt).not.toBeNull()
    })

    it('When the same file was uploaded again meanwhile, then restore answers 409 duplicate-image naming the new copy', async () => {
      const first = await upload(sessions.microscopist)
      await deleteImage(sessions.microscopist, first.imageId)
      const again = await upload(sessions.microscopist, home.project.id, first.file)
      expect(again.imageId).not.toBe(first.imageId)

      const res = await restore(sessions.pi, 'images', first.imageId)

      expect(res.status).toBe(409)
      expect(res.body.error.code).toBe('duplicate-image')
      expect(res.body.error.message).toContain(`#${again.imageId}`)
    })

    it('When the image is not deleted, then restore and purge answer 409 not-deleted', async () => {
      const up = await upload(sessions.microscopist)
      const answers = [await restore(sessions.pi, 'images', up.imageId), await purge(sessions.pi, 'images', up.imageId)]
      expect(answers.map((r) => [r.status, r.body.error.code])).toEqual([
        [409, 'not-deleted'],
        [409, 'not-deleted'],
      ])
      expect(await Image.findByPk(up.imageId)).not.toBeNull()
    })
  })

  describe('DELETE /api/projects/:projectId', () => {
    it.each(LAB_ROLES)('When a %s deletes an empty project, then allowed exactly when the role may delete projects', async (role) => {
      const project = await Project.create({ labId: home.lab.id, name: `Empty ${role}`, description: '', createdById: home.people.pi.id, deletedAt: null })
      const res = await deleteProject(sessions[role], project.id)
      expect(res.status).toBe(roleAllows(role, 'project.delete') ? 200 : 403)
    })

    it('When a project is deleted and restored, then its images, samples and measurements are unreachable meanwhile, and only the images deleted with it come back', async () => {
      const project = await Project.create({ labId: home.lab.id, name: 'Anneal series to delete', description: '', createdById: home.people.pi.id, deletedAt: null })
      const sample = await Sample.create({ projectId: project.id, name: 'D1', thicknessNm: 1, annealTemperatureC: 250, annealDurationMin: 60, annealFieldMT: null })
      const earlier = await upload(sessions.microscopist, project.id)
      const kept = await upload(sessions.microscopist, project.id)
      const analysis = await approvedAnalysisOn(kept)
      expect((await deleteImage(sessions.microscopist, earlier.imageId)).status).toBe(200)

      const refused = await deleteProject(sessions.pi, project.id)
      expect([refused.status, refused.body.error.code]).toEqual([409, 'confirmation-needed'])
      const res = await deleteProject(sessions.pi, project.id, true)

      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body).toMatchObject({ kind: 'project', id: project.id, imageCount: 1 })
      expect(((await sessions.pi.agent.get('/api/projects')).body as { id: number }[]).map((p) => p.id)).not.toContain(project.id)
      expect((await sessions.pi.agent.get(`/api/images?projectId=${project.id}`)).status).toBe(404)
      expect(await listedImageIds()).not.toContain(kept.imageId)
      const ids = { projectId: project.id, sampleId: sample.id, imageId: kept.imageId, frameId: kept.frameIds[0], index: 0, version: 1, analysisId: analysis.id }
      expect(await getRoutesNot404(ids)).toEqual([])
      const listed = (await deletedItems()).items.filter((i) => i.project.id === project.id)
      expect(listed.map((i) => [i.kind, i.id, i.imageCount, i.approvedAnalyses])).toEqual([['project', project.id, 2, 1]])
      const early = await restore(sessions.pi, 'images', kept.imageId)
      expect([early.status, early.body.error.code]).toEqual([409, 'project-deleted'])

      const restored = await restore(sessions.pi, 'projects', project.id)

      expect(restored.status).toBe(200)
      expect(restored.body).toMatchObject({ kind: 'project', id: project.id, imageCount: 1 })
      expect((await sessions.pi.agent.get(`/api/images/${kept.imageId}`)).status).toBe(200)
      expect((await sessions.pi.agent.get(`/api/analyses/${analysis.id}`)).status).toBe(200)
      expect((await sessions.pi.agent.get(`/api/projects/${project.id}/samples`)).status).toBe(200)
      expect((await sessions.pi.agent.get(`/api/images/${earlier.imageId}`)).status).toBe(404)
      const after = (await deletedItems()).items.filter((i) => i.project.id === project.id)
      expect(after.map((i) => [i.kind, i.id])).toEqual([['image', earlier.imageId]])
    })
  })

  describe('DELETE /api/deleted-items/... (remove for good)', () => {
    it('When a PI removes a deleted image for good, then its rows and every object in its folder are gone, other images are untouched, and the audit names who, when and the SHA-256', async () => {
      const bystander = await upload(sessions.microscopist)
      const bystanderFiles = (await ctx.deps.store.list(bystander.folder)).sort()
      const up = await upload(sessions.microscopist)
      const analysis = await approvedAnalysisOn(up)
      await sessions.reviewer.agent.post(`/api/analyses/${analysis.id}/comments`).set('x-csrf-token', sessions.reviewer.csrf).send({ body: 'walls look right' })
      const run = await StackRun.create({ imageId: up.imageId, recipe: {}, engineVersion: 'test', framesTotal: 2, threshold: null, summary: null, error: null, worker: null, heartbeatAt: null, startedAt: null, finishedAt: null, createdById: home.people.pi.id })
      // Named by a stack-run frame result, as the worker stores it; and one object no row names (a save that died).
      const runMaskKey = `${up.folder}runs/${run.id}/masks/0.rmsk`
      await ctx.deps.store.put(runMaskKey, Buffer.from('run mask'), 'application/octet-stream')
      await StackFrameResult.create({ runId: run.id, frameIndex: 0, measurements: null, maskKey: runMaskKey, error: null })
      await ctx.deps.store.put(`${up.folder}masks/unreferenced.rmsk`, Buffer.from('left over'), 'application/octet-stream')
      const files = await ctx.deps.store.list(up.folder)
      // original + 2 frames × (preview, thumbnail, pixels) + annotation mask + run mask + the unreferenced one
      expect(files).toHaveLength(1 + 2 * 3 + 1 + 1 + 1)
      expect((await deleteImage(sessions.microscopist, up.imageId, true)).status).toBe(200)
      expect((await purge(sessions.microscopist, 'images', up.imageId)).status).toBe(403)
      const startedAt = Date.now()

      const res = await purge(sessions.pi, 'images', up.imageId)

      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body).toEqual({ kind: 'image', id: up.imageId, imageCount: 1, objectsRemoved: files.length })
      expect(await ctx.deps.store.list(up.folder)).toEqual([])
      expect((await ctx.deps.store.list(bystander.folder)).sort()).toEqual(bystanderFiles)
      expect(await Image.findByPk(up.imageId)).toBeNull()
      const rowCounts = [
        await Frame.count({ where: { imageId: up.imageId } }),
        await Annotation.count({ where: { frameId: up.frameIds } }),
        await Analysis.count({ where: { frameId: up.frameIds } }),
        await Review.count({ where: { analysisId: analysis.id } }),
        await Comment.count({ where: { analysisId: analysis.id } }),
        await StackRun.count({ where: { imageId: up.imageId } }),
        await StackFrameResult.count({ where: { runId: run.id } }),
      ]
      expect(rowCounts).toEqual([0, 0, 0, 0, 0, 0, 0])
      const audit = (await AuditEvent.findOne({ where: { action: 'image.purge', entityType: 'image', entityId: up.imageId } }))!
      expect(audit.actorId).toBe(home.people.pi.id)
      expect(audit.labId).toBe(home.lab.id)
      expect(audit.before).toMatchObject({ name: up.image.name, sha256: up.sha256, frameCount: 2 })
      expect(audit.after).toEqual({ reason: 'on-request', objectsRemoved: files.length })
      expect(audit.createdAt.getTime()).toBeGreaterThanOrEqual(startedAt - 1000)
      expect((await purge(sessions.pi, 'images', up.imageId)).status).toBe(404)
    })

    it('When a PI removes a deleted project for good, then every image of it (also one deleted earlier on its own), its samples and their objects are gone, audited per image and for the project', async () => {
      const project = await Project.create({ labId: home.lab.id, name: 'Project to remove', description: '', createdById: home.people.pi.id, deletedAt: null })
      const sample = await Sample.create({ projectId: project.id, name: 'R1', thicknessNm: 1, annealTemperatureC: 300, annealDurationMin: 60, annealFieldMT: null })
      const ups = [await upload(sessions.microscopist, project.id), await upload(sessions.microscopist, project.id)]
      await deleteImage(sessions.microscopist, ups[0].imageId)
      expect((await deleteProject(sessions.pi, project.id)).status).toBe(200)

      const res = await purge(sessions.pi, 'projects', project.id)

      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body).toEqual({ kind: 'project', id: project.id, imageCount: 2, objectsRemoved: 2 * (1 + 2 * 3) })
      for (const up of ups) expect(await ctx.deps.store.list(up.folder)).toEqual([])
      expect(await Project.findByPk(project.id)).toBeNull()
      expect(await Sample.findByPk(sample.id)).toBeNull()
      expect(await Image.count({ where: { projectId: project.id } })).toBe(0)
      const imageAudits = await AuditEvent.findAll({ where: { action: 'image.purge', entityId: ups.map((u) => u.imageId) }, order: [['entityId', 'ASC']] })
      expect(imageAudits.map((a) => (a.before as { sha256: string }).sha256)).toEqual(ups.map((u) => u.sha256))
      const projectAudit = (await AuditEvent.findOne({ where: { action: 'project.purge', entityId: project.id } }))!
      expect(projectAudit.actorId).toBe(home.people.pi.id)
      expect((projectAudit.before as { images: { sha256: string }[] }).images.map((i) => i.sha256)).toEqual(ups.map((u) => u.sha256))
    })
  })

  describe('the retention sweep (purgeExpired)', () => {
    it('When the sweep runs, then exactly the items deleted at least the retention period ago are removed for good, audited with no actor', async () => {
      const now = new Date()
      const ago = (days: number, minutes = 0) => new Date(now.getTime() - days * DAY_MS - minutes * 60_000)
      const softDelete = (imageId: number, when: Date) => Image.update({ deletedAt: when }, { where: { id: imageId } })
      const expired = await upload(sessions.microscopist)
      const onTheDay = await upload(sessions.microscopist)
      const justInside = await upload(sessions.microscopist)
      const live = await upload(sessions.microscopist)
      await softDelete(expired.imageId, ago(RETENTION_DAYS + 1))
      await softDelete(onTheDay.imageId, ago(RETENTION_DAYS))
      await softDelete(justInside.imageId, ago(RETENTION_DAYS, -1))
      const oldProject = await Project.create({ labId: home.lab.id, name: 'Expired project', description: '', createdById: home.people.pi.id, deletedAt: ago(RETENTION_DAYS + 2) })
      const oldProjectImage = await upload(sessions.microscopist, home.project.id)
      await Image.update({ projectId: oldProject.id, deletedAt: oldProject.deletedAt }, { where: { id: oldProjectImage.imageId } })
      const youngProject = await Project.create({ labId: home.lab.id, name: 'Recently deleted project', description: '', createdById: home.people.pi.id, deletedAt: ago(1) })
      const sweep = createDeletionService({ ...ctx.deps, config: { deleteRetentionDays: RETENTION_DAYS } })

      const report = await sweep.purgeExpired(now)

      expect(report.failures).toEqual([])
      const gone = [expired, onTheDay, oldProjectImage]
      const kept = [justInside, live]
      for (const up of gone) {
        expect(await Image.findByPk(up.imageId)).toBeNull()
        expect(await ctx.deps.store.list(up.folder)).toEqual([])
      }
      for (const up of kept) {
        expect(await Image.findByPk(up.imageId)).not.toBeNull()
        expect(await ctx.deps.store.list(up.folder)).toHaveLength(1 + 2 * 3)
      }
      expect(await Project.findByPk(oldProject.id)).toBeNull()
      expect(await Project.findByPk(youngProject.id)).not.toBeNull()
      expect(report.purgedProjects).toBeGreaterThanOrEqual(1)
      expect(report.purgedImages).toBeGreaterThanOrEqual(gone.length)
      const audit = (await AuditEvent.findOne({ where: { action: 'image.purge', entityId: expired.imageId } }))!
      expect(audit.actorId).toBeNull()
      expect(audit.before).toMatchObject({ sha256: expired.sha256 })
      expect(audit.after).toMatchObject({ reason: 'retention-expired' })
      expect(await AuditEvent.count({ where: { action: 'project.purge', entityId: oldProject.id, actorId: null } })).toBe(1)
    })
  })
})
