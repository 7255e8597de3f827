/**
 * Comparisons against the real PostgreSQL and s3rver: which values count (approved only unless drafts; stack runs
 * 'done'), grouping by anneal parameters, and every statistic of the route checked against an independent reference —
 * simple-statistics 7.12.1 where it has the function, otherwise the formula evaluated here with simple-statistics
 * primitives ([D] = derived from the formula). Saved views re-compute to the same result.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { saveAutoMask, submitAndApprove, uploadImage, FIXTURE_RECIPE, type Session } from './analysisFixtures'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { LAB_ROLES, roleAllows, type LabRole } from '../../shared/auth/permissions'
import { Analysis, Sample, StackRun } from '../../server/models'

const PIXEL_NM = 100

/** Type-7 quantile (Hyndman & Fan 1996): position (n − 1)p, linear interpolation [D]. */
function quantile7(values: number[], p: number): number {
  const x = [...values].sort((a, b) => a - b)
  const h = (x.length - 1) * p
  const lo = Math.floor(h)
  return x[lo] + (h - lo) * (x[Math.min(lo + 1, x.length - 1)] - x[lo])
}

/** Two-sided Student-t tail 1 − 2∫₀^|t| f(x) dx, f the t density, by Simpson's rule on 20 000 intervals [D]. */
function studentTwoSidedP(t: number, df: number): number {
  const logC = ss.gammaln((df + 1) / 2) - ss.gammaln(df / 2) - 0.5 * Math.log(df * Math.PI)
  const f = (x: number) => Math.exp(logC - ((df + 1) / 2) * Math.log(1 + (x * x) / df))
  const n = 20_000
  const h = Math.abs(t) / n
  let sum = f(0) + f(Math.abs(t))
  for (let i = 1; i < n; i++) sum += (i % 2 ? 4 : 2) * f(i * h)
  return 1 - (2 * h * sum) / 3
}

const normalCdf = (z: number) => 0.5 * (1 + ss.errorFunction(z / Math.SQRT2))

interface StackSummaryInput {
  imageId: number
  status: 'done' | 'done-with-errors' | 'failed'
  loop?: { coerciveField: number | null; fieldUnit: string | null; remanence: number | null }
  curie?: { tc: number | null }
}

