/**
 * The creep-slope comparison (issue #8) against the real PostgreSQL and s3rver: two samples annealed differently, each
 * with two pulsed-field bubble series whose velocities follow a known creep law, come back as one creep slope per
 * sample, grouped by anneal temperature, equal to the constructed C within the fit's standard error widened by the
 * velocity measurement's accuracy (see `tolerance`). Samples without motion
 * series or without enough pulse fields, and series without a sample, are left out and counted.
 * Ground truth is constructed by scripts/sampleImages.ts renderMotionSeries (as in motion.test.ts).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { renderMotionSeries, type CreepLawParameters, type MotionSeries } from '../../scripts/sampleImages'
import type { ComparisonResultDto, ComparisonValueDto } from '../../shared/types/comparison'
import { Sample } from '../../server/models'

/** Two constructed creep laws (C in mT^¼, ln v₀ with v in m/s): ln v₀ of the second chosen so both move alike at 5 mT. */
const LAW_250: CreepLawParameters = { slope: 40, lnV0: 22.4, mu: 0.25 }
const LAW_350: CreepLawParameters = { slope: 30, lnV0: 15.7, mu: 0.25 }

/** Constructed series (seeded): 4 frames of 128² px at 200 nm per px, a bubble of radius 12 px growing in rows 1–3. */
function series(seed: number, creep: CreepLawParameters, fieldsMT: number[], durationsS: number[]): MotionSeries {
  return renderMotionSeries({ size: 128, seed, initialRadiusPx: 12, creep, pulseFieldsMT: fieldsMT, pulseDurationsS: durationsS })
}

const FIRST_PULSES = { fieldsMT: [10, 4, 5, 6], durationsS: [1e-6, 400e-6, 100e-6, 30e-6] }
const SECOND_PULSES = { fieldsMT: [10, 4.5, 5.5, 7], durationsS: [1e-6, 200e-6, 50e-6, 15e-6] }

/** Relative accuracy of a measured step velocity against the constructed one (motion.test.ts checks 3 %). */
const VELOCITY_ACCURACY = 0.03

/**
 * How far a fitted C may be from the constructed one: 3 standard errors of the fit, plus what the velocity measurement
 * can add. The fit's standard error covers only the scatter of the steps about the creep line; the velocities
 * themselves (ΔA/L̄ on a blurred, pixelised bubble) carry a small systematic error per step, within 3 % of the
 * constructed velocity (motion.test.ts, constructed). A relative error of ±ε at the two ends of the fit's field range
 * [H_lo, H_hi] tilts the line ln v = ln v₀ − C·H^(−¼) by at most 2·ln(1 + ε)/(H_lo^(−¼) − H_hi^(−¼)) in C [D].
 */
function tolerance(value: ComparisonValueDto): number {
  const fit = value.creepFit!
  const [lo, hi] = fit.creepFieldRangeMT!
  return 3 * fit.slopeStdErr! + (2 * Math.log(1 + VELOCITY_ACCURACY)) / (lo ** -0.25 - hi ** -0.25)
}

function pulseCsv(s: MotionSeries): string {
  const rows = s.pulseFieldsMT.map((h, i) => `${i},${h},${Number((s.pulseDurationsS[i] * 1e6).toPrecision(9))}`)
  return `frame,pulse_field_mT,pulse_duration_us\n${rows.join('\n')}\n`
}

