/**
 * Wall motion through the API (issue #8), against the real PostgreSQL and s3rver: a motion series uploaded with its
 * pulse CSV stores the pulses per frame; GET /api/images/:imageId/motion gives the constructed velocities (computed
 * in the analysis pool, equal to the one-thread engine); GET /api/samples/:sampleId/motion pools two series, one in
 * mT and one in Oe, into one creep fit; bad CSVs, durations and page sizes are refused with nothing stored.
 * Ground truth is constructed by scripts/sampleImages.ts renderMotionSeries.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { parseFramesCsv, validateFramesCsv } from '../../shared/imageio/framesCsv'
import { analyzeMotion, motionRecipeDefaults } from '../../shared/analysis/analyzeMotion'
import { normalizeRecipe } from '../../shared/analysis/recipe'
import { renderMotionSeries, type MotionSeries } from '../../scripts/sampleImages'
import { Image } from '../../server/models'

const CREEP = { slope: 40, lnV0: 22.4, mu: 0.25 }

/**
 * Constructed series (seeded): 4 frames of 128² px at 200 nm per px; a bubble of radius 12 px grows by v(H)·Δt in the
 * pulses of rows 1–3, v from the creep law above.
 */
function series(seed: number, fieldsMT: number[], durationsS: number[]): MotionSeries {
  return renderMotionSeries({ size: 128, seed, initialRadiusPx: 12, creep: CREEP, pulseFieldsMT: fieldsMT, pulseDurationsS: durationsS })
}

function pulseCsv(s: MotionSeries, unit: 'mT' | 'Oe'): string {
  // 1 Oe ↔ 0.1 mT (μ0H, METHODS §9.3); durations in µs.
  const rows = s.pulseFieldsMT.map((h, i) => `${i},${unit === 'Oe' ? Number((h * 10).toPrecision(9)) : h},${Number((s.pulseDurationsS[i] * 1e6).toPrecision(9))}`)
  return `frame,pulse_field_${unit},pulse_duration_us\n${rows.join('\n')}\n`
}

