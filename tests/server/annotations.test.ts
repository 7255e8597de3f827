/**
 * Masks: versioned saves with optimistic concurrency, history and restore, measurements recomputed on save, the
 * annotation queue, and permissions — against the real PostgreSQL and s3rver.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { maskToBase64, maskFromBase64 } from '../../shared/imageio/maskEncoding'
import { analyzeFrame } from '../../shared/analysis/analyzeFrame'
import { normalizeRecipe } from '../../shared/analysis/recipe'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { Annotation, Frame } from '../../server/models'
import type { BinaryMask } from '../../shared/analysis/types'

describe('annotations', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let frameId: number
  let autoMask: BinaryMask
  let cliMeasurements: Record<string, unknown>
  const recipe = normalizeRecipe({ smoothingSigma: 1, minDomainArea: 9 })
  const sessions: Record<string, Awaited<ReturnType<typeof signIn>>> = {}

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Masks')
    for (const role of ['annotator', 'pi', 'reviewer', 'microscopist'] as const) sessions[role] = await signIn(ctx.app, home.people[role].email)
    const frame = renderLabyrinth({ size: 256, periodPx: 20, seed: 7 }).image
    const tiff = Buffer.from(encodeTiff([frame], { pixelSizeNm: 100 }))
    const up = await sessions.microscopist.agent.post(`/api/projects/${home.project.id}/images`).set('x-csrf-token', sessions.microscopist.csrf).attach('files', tiff, 'maze.tif')
    expect(up.status).toBe(201)
    frameId = (await Frame.findOne({ where: { imageId: up.body[0].id, index: 0 } }))!.id
    await Frame.update({ assigneeId: home.people.annotator.id }, { where: { id: frameId } })
    // What the CLI computes for this file and recipe (the same engine, one thread).
    const cli = analyzeFrame(frame, recipe, { pixelSizeNm: 100 })
    autoMask = cli.mask
    cliMeasurements = cli.measurements as unknown as Record<string, unknown>
  })
  afterAll(() => ctx.stop())

  const save = (role: string, baseVersion: number | null, mask: BinaryMask) =>
    sessions[role].agent.post(`/api/frames/${frameId}/annotations`).set('x-csrf-token', sessions[role].csrf).send({ baseVersion, mask: maskToBase64(mask), shapes: [{ kind: 'wall-trace', points: [1, 2, 30, 40] }], recipe })

  it('When the auto-segmented mask is saved, then version 1 and measurements equal the CLI\u2019s on the same mask and recipe', async () => {
    const res = await save('annotator', null, autoMask)
    expect(res.status).toBe(201)
    expect(res.body.annotation.version).toBe(1)
    const api = res.body.analysis.measurements
    // The threshold and the share reassigned by the minimum-area filter describe the automatic split, not a saved
    // mask; every measurement of the mask itself must agree exactly.
    const { threshold: _t, reassignedFraction: _r, ...fromCli } = cliMeasurements
    const { threshold: _a, reassignedFraction: _s, ...fromApi } = api
    expect(fromApi).toEqual(fromCli)
    expect(res.body.analysis.engineVersion).toMatch(/^\d+\.\d+\.\d+$/)
    expect(res.body.analysis.distributions.widthHistogram.counts.length).toBeGreaterThan(0)
    expect(api.meanWidthNm).toBeCloseTo(api.meanWidthPx * 100, 6)
  })

  it('When two annotators save the same version, then one succeeds, the other gets 409 and its mask is kept as a conflict copy', async () => {
    const a = { ...autoMask, data: Uint8Array.from(autoMask.data, (v, i) => (i < 500 ? 1 : v)) }
    const b = { ...autoMask, data: Uint8Array.from(autoMask.data, (v, i) => (i < 500 ? 0 : v)) }
    const [first, second] = await Promise.all([save('annotator', 1, a), save('pi', 1, b)])
    const statuses = [first.status, second.status].sort()
    expect(statuses).toEqual([201, 409])
    const loser = first.status === 409 ? first : second
    const loserMask = first.status === 409 ? a : b
    expect(loser.body.error.code).toBe('version-conflict')
    expect(loser.body.latestVersion).toBe(2)
    const copy = await sessions.annotator.agent.get(`/api/frames/${frameId}/annotations/0?copy=${loser.body.conflictCopy.id}`)
    expect(copy.status).toBe(200)
    expect(Buffer.from(maskFromBase64(copy.body.mask).data).equals(Buffer.from(loserMask.data))).toBe(true)
    // "save as a new version": the client re-sends against the latest version
    const retry = await save(first.status === 409 ? 'annotator' : 'pi', 2, loserMask)
    expect(retry.status).toBe(201)
    expect(retry.body.annotation.version).toBe(3)
  })

  it('When the history is read and version 1 restored, then it comes back as a new version with the same mask', async () => {
    const history = await sessions.reviewer.agent.get(`/api/frames/${frameId}/annotations`)
    expect(history.status).toBe(200)
    expect(history.body.filter((v: { state: string }) => v.state === 'saved').map((v: { version: number }) => v.version)).toEqual([3, 2, 1])
    expect(history.body.some((v: { state: string }) => v.state === 'conflict')).toBe(true)
    expect(history.body[0].author.name).toMatch(/\S/)
    const restored = await sessions.annotator.agent.post(`/api/frames/${frameId}/annotations/1/restore`).set('x-csrf-token', sessions.annotator.csrf).send({ baseVersion: 3 })
    expect(restored.status).toBe(201)
    expect(restored.body.annotation.version).toBe(4)
    const latest = await sessions.annotator.agent.get(`/api/frames/${frameId}/annotations/latest`)
    expect(Buffer.from(maskFromBase64(latest.body.mask).data).equals(Buffer.from(autoMask.data))).toBe(true)
  })

  it('When a reviewer tries to save a mask, then 403 and nothing is stored', async () => {
    const before = await Annotation.count({ where: { frameId } })
    const res = await save('reviewer', 4, autoMask)
    expect(res.status).toBe(403)
    expect(await Annotation.count({ where: { frameId } })).toBe(before)
  })

  it('When an annotator of another lab reads or writes the frame, then 404', async () => {
    const other = await createLabWithRoles('OtherMasks')
    const outsider = await signIn(ctx.app, other.people.annotator.email)
    expect((await outsider.agent.get(`/api/frames/${frameId}/annotations`)).status).toBe(404)
    expect((await outsider.agent.get(`/api/frames/${frameId}/analysis`)).status).toBe(404)
    const write = await outsider.agent.post(`/api/frames/${frameId}/annotations`).set('x-csrf-token', outsider.csrf).send({ baseVersion: 4, mask: maskToBase64(autoMask), shapes: [], recipe: {} })
    expect(write.status).toBe(404)
  })

  it('When the mask is corrupt or the wrong size, then 400 with a clear code and nothing stored', async () => {
    const before = await Annotation.count({ where: { frameId } })
    const corrupt = await sessions.annotator.agent.post(`/api/frames/${frameId}/annotations`).set('x-csrf-token', sessions.annotator.csrf).send({ baseVersion: 4, mask: 'UkXXXX', shapes: [], recipe: {} })
    expect(corrupt.status).toBe(400)
    expect(corrupt.body.error.code).toBe('invalid-mask')
    const wrong = await save('annotator', 4, { width: 10, height: 10, data: new Uint8Array(100) })
    expect(wrong.status).toBe(400)
    expect(wrong.body.error.code).toBe('mask-size-mismatch')
    expect(await Annotation.count({ where: { frameId } })).toBe(before)
  })

  it('When the annotator opens the queue, then the assigned frame is there with its status and latest version', async () => {
    const res = await sessions.annotator.agent.get('/api/queue?mine=true')
    expect(res.status).toBe(200)
    const item = res.body.find((q: { frameId: number }) => q.frameId === frameId)
    expect(item).toMatchObject({ status: 'in-progress', latestVersion: 4, imageName: 'maze.tif' })
    const pi = await sessions.pi.agent.get(`/api/queue?mine=false&projectId=${home.project.id}`)
    expect(pi.body.map((q: { frameId: number }) => q.frameId)).toContain(frameId)
  })

  it('When the latest analysis is read, then it carries the recipe and engine version', async () => {
    const res = await sessions.reviewer.agent.get(`/api/frames/${frameId}/analysis`)
    expect(res.status).toBe(200)
    expect(res.body.recipe).toMatchObject({ method: 'otsu', minDomainArea: 9 })
    expect(res.body.annotationVersion).toBe(4)
  })
})