describe('comparisons', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  const s = {} as Record<LabRole | 'outsider', Session>
  const samples = {} as Record<'a300' | 'b300' | 'c400' | 'none', Sample>
  const images = {} as Record<'a300' | 'b300' | 'c400' | 'none' | 'loose' | 'uncal', number>
  const approvedIds: Record<string, number[]> = {}
  let draftId: number

  /** Upload frames of labyrinths of the given periods (px) and save their masks; approve all but `draftIndex`. */
  async function analysedImage(key: keyof typeof images, name: string, periods: number[], options: { sampleId?: number; pixelSizeNm?: number | null; fieldsMT?: number[]; draftIndex?: number }) {
    // Seeds fixed per period so the fixture is the same every run.
    const frames = periods.map((p, i) => renderLabyrinth({ size: 128, periodPx: p, seed: 100 + p * 10 + i }).image)
    const pixelSizeNm = options.pixelSizeNm === undefined ? PIXEL_NM : options.pixelSizeNm
    const { imageId, frameIds } = await uploadImage(s.microscopist, home.project.id, { name, frames, pixelSizeNm, sampleId: options.sampleId, fieldsMT: options.fieldsMT })
    images[key] = imageId
    approvedIds[key] = []
    for (let i = 0; i < frames.length; i++) {
      const analysis = await saveAutoMask(s.annotator, frameIds[i], frames[i], pixelSizeNm)
      if (i === options.draftIndex) draftId = analysis.id
      else {
        await submitAndApprove(s.annotator, s.reviewer, analysis.id)
        approvedIds[key].push(analysis.id)
      }
    }
  }

  async function stackRun(input: StackSummaryInput) {
    return StackRun.create({
      imageId: input.imageId,
      recipe: FIXTURE_RECIPE as unknown as Record<string, unknown>,
      engineVersion: '1.0.0',
      status: input.status,
      framesTotal: 1,
      framesDone: 1,
      threshold: null,
      summary: { loop: input.loop ?? null, curie: input.curie ?? null },
      error: null,
      worker: null,
      heartbeatAt: null,
      startedAt: new Date(),
      finishedAt: new Date(),
      createdById: home.people.microscopist.id,
    })
  }

  const storedValue = async (analysisId: number, key: string) => ((await Analysis.findByPk(analysisId))!.results as { measurements: Record<string, number> }).measurements[key]

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Compare')
    for (const role of LAB_ROLES) s[role] = await signIn(ctx.app, home.people[role].email)
    s.outsider = await signIn(ctx.app, (await createLabWithRoles('CompareOther')).people.pi.email)
    const sample = (name: string, annealTemperatureC: number | null, annealAtmosphere: string) =>
      Sample.create({ projectId: home.project.id, name, thicknessNm: 1, annealTemperatureC, annealDurationMin: 60, annealAtmosphere, annealFieldMT: null })
    samples.a300 = await sample('A 300', 300, 'Ar')
    samples.b300 = await sample('B 300', 300, 'N2')
    samples.c400 = await sample('C 400', 400, 'Ar')
    samples.none = await sample('D unknown', null, '')
    await analysedImage('a300', 'a300.tif', [12, 13], { sampleId: samples.a300.id })
    await analysedImage('b300', 'b300.tif', [14, 15], { sampleId: samples.b300.id })
    await analysedImage('c400', 'c400.tif', [18, 19, 20, 21, 22], { sampleId: samples.c400.id, fieldsMT: [0, 0.3, 5, -0.2, 10], draftIndex: 4 })
    await analysedImage('none', 'none.tif', [16], { sampleId: samples.none.id })
    await analysedImage('loose', 'loose.tif', [17], {})
    await analysedImage('uncal', 'uncal.tif', [13], { sampleId: samples.a300.id, pixelSizeNm: null })
    // Stack-run summaries as the worker stores them (stack processing itself: stackRuns.test.ts). Older and failed
    // runs must be ignored: the newest finished run of an image counts.
    await stackRun({ imageId: images.a300, status: 'done', loop: { coerciveField: 99, fieldUnit: 'mT', remanence: 0.1 } })
    await stackRun({ imageId: images.a300, status: 'done', loop: { coerciveField: 10, fieldUnit: 'Oe', remanence: 0.62 } })
    await stackRun({ imageId: images.b300, status: 'done', loop: { coerciveField: 2, fieldUnit: 'mT', remanence: null } })
    await stackRun({ imageId: images.b300, status: 'failed' })
    await stackRun({ imageId: images.c400, status: 'done-with-errors', loop: { coerciveField: 5, fieldUnit: 'mT', remanence: 0.4 }, curie: { tc: 600 } })
  })
  afterAll(() => ctx.stop())

  const compute = (who: Session, body: object) => who.agent.post('/api/comparisons/compute').set('x-csrf-token', who.csrf).send(body)

  describe('POST /api/comparisons/compute', () => {
    it('When mean widths are grouped by anneal temperature, then the approved values of each group, in order, with n and exclusions', async () => {
      const res = await compute(s.pi, { projectId: home.project.id, measure: 'meanWidth', groupBy: 'annealTemperatureC' })
      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body).toMatchObject({ measure: 'meanWidth', unit: 'nm', groupBy: 'annealTemperatureC', includeDrafts: false, labId: home.lab.id })
      expect(res.body.groups.map((g: { key: unknown; label: string; n: number }) => [g.key, g.label, g.n])).toEqual([
        [300, '300 °C', 4],
        [400, '400 °C', 4],
        [null, 'not recorded', 1],
      ])
      const g300 = res.body.groups[0]
      expect(g300.values.map((v: { analysisId: number }) => v.analysisId)).toEqual([...approvedIds.a300, ...approvedIds.b300])
      for (const v of g300.values) expect(v.value).toBe(await storedValue(v.analysisId, 'meanWidthNm'))
      expect(g300.samples.map((x: { name: string }) => x.name)).toEqual(['A 300', 'B 300'])
      expect(g300.hasDrafts).toBe(false)
      // The image without a sample and the one without a pixel size are left out and counted.
      expect(res.body.excluded).toEqual({ uncalibrated: 1, noSample: 1, notAtRemanence: 0, missing: 0, noMotionSeries: 0, noCreepFit: 0 })
      expect(res.body.notes.join(' ')).toMatch(/approved/)
    })

    it('When the statistics are checked, then they match simple-statistics 7.12.1 and the formulas', async () => {
      const res = await compute(s.reviewer, { sampleIds: [samples.a300.id, samples.b300.id, samples.c400.id], measure: 'meanWidth', groupBy: 'annealTemperatureC' })
      const [g300, g400] = res.body.groups
      const a: number[] = g300.values.map((v: { value: number }) => v.value)
      const b: number[] = g400.values.map((v: { value: number }) => v.value)
      expect([a.length, b.length]).toEqual([4, 4])
      // simple-statistics 7.12.1 mean and sampleStandardDeviation [R]
      expect(g300.mean).toBeCloseTo(ss.mean(a), 10)
      expect(g300.standardDeviation).toBeCloseTo(ss.sampleStandardDeviation(a), 10)
      expect(g400.mean).toBeCloseTo(ss.mean(b), 10)
      // five-number summary: type-7 quantiles evaluated here [D]
      expect(g300.fiveNumber).toEqual({ min: Math.min(...a), q1: expect.closeTo(quantile7(a, 0.25), 10), median: expect.closeTo(quantile7(a, 0.5), 10), q3: expect.closeTo(quantile7(a, 0.75), 10), max: Math.max(...a) })
      // bootstrap CI: fixed seed and settings; a percentile interval of means lies within [min, max] around the mean [D]
      expect(g300.ci).toMatchObject({ level: 0.95, resamples: 2000, seed: 1 })
      expect(g300.ci.lower).toBeLessThanOrEqual(g300.mean)
      expect(g300.ci.upper).toBeGreaterThanOrEqual(g300.mean)
      expect(g300.ci.lower).toBeGreaterThanOrEqual(Math.min(...a))
      expect(g300.ci.upper).toBeLessThanOrEqual(Math.max(...a))
      expect(g300.ci.upper).toBeGreaterThan(g300.ci.lower)

      const [pair] = res.body.pairs
      expect([pair.groupA, pair.groupB, pair.labelA, pair.labelB]).toEqual([300, 400, '300 °C', '400 °C'])
      // Welch t: with equal group sizes it equals Student's pooled t, simple-statistics tTestTwoSample [R + D]
      expect(pair.welch.t).toBeCloseTo(ss.tTestTwoSample(a, b, 0)!, 8)
      expect(pair.welch.meanDifference).toBeCloseTo(ss.mean(a) - ss.mean(b), 10)
      // Welch–Satterthwaite df [D]
      const va = ss.sampleVariance(a) / a.length
      const vb = ss.sampleVariance(b) / b.length
      const df = (va + vb) ** 2 / (va ** 2 / (a.length - 1) + vb ** 2 / (b.length - 1))
      expect(pair.welch.df).toBeCloseTo(df, 8)
      // two-sided p: the t density integrated numerically [D]
      expect(pair.welch.p).toBeCloseTo(studentTwoSidedP(pair.welch.t, df), 7)
      // Mann–Whitney U = rank sum of A − nA(nA+1)/2, rank sum from simple-statistics wilcoxonRankSum [R]
      const u = ss.wilcoxonRankSum(a, b) - (a.length * (a.length + 1)) / 2
      expect(pair.mannWhitney.u).toBe(u)
      // normal approximation with continuity correction, no ties here (R wilcox.test, correct = TRUE) [D]
      const n = a.length + b.length
      const z = (Math.sign(u - (a.length * b.length) / 2) * Math.max(0, Math.abs(u - (a.length * b.length) / 2) - 0.5)) / Math.sqrt((a.length * b.length * (n + 1)) / 12)
      expect(pair.mannWhitney.z).toBeCloseTo(z, 10)
      expect(pair.mannWhitney.p).toBeCloseTo(2 * (1 - normalCdf(Math.abs(z))), 6)
      // Hedges g = J·d, d with the pooled SD, J = Γ(ν/2)/(√(ν/2)·Γ((ν−1)/2)) (Hedges & Olkin 1985 [M]) [D]
      const nu = a.length + b.length - 2
      const sp = Math.sqrt(((a.length - 1) * ss.sampleVariance(a) + (b.length - 1) * ss.sampleVariance(b)) / nu)
      const j = Math.exp(ss.gammaln(nu / 2) - ss.gammaln((nu - 1) / 2)) / Math.sqrt(nu / 2)
      expect(pair.hedgesG).toBeCloseTo((j * (ss.mean(a) - ss.mean(b))) / sp, 6)
      // rank-biserial r = 2U/(nA·nB) − 1 (Kerby 2014 [M]) [D]
      expect(pair.rankBiserial).toBeCloseTo((2 * u) / (a.length * b.length) - 1, 12)
    })

    it('When the same comparison is computed twice, then the bootstrap interval is identical (fixed seed)', async () => {
      const body = { projectId: home.project.id, measure: 'period', groupBy: 'annealAtmosphere' }
      const first = await compute(s.pi, body)
      const second = await compute(s.pi, body)
      expect(first.body.groups.map((g: { ci: unknown }) => g.ci)).toEqual(second.body.groups.map((g: { ci: unknown }) => g.ci))
      expect(first.body.groups.map((g: { key: unknown; n: number }) => [g.key, g.n])).toEqual([
        ['Ar', 6],
        ['N2', 2],
        [null, 1],
      ])
      expect(first.body.unit).toBe('nm')
    })

    it('When drafts are included, then the draft frame joins its group flagged as a draft', async () => {
      const res = await compute(s.pi, { sampleIds: [samples.c400.id], measure: 'wallDensity', groupBy: 'annealTemperatureC', includeDrafts: true })
      const [g400] = res.body.groups
      expect(g400.n).toBe(5)
      expect(g400.hasDrafts).toBe(true)
      const draft = g400.values.find((v: { analysisId: number }) => v.analysisId === draftId)
      expect(draft).toMatchObject({ draft: true, source: 'analysis', frameIndex: 4 })
      expect(draft.value).toBe(await storedValue(draftId, 'wallDensityPerUm'))
      expect(res.body.unit).toBe('µm⁻¹')
    })

    it('When coercive fields are compared, then the newest finished run per image counts, converted to mT, and "done-with-errors" only with drafts', async () => {
      const approvedOnly = await compute(s.pi, { projectId: home.project.id, measure: 'coerciveField', groupBy: 'annealTemperatureC' })
      expect(approvedOnly.body.unit).toBe('mT')
      expect(approvedOnly.body.groups.map((g: { key: number; values: { value: number; source: string }[] }) => [g.key, g.values.map((v) => [v.value, v.source])])).toEqual([
        // 10 Oe → μ0H = 1 mT (shared/units/magneticUnits.ts, METHODS §9.3 [R])
        [300, [[1, 'stack-run'], [2, 'stack-run']]],
      ])
      const withDrafts = await compute(s.pi, { projectId: home.project.id, measure: 'coerciveField', groupBy: 'annealTemperatureC', includeDrafts: true })
      expect(withDrafts.body.groups[1]).toMatchObject({ key: 400, n: 1, hasDrafts: true })
      expect(withDrafts.body.groups[1].values[0]).toMatchObject({ value: 5, draft: true })
      const tc = await compute(s.pi, { projectId: home.project.id, measure: 'tc', groupBy: 'annealTemperatureC', includeDrafts: true })
      expect(tc.body.groups.map((g: { key: number; values: { value: number }[] }) => [g.key, g.values.map((v) => v.value)])).toEqual([[400, [600]]])
      expect(tc.body.unit).toBe('K')
    })

    it('When remanence is compared, then a loop remanence stands for its image and other images give M/Ms of frames near zero field', async () => {
      const res = await compute(s.pi, { projectId: home.project.id, measure: 'remanence', groupBy: 'annealTemperatureC' })
      const byKey = new Map(res.body.groups.map((g: { key: number | null }) => [g.key, g]))
      const g300 = byKey.get(300) as { values: { value: number; source: string; image: { id: number } }[] }
      // a300: loop Mr 0.62; b300 has no loop remanence and its frames have no field recorded → not at remanence
      expect(g300.values.map((v) => [v.image.id, v.value, v.source])).toEqual([[images.a300, 0.62, 'stack-run']])
      const g400 = byKey.get(400) as { values: { value: number; frameIndex: number; analysisId: number }[] }
      // c400's run finished with errors, so without drafts its frames at |μ0H| ≤ 0.5 mT count: fields 0, 0.3, −0.2 mT
      expect(g400.values.map((v) => v.frameIndex)).toEqual([0, 1, 3])
      for (const v of g400.values) expect(v.value).toBe(await storedValue(v.analysisId, 'magnetization'))
      expect(res.body.excluded.notAtRemanence).toBeGreaterThanOrEqual(3)
      expect(res.body.unit).toBe('')
    })

    const roleCases = LAB_ROLES.map((role) => ({ role, allowed: roleAllows(role, 'comparison.use') }))
    it.each(roleCases)('When the $role compares, then allowed=$allowed (permissions table)', async ({ role, allowed }) => {
      expect((await compute(s[role], { projectId: home.project.id, measure: 'period', groupBy: 'annealTemperatureC' })).status).toBe(allowed ? 200 : 403)
    })

    it('When the input is incomplete or another lab\u2019s, then 400 or 404', async () => {
      expect((await compute(s.pi, { measure: 'period', groupBy: 'annealTemperatureC' })).status).toBe(400)
      expect((await compute(s.pi, { projectId: home.project.id, sampleIds: [samples.a300.id], measure: 'period', groupBy: 'annealTemperatureC' })).status).toBe(400)
      expect((await compute(s.pi, { projectId: home.project.id, measure: 'volume', groupBy: 'annealTemperatureC' })).status).toBe(400)
      expect((await compute(s.outsider, { sampleIds: [samples.a300.id], measure: 'period', groupBy: 'annealTemperatureC' })).status).toBe(404)
    })
  })

  describe('saved comparisons', () => {
    it('When a PI saves a view, then the lab lists it and opening it re-computes the same result', async () => {
      const query = { sampleIds: [samples.a300.id, samples.c400.id], measure: 'meanWidth', groupBy: 'annealTemperatureC' }
      const saved = await s.pi.agent.post('/api/comparisons').set('x-csrf-token', s.pi.csrf).send({ name: 'Width vs anneal', query })
      expect(saved.status).toBe(201)
      expect(saved.body).toMatchObject({ name: 'Width vs anneal', labId: home.lab.id, query: { ...query, includeDrafts: false }, createdBy: { id: home.people.pi.id } })
      const list = await s.reviewer.agent.get('/api/comparisons')
      expect(list.body.map((c: { id: number }) => c.id)).toContain(saved.body.id)
      const opened = await s.reviewer.agent.get(`/api/comparisons/${saved.body.id}`)
      expect(opened.status).toBe(200)
      const fresh = await compute(s.reviewer, query)
      expect(opened.body.result).toEqual(fresh.body)
      expect(opened.body.comparison.name).toBe('Width vs anneal')
    })

    it('When people without the permission or from another lab open it, then 403 / 404, and only the creator or a manager deletes it', async () => {
      const saved = await s.reviewer.agent.post('/api/comparisons').set('x-csrf-token', s.reviewer.csrf).send({ name: 'Reviewer view', query: { projectId: home.project.id, measure: 'period', groupBy: 'annealTemperatureC' } })
      expect(saved.status).toBe(201)
      expect((await s.annotator.agent.get(`/api/comparisons/${saved.body.id}`)).status).toBe(403)
      expect((await s.annotator.agent.get('/api/comparisons')).body).toEqual([])
      expect((await s.outsider.agent.get(`/api/comparisons/${saved.body.id}`)).status).toBe(404)
      const other = await s.pi.agent.post('/api/comparisons').set('x-csrf-token', s.pi.csrf).send({ name: 'PI view', query: { projectId: home.project.id, measure: 'period', groupBy: 'annealTemperatureC' } })
      expect((await s.reviewer.agent.delete(`/api/comparisons/${other.body.id}`).set('x-csrf-token', s.reviewer.csrf)).status).toBe(403)
      expect((await s.reviewer.agent.delete(`/api/comparisons/${saved.body.id}`).set('x-csrf-token', s.reviewer.csrf)).status).toBe(204)
      expect((await s.admin.agent.delete(`/api/comparisons/${other.body.id}`).set('x-csrf-token', s.admin.csrf)).status).toBe(204)
      expect((await s.pi.agent.get(`/api/comparisons/${other.body.id}`)).status).toBe(404)
    })
  })
})