describe('wall motion', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let other: Awaited<ReturnType<typeof createLabWithRoles>>
  let microscopist: Awaited<ReturnType<typeof signIn>>
  let sampleId: number
  const first = series(41, [10, 4, 5, 6], [1e-6, 400e-6, 100e-6, 30e-6])
  const second = series(42, [10, 4.5, 5.5, 7], [1e-6, 200e-6, 50e-6, 15e-6])
  let firstId: number
  let secondId: number

  const upload = (name: string, tiff: Uint8Array, csv?: string, fields: Record<string, string> = {}) => {
    let req = microscopist.agent.post(`/api/projects/${home.project.id}/images`).set('x-csrf-token', microscopist.csrf)
    for (const [k, v] of Object.entries(fields)) req = req.field(k, v)
    req = req.attach('files', Buffer.from(tiff), name)
    if (csv !== undefined) req = req.attach('frames', Buffer.from(csv), `${name}.csv`)
    return req
  }

  /** What is stored for the lab: image rows and objects. */
  async function stored(): Promise<{ images: number; objects: number }> {
    return { images: await Image.count({ where: { projectId: home.project.id } }), objects: (await ctx.deps.store.list(`labs/${home.lab.id}/`)).length }
  }

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Motion')
    other = await createLabWithRoles('Motion elsewhere')
    const pi = await signIn(ctx.app, home.people.pi.email)
    const sample = await pi.agent
      .post(`/api/projects/${home.project.id}/samples`)
      .set('x-csrf-token', pi.csrf)
      .send({ name: 'Pt/Co/Pt bubble film', material: 'Co', thicknessNm: 0.6 })
      .expect(201)
    sampleId = sample.body.id
    microscopist = await signIn(ctx.app, home.people.microscopist.email)
    const a = await upload('bubble-mT.tif', encodeTiff(first.frames, { pixelSizeNm: 200 }), pulseCsv(first, 'mT'), { sampleId: String(sampleId) }).expect(201)
    firstId = a.body[0].id
    const b = await upload('bubble-Oe.tif', encodeTiff(second.frames, { pixelSizeNm: 200 }), pulseCsv(second, 'Oe'), { sampleId: String(sampleId) }).expect(201)
    secondId = b.body[0].id
  }, 120_000)
  afterAll(() => ctx.stop())

  describe('POST /api/projects/:projectId/images with a motion CSV', () => {
    it('When a pulse CSV comes with the stack, then every frame stores its pulse amplitude, unit and duration in s', async () => {
      const res = await microscopist.agent.get(`/api/images/${secondId}`).expect(200)
      const frames = res.body.frames as { index: number; field: number | null; fieldUnit: string | null; pulseField: number; pulseDurationS: number; timeS: number | null }[]
      expect(frames.map((f) => f.pulseField)).toEqual([100, 45, 55, 70])
      // Constructed durations, µs → s by the CSV reader.
      frames.forEach((f, i) => expect(f.pulseDurationS).toBeCloseTo(second.pulseDurationsS[i], 15))
      expect(frames.every((f) => f.fieldUnit === 'Oe' && f.field === null && f.timeS === null)).toBe(true)
    })

    it.each([
      ['a zero pulse duration', 'frame,pulse_field_mT,pulse_duration_us\n0,10,1\n1,4,400\n2,5,0\n3,6,30\n', /Line 4: pulse_duration_us must be greater than 0/],
      ['a negative pulse duration', 'frame,pulse_field_mT,pulse_duration_us\n0,10,1\n1,4,-400\n2,5,100\n3,6,30\n', /Line 3: pulse_duration_us must be greater than 0/],
      ['fewer rows than frames', 'frame,pulse_field_mT,pulse_duration_us\n0,10,1\n1,4,400\n2,5,100\n', /3 row\(s\) but the stack has 4 frame\(s\); no row for frame\(s\) 3/],
      ['times that do not increase', 'frame,time_s\n0,0\n1,2\n2,2\n3,5\n', /Line 4: frame 2 is at 2 s, not after frame 1 \(2 s\); times must increase/],
    ])('When the CSV has %s, then 400 invalid-frames-csv with the reason and nothing is stored', async (_case, csv, message) => {
      const before = await stored()
      // A new series each time (seeded differently), so no upload is a duplicate of a stored image.
      const s = series(50 + csv.length, [10, 4, 5, 6], [1e-6, 400e-6, 100e-6, 30e-6])
      const res = await upload('bad.tif', encodeTiff(s.frames, { pixelSizeNm: 200 }), csv)
      expect(res.status).toBe(400)
      expect(res.body.error.code).toBe('invalid-frames-csv')
      expect(res.body.error.message).toMatch(message)
      expect(await stored()).toEqual(before)
    })

    it('When the pages of the stack differ in size, then 415 unsupported-type naming the page and nothing is stored', async () => {
      // Issue #8 bad input: frames of different sizes (a TIFF's pages must share one size; the decoder's status).
      const before = await stored()
      const frames = [first.frames[0], { width: 64, height: 64, data: new Uint16Array(64 * 64).fill(1000) }]
      const res = await upload('mixed.tif', encodeTiff(frames), 'frame,pulse_field_mT,pulse_duration_us\n0,10,1\n1,4,400\n')
      expect(res.status).toBe(415)
      expect(res.body.error.code).toBe('unsupported-type')
      expect(res.body.error.message).toMatch(/page 2 \(64 × 64, 16-bit\) differs from page 1 \(128 × 128, 16-bit\)/)
      expect(await stored()).toEqual(before)
    })
  })

  describe('GET /api/images/:imageId/motion', () => {
    it('When the series was uploaded with its pulses, then each step has the constructed velocity within 3 % and the creep law is fitted', async () => {
      const res = await microscopist.agent.get(`/api/images/${firstId}/motion`).expect(200)
      const { motion } = res.body
      expect(res.body.recipe).toMatchObject({ background: 'flatten', flattenSigma: 128, registerFrames: false })
      expect(motion.steps).toHaveLength(3)
      motion.steps.forEach((step: { field: number; fieldUnit: string; duration: number; velocity: number; velocityUnit: string }, k: number) => {
        expect(step.field).toBe(first.pulseFieldsMT[k + 1])
        expect(step.fieldUnit).toBe('mT')
        expect(step.duration).toBeCloseTo(first.pulseDurationsS[k + 1], 15)
        expect(step.velocityUnit).toBe('m/s')
        expect(Math.abs(step.velocity / first.velocitiesMPerS[k] - 1)).toBeLessThan(0.03)
      })
      expect(motion.creep.mu).toBe(0.25)
      expect(motion.creep.fieldUnit).toBe('mT')
      expect(motion.roughness.theory.zeta).toBeCloseTo(2 / 3, 12)
    })

    it('When computed in the worker pool, then the numbers equal the one-thread engine on the same file and rows', async () => {
      // Same function, same inputs (the CLI's path): identical results.
      const res = await microscopist.agent.get(`/api/images/${firstId}/motion`).expect(200)
      const csv = validateFramesCsv(parseFramesCsv(pulseCsv(first, 'mT')), 4)
      const local = analyzeMotion(first.frames, normalizeRecipe(motionRecipeDefaults(128, 128)), csv.rows, { pixelSizeNm: 200, fieldUnit: 'mT' })
      expect(res.body.motion.steps.map((s: { velocity: number }) => s.velocity)).toEqual(local.steps.map((s) => s.velocity))
      expect(res.body.motion.creep.slope).toBe(local.creep!.slope)
    })

    it('When the image has no pulses or times, then 400 not-a-motion-series', async () => {
      const plain = await upload('plain.tif', encodeTiff([first.frames[1]], { pixelSizeNm: 200 })).expect(201)
      const res = await microscopist.agent.get(`/api/images/${plain.body[0].id}/motion`)
      expect(res.status).toBe(400)
      expect(res.body.error.code).toBe('not-a-motion-series')
    })

    it('When a recipe field is out of range, then 400 invalid-input naming it', async () => {
      const res = await microscopist.agent.get(`/api/images/${firstId}/motion?smoothingSigma=50`)
      expect(res.status).toBe(400)
      expect(res.body.error.message).toMatch(/smoothingSigma/)
    })

    it('When someone of another lab asks, then 404', async () => {
      const outsider = await signIn(ctx.app, other.people.pi.email)
      expect((await outsider.agent.get(`/api/images/${firstId}/motion`)).status).toBe(404)
    })
  })

  describe('GET /api/samples/:sampleId/motion', () => {
    it('When a sample has a series in mT and one in Oe, then their six steps are pooled in mT with one creep fit over them', async () => {
      const res = await microscopist.agent.get(`/api/samples/${sampleId}/motion`).expect(200)
      expect(res.body.series.map((s: { imageId: number }) => s.imageId).sort()).toEqual([firstId, secondId].sort())
      expect(res.body.points).toHaveLength(6)
      expect(res.body.velocityUnit).toBe('m/s')
      // Constructed: 45, 55, 70 Oe are 4.5, 5.5, 7 mT.
      expect(res.body.points.filter((p: { imageId: number }) => p.imageId === secondId).map((p: { fieldMT: number }) => p.fieldMT)).toEqual([4.5, 5.5, 7])
      // The creep range is chosen by creepLaw's documented criterion; with six points of ±2 % scatter (bubbles of
      // radius 12–33 px) it may end before the last points, never below three.
      expect(res.body.creep.usedPoints).toBeGreaterThanOrEqual(3)
      // Constructed creep law: C = 40 mT^¼ within 5 %.
      expect(Math.abs(res.body.creep.slope / CREEP.slope - 1)).toBeLessThan(0.05)
      expect(res.body.sample).toMatchObject({ id: sampleId, name: 'Pt/Co/Pt bubble film' })
    })
  })
})
