/**
 * GET /api/samples/:sampleId/measurements against the real PostgreSQL: the newest analysis per frame wins, stack runs
 * are summarised (medians, the frame nearest M = 0, loop and Curie values), and other labs' samples stay hidden.
 * Analyses and run results are written as rows (what the workspace and the worker store), so the expected values are
 * known exactly.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { Analysis, Frame, StackFrameResult, StackRun } from '../../server/models'

/** The measurement fields the endpoint reads, the rest left out (the JSON column stores whatever the engine wrote). */
const measured = (magnetization: number, meanWidthPx: number | null, periodPx: number | null, pixelSizeNm = 100) => ({
  magnetization,
  meanWidthPx,
  meanWidthNm: meanWidthPx === null ? null : meanWidthPx * pixelSizeNm,
  periodPx,
  periodNm: periodPx === null ? null : periodPx * pixelSizeNm,
})

describe('GET /api/samples/:sampleId/measurements', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let reviewer: Awaited<ReturnType<typeof signIn>>
  let sampleId: number
  let imageId: number

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Sample measurements')
    const pi = await signIn(ctx.app, home.people.pi.email)
    const sample = await pi.agent
      .post(`/api/projects/${home.project.id}/samples`)
      .set('x-csrf-token', pi.csrf)
      .send({ name: 'Co/Pt film', material: 'Co', thicknessNm: 50 })
      .expect(201)
    sampleId = sample.body.id
    const frames = [0, 1, 2].map((k) => ({ width: 16, height: 16, data: new Uint16Array(256).map((_, i) => (i * 37 + k * 1000) % 65536) }))
    const upload = await pi.agent
      .post(`/api/projects/${home.project.id}/images`)
      .set('x-csrf-token', pi.csrf)
      .field('sampleId', String(sampleId))
      .attach('files', Buffer.from(encodeTiff(frames, { pixelSizeNm: 100 })), 'three.tif')
      .expect(201)
    imageId = upload.body[0].id
    reviewer = await signIn(ctx.app, home.people.reviewer.email)
  })
  afterAll(async () => {
    await ctx.stop()
  })

  it('When a frame was analysed twice, then only the newer analysis is listed, with px and nm values', async () => {
    const frame = await Frame.findOne({ where: { imageId, index: 1 } })
    const analysis = (results: object) =>
      Analysis.create({ frameId: frame!.id, annotationId: null, recipe: {}, engineVersion: 'test', results: { measurements: results }, createdById: null, approvedById: null, approvedAt: null, error: null })
    await analysis(measured(0.5, 3, 10))
    const newer = await analysis(measured(0.1, 4, 12))

    const res = await reviewer.agent.get(`/api/samples/${sampleId}/measurements`)
    expect(res.status).toBe(200)
    expect(res.body.sample).toMatchObject({ id: sampleId, name: 'Co/Pt film', thicknessNm: 50 })
    expect(res.body.labId).toBe(home.lab.id)
    expect(res.body.frames).toHaveLength(1)
    expect(res.body.frames[0]).toMatchObject({ analysisId: newer.id, imageId, frameIndex: 1, magnetization: 0.1, meanWidthPx: 4, meanWidthNm: 400, periodPx: 12, periodNm: 1200, pixelSizeNm: 100 })
  })

  it('When the image has a stack run, then its medians, the frame nearest M = 0 and the loop values are summarised', async () => {
    const run = await StackRun.create({
      imageId,
      recipe: {},
      engineVersion: 'test',
      status: 'done-with-errors',
      framesTotal: 3,
      framesDone: 3,
      threshold: null,
      summary: { loop: { coerciveField: 7.25, fieldUnit: 'mT' }, curie: null },
      error: '1 frame(s) could not be analysed; the others are kept.',
      worker: null,
      heartbeatAt: null,
      startedAt: null,
      finishedAt: new Date(),
      createdById: null,
    })
    await StackFrameResult.create({ runId: run.id, frameIndex: 0, measurements: measured(0.9, 2, 8), maskKey: null, error: null })
    await StackFrameResult.create({ runId: run.id, frameIndex: 1, measurements: measured(-0.05, 6, 14), maskKey: null, error: null })
    await StackFrameResult.create({ runId: run.id, frameIndex: 2, measurements: null, maskKey: null, error: 'decode failed' })

    const res = await reviewer.agent.get(`/api/samples/${sampleId}/measurements`).expect(200)
    const summary = res.body.stackRuns.find((r: { runId: number }) => r.runId === run.id)
    expect(summary).toMatchObject({
      imageId,
      imageName: 'three.tif',
      status: 'done-with-errors',
      framesMeasured: 2,
      // Median of two values is their mean: (2 + 6)/2 px, (8 + 14)/2 px.
      medianWidthPx: 4,
      medianWidthNm: 400,
      medianPeriodPx: 11,
      medianPeriodNm: 1100,
      nearZeroFrame: { index: 1, magnetization: -0.05, meanWidthPx: 6, meanWidthNm: 600, periodPx: 14, periodNm: 1400 },
      coerciveField: 7.25,
      fieldUnit: 'mT',
      tcK: null,
      beta: null,
    })
  })

  it('When nobody is signed in, then 401; when a member of another lab asks, then 404 sample-not-found', async () => {
    await request(ctx.app).get(`/api/samples/${sampleId}/measurements`).expect(401)
    const other = await createLabWithRoles('Elsewhere')
    const outsider = await signIn(ctx.app, other.people.admin.email)
    const res = await outsider.agent.get(`/api/samples/${sampleId}/measurements`)
    expect(res.status).toBe(404)
    expect(res.body.error.code).toBe('sample-not-found')
    await reviewer.agent.get('/api/samples/999999999/measurements').expect(404)
  })
})