describe('comparisons of the creep slope', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  let pi: Awaited<ReturnType<typeof signIn>>
  let microscopist: Awaited<ReturnType<typeof signIn>>
  const samples = {} as Record<'a250' | 'b350' | 'plain300' | 'twoFields400', Sample>
  const seriesIds = {} as Record<'a250' | 'b350', number[]>

  async function uploadSeries(name: string, s: MotionSeries, sampleId?: number): Promise<number> {
    let req = microscopist.agent.post(`/api/projects/${home.project.id}/images`).set('x-csrf-token', microscopist.csrf)
    if (sampleId !== undefined) req = req.field('sampleId', String(sampleId))
    const res = await req.attach('files', Buffer.from(encodeTiff(s.frames, { pixelSizeNm: 200 })), name).attach('frames', Buffer.from(pulseCsv(s)), `${name}.csv`)
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    return res.body[0].id as number
  }

  const compute = (body: object) => pi.agent.post('/api/comparisons/compute').set('x-csrf-token', pi.csrf).send(body)

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('CompareCreep')
    pi = await signIn(ctx.app, home.people.pi.email)
    microscopist = await signIn(ctx.app, home.people.microscopist.email)
    const sample = (name: string, annealTemperatureC: number) =>
      Sample.create({ projectId: home.project.id, name, thicknessNm: 0.6, annealTemperatureC, annealDurationMin: 30, annealAtmosphere: 'Ar', annealFieldMT: null })
    samples.a250 = await sample('Pt/Co/Pt 250', 250)
    samples.b350 = await sample('Pt/Co/Pt 350', 350)
    samples.plain300 = await sample('Pt/Co/Pt 300, no motion', 300)
    samples.twoFields400 = await sample('Pt/Co/Pt 400, two fields', 400)
    seriesIds.a250 = [
      await uploadSeries('a250-1.tif', series(61, LAW_250, FIRST_PULSES.fieldsMT, FIRST_PULSES.durationsS), samples.a250.id),
      await uploadSeries('a250-2.tif', series(62, LAW_250, SECOND_PULSES.fieldsMT, SECOND_PULSES.durationsS), samples.a250.id),
    ]
    seriesIds.b350 = [
      await uploadSeries('b350-1.tif', series(71, LAW_350, FIRST_PULSES.fieldsMT, FIRST_PULSES.durationsS), samples.b350.id),
      await uploadSeries('b350-2.tif', series(72, LAW_350, SECOND_PULSES.fieldsMT, SECOND_PULSES.durationsS), samples.b350.id),
    ]
    // Steps at 4, 4 and 5 mT: two distinct fields, one short of a creep fit.
    await uploadSeries('c400.tif', series(81, LAW_250, [10, 4, 4, 5], [1e-6, 200e-6, 200e-6, 100e-6]), samples.twoFields400.id)
    // A motion series nobody linked to a sample.
    await uploadSeries('loose.tif', series(91, LAW_250, FIRST_PULSES.fieldsMT, FIRST_PULSES.durationsS))
  }, 180_000)
  afterAll(() => ctx.stop())

  describe('POST /api/comparisons/compute with measure creepSlope', () => {
    let result: ComparisonResultDto

    beforeAll(async () => {
      const res = await compute({ projectId: home.project.id, measure: 'creepSlope', groupBy: 'annealTemperatureC' })
      expect(res.status, JSON.stringify(res.body)).toBe(200)
      result = res.body
    }, 180_000)

    it('When two samples have motion series, then each anneal temperature is a group of one value per sample, from its pooled series', () => {
      expect(result).toMatchObject({ measure: 'creepSlope', label: 'Creep slope C', unit: 'mT^(1/4)', groupBy: 'annealTemperatureC' })
      expect(result.groups.map((g) => [g.key, g.n, g.samples.map((s) => s.name)])).toEqual([
        [250, 1, ['Pt/Co/Pt 250']],
        [350, 1, ['Pt/Co/Pt 350']],
      ])
      for (const [group, key] of [
        [result.groups[0], 'a250'],
        [result.groups[1], 'b350'],
      ] as const) {
        const [value] = group.values
        expect(value).toMatchObject({ source: 'motion', draft: false, image: null, frameId: null, analysisId: null, stackRunId: null })
        expect(value.creepFit!.series.map((s) => s.id).sort()).toEqual([...seriesIds[key]].sort())
        // Three steps per series, pooled.
        expect(value.creepFit!.steps).toBe(6)
        expect(group.mean).toBe(value.value)
      }
    })

    it('When the creep laws were constructed with C = 40 and 30 mT^¼, then each group’s slope is its law’s C within 3 fit standard errors plus the velocity accuracy', () => {
      const [a250, b350] = result.groups.map((g) => g.values[0])
      // Constructed (renderMotionSeries): C = 40 mT^¼ at 250 °C, 30 mT^¼ at 350 °C.
      for (const [value, law] of [
        [a250, LAW_250],
        [b350, LAW_350],
      ] as const) {
        expect(value.creepFit!.slopeStdErr).toBeGreaterThan(0)
        expect(Math.abs(value.value - law.slope)).toBeLessThan(tolerance(value))
      }
      // The two anneal conditions are told apart: the slopes differ by more than both tolerances together.
      expect(a250.value - b350.value).toBeGreaterThan(tolerance(a250) + tolerance(b350))
    })

    it('When the sample’s motion page fits the same series, then its creep slope is the compared value', async () => {
      const page = await pi.agent.get(`/api/samples/${samples.a250.id}/motion`).expect(200)
      expect(result.groups[0].values[0].value).toBe(page.body.creep.slope)
      expect(result.groups[0].values[0].creepFit!.slopeStdErr).toBe(page.body.creep.slopeStdErr)
    })

    it('When a sample has no motion series, one has too few fields and a series has no sample, then each is counted with its reason', () => {
      expect(result.excluded).toEqual({ uncalibrated: 0, noSample: 1, notAtRemanence: 0, missing: 0, noMotionSeries: 1, noCreepFit: 1 })
      const reason = result.notes.find((n) => n.startsWith('Pt/Co/Pt 400, two fields: no creep slope.'))
      expect(reason).toMatch(/2 distinct field\(s\); the creep law needs at least 3/)
      expect(result.notes.join(' ')).toMatch(/Each sample is one value/)
    })

    it('When drafts are included, then the creep slopes are the same (motion series have no review step)', async () => {
      const res = await compute({ projectId: home.project.id, measure: 'creepSlope', groupBy: 'annealTemperatureC', includeDrafts: true })
      expect(res.status).toBe(200)
      expect(res.body.groups.map((g: { values: ComparisonValueDto[] }) => g.values.map((v) => v.value))).toEqual(result.groups.map((g) => g.values.map((v) => v.value)))
      expect(res.body.groups.every((g: { hasDrafts: boolean }) => !g.hasDrafts)).toBe(true)
    })

    it('When only the samples without a creep fit are chosen, then there are no groups and both are counted', async () => {
      const res = await compute({ sampleIds: [samples.plain300.id, samples.twoFields400.id], measure: 'creepSlope', groupBy: 'annealTemperatureC' })
      expect(res.status).toBe(200)
      expect(res.body.groups).toEqual([])
      expect(res.body.excluded).toMatchObject({ noMotionSeries: 1, noCreepFit: 1, noSample: 0 })
    })
  })
})
