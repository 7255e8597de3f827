import { beforeEach, describe, expect, it } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { ComparisonGroupDto, ComparisonResultDto, ComparisonValueDto } from '@shared/types/comparison'
import { comparisonChartData, comparisonQuery, creepFitText, jitterOffset, LAST_COMPARED_PROJECT_KEY, measureLabel, useComparisonStore } from '@/stores/comparison'
import { jsonResponse, stubFetch } from '../fakeApi'

function value(v: number, draft = false, frameIndex = 0): ComparisonValueDto {
  return {
    value: v,
    source: 'analysis',
    draft,
    sample: { id: 1, name: 'S' },
    image: { id: 2, name: 'img.tif' },
    frameId: 10 + frameIndex,
    frameIndex,
    analysisId: 100 + frameIndex,
    stackRunId: null,
    creepFit: null,
  }
}

function group(key: number, values: ComparisonValueDto[], fiveNumber: ComparisonGroupDto['fiveNumber'], ci: [number, number] | null): ComparisonGroupDto {
  const xs = values.map((v) => v.value)
  return {
    key,
    label: `${key} °C`,
    samples: [{ id: key, name: `Sample ${key}` }],
    n: values.length,
    mean: xs.reduce((a, b) => a + b, 0) / xs.length,
    standardDeviation: 1,
    ci: { lower: ci?.[0] ?? null, upper: ci?.[1] ?? null, level: 0.95, resamples: 2000, seed: 1 },
    fiveNumber,
    hasDrafts: values.some((v) => v.draft),
    values,
  }
}

// Five-number summaries as the server reports them (type-7 quantiles of the values): hand-computed for these lists.
const RESULT: ComparisonResultDto = {
  measure: 'meanWidth',
  label: 'Mean domain width',
  unit: 'nm',
  groupBy: 'annealTemperatureC',
  groupByLabel: 'Anneal temperature',
  includeDrafts: true,
  labId: 1,
  groups: [
    group(250, [value(600, false, 0), value(610, false, 1), value(640, false, 2)], { min: 600, q1: 605, median: 610, q3: 625, max: 640 }, [601, 632]),
    group(300, [value(790, false, 0), value(800, true, 1)], { min: 790, q1: 792.5, median: 795, q3: 797.5, max: 800 }, null),
  ],
  pairs: [],
  excluded: { uncalibrated: 0, noSample: 0, notAtRemanence: 0, missing: 0, noMotionSeries: 0, noCreepFit: 0 },
  notes: [],
}

/** A creep slope of one sample (constructed numbers): the value of the whole sample, no image. */
function creepSlope(sampleId: number, slope: number, slopeStdErr: number): ComparisonValueDto {
  return {
    value: slope,
    source: 'motion',
    draft: false,
    sample: { id: sampleId, name: `Film ${sampleId}` },
    image: null,
    frameId: null,
    frameIndex: null,
    analysisId: null,
    stackRunId: null,
    creepFit: { slopeStdErr, series: [{ id: 7, name: 'a.tif' }, { id: 8, name: 'b.tif' }], steps: 6, usedSteps: 4, creepFieldRangeMT: [4, 5.5] },
  }
}

beforeEach(() => setActivePinia(createPinia()))
describe('comparisonQuery', () => {
  it('When no sample is chosen, then the whole project is asked for', () => {
    expect(comparisonQuery({ projectId: 4, sampleIds: [], measure: 'period', groupBy: 'annealAtmosphere', includeDrafts: false })).toEqual({
      projectId: 4,
      measure: 'period',
      groupBy: 'annealAtmosphere',
      includeDrafts: false,
    })
  })

  it('When samples are chosen, then only they are asked for (sorted) and not the project', () => {
    expect(comparisonQuery({ projectId: 4, sampleIds: [9, 3], measure: 'tc', groupBy: 'annealFieldMT', includeDrafts: true })).toEqual({
      sampleIds: [3, 9],
      measure: 'tc',
      groupBy: 'annealFieldMT',
      includeDrafts: true,
    })
  })

  it('When nothing is chosen, then there is no request', () => {
    expect(comparisonQuery({ projectId: null, sampleIds: [], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false })).toBeNull()
  })

  it.each([
    ['meanWidth', 'Mean domain width (nm)'],
    ['wallDensity', 'Wall density (µm⁻¹)'],
    ['remanence', 'Remanence M/Ms'],
    ['tc', 'Curie temperature (K)'],
    ['creepSlope', 'Creep slope C (mT^(1/4))'],
  ] as const)('When the measure is %s, then its label reads "%s"', (measure, label) => {
    expect(measureLabel(measure)).toBe(label)
  })
})

describe('comparisonChartData', () => {
  const chart = comparisonChartData(RESULT)

  it('When a result arrives, then each box is the group’s five-number summary in ECharts order', () => {
    expect(chart.categories).toEqual(['250 °C', '300 °C'])
    expect(chart.boxes).toEqual(RESULT.groups.map((g) => [g.fiveNumber!.min, g.fiveNumber!.q1, g.fiveNumber!.median, g.fiveNumber!.q3, g.fiveNumber!.max]))
  })

  it('When values are drafts, then they go to their own series and the rest to the approved one, each near its group', () => {
    expect(chart.approvedPoints.map((p) => p.value[1])).toEqual([600, 610, 640, 790])
    expect(chart.draftPoints.map((p) => p.value[1])).toEqual([800])
    expect(chart.draftPoints[0].draft).toBe(true)
    for (const point of [...chart.approvedPoints, ...chart.draftPoints]) {
      const groupIndex = RESULT.groups.findIndex((g) => g.values.some((v) => v.value === point.value[1]))
      expect(Math.abs(point.value[0] - groupIndex)).toBeLessThanOrEqual(0.18)
    }
  })

  it('When the same result is drawn twice, then the points sit at the same places (no randomness)', () => {
    expect(comparisonChartData(RESULT)).toEqual(chart)
    expect(jitterOffset(0)).toBe(0)
    // Neighbouring points of a group never share a place.
    expect(new Set([0, 1, 2, 3, 4].map(jitterOffset)).size).toBe(5)
  })

  it('When a group has a CI, then its error bar is a stem from lower to upper and two caps; without one, no bar', () => {
    expect(chart.means).toEqual([
      [0, (600 + 610 + 640) / 3],
      [1, 795],
    ])
    expect(chart.ciSegments).toHaveLength(3)
    expect(chart.ciSegments[0]).toEqual([
      [0, 601],
      [0, 632],
    ])
    expect(chart.ciSegments.slice(1).map(([a, b]) => [a[1], b[1]])).toEqual([
      [601, 601],
      [632, 632],
    ])
  })
})

describe('creep slopes', () => {
  it('When a value is a sample’s creep slope, then its point has no image and carries the fit for the tooltip', () => {
    const groups = [group(250, [creepSlope(1, 40.35, 0.033)], null, [40.35, 40.35])]
    const result: ComparisonResultDto = { ...RESULT, measure: 'creepSlope', label: 'Creep slope C', unit: 'mT^(1/4)', groups }
    const [point] = comparisonChartData(result).approvedPoints
    expect(point).toMatchObject({ value: [0, 40.35], sample: 'Film 1', image: null, frameIndex: null, draft: false })
    expect(point.creepFit?.slopeStdErr).toBe(0.033)
  })

  it('When a creep fit is described, then its series, the steps in the creep range and their fields are named', () => {
    expect(creepFitText(creepSlope(1, 40, 0.1).creepFit!)).toBe('2 series, 4 of 6 steps in the creep fit (4–5.5 mT)')
    expect(creepFitText({ ...creepSlope(1, 40, 0.1).creepFit!, creepFieldRangeMT: null })).toBe('2 series, 4 of 6 steps in the creep fit')
  })
})

describe('useComparisonStore', () => {
  it('When Compare runs, then the store posts the form’s query and exposes the chart of the answer', async () => {
    const requests = stubFetch({ 'POST /api/comparisons/compute': () => jsonResponse(200, RESULT) })
    const store = useComparisonStore()
    store.form.projectId = 4
    store.form.includeDrafts = true
    await store.compute()

    expect(requests).toHaveLength(1)
    expect(requests[0].body).toEqual({ projectId: 4, measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: true })
    expect(store.status).toBe('ready')
    expect(store.chart?.boxes[0]).toEqual([600, 605, 610, 625, 640])
    expect(store.stale).toBe(false)
    store.form.measure = 'period'
    expect(store.stale).toBe(true)
    expect(store.exportScope).toEqual({ projectId: 4 })
  })

  it('When a saved view is opened, then its query fills the form and its result is shown', async () => {
    const saved = { id: 3, labId: 1, name: 'Width vs T', query: { sampleIds: [5], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false }, createdBy: null, createdAt: '2026-01-01T00:00:00Z' }
    stubFetch({ 'GET /api/comparisons/3': () => jsonResponse(200, { comparison: saved, result: RESULT }) })
    const store = useComparisonStore()
    await store.openView(3)

    expect(store.form).toEqual({ projectId: null, sampleIds: [5], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false })
    expect(store.view?.name).toBe('Width vs T')
    expect(store.result).toEqual(RESULT)
    expect(store.stale).toBe(false)
    expect(store.exportScope).toEqual({ sampleId: 5 })
  })

  it('When a result is saved as a view, then the saved query is the one the result answers', async () => {
    const requests = stubFetch({
      'POST /api/comparisons/compute': () => jsonResponse(200, RESULT),
      'POST /api/comparisons': (r) => jsonResponse(201, { id: 8, labId: 1, name: (r.body as { name: string }).name, query: (r.body as { query: unknown }).query, createdBy: null, createdAt: '2026-01-01T00:00:00Z' }),
    })
    const store = useComparisonStore()
    store.form.projectId = 4
    await store.compute()
    store.form.groupBy = 'annealDurationMin'
    await store.save('Mine')

    expect(requests[1].body).toEqual({ name: 'Mine', query: { projectId: 4, measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false } })
    expect(store.saved.map((s) => s.id)).toEqual([8])
    expect(store.view?.id).toBe(8)
  })

  it('When a project was compared, then a later empty form starts from it, while the person still sees it', async () => {
    window.localStorage.removeItem(LAST_COMPARED_PROJECT_KEY)
    stubFetch({ 'POST /api/comparisons/compute': () => jsonResponse(200, RESULT) })
    const first = useComparisonStore()
    first.form.projectId = 4
    await first.compute()
    expect(window.localStorage.getItem(LAST_COMPARED_PROJECT_KEY)).toBe('4')

    // A later visit (a fresh store, as after a reload).
    setActivePinia(createPinia())
    const later = useComparisonStore()
    later.preselectProject([2, 4, 7])
    expect(later.form.projectId).toBe(4)

    setActivePinia(createPinia())
    const elsewhere = useComparisonStore()
    elsewhere.preselectProject([2, 7])
    expect(elsewhere.form.projectId).toBeNull()
    window.localStorage.removeItem(LAST_COMPARED_PROJECT_KEY)
  })

  it('When nothing was compared here, then the only project is chosen, several are left to the person, and a filled form is kept', () => {
    window.localStorage.removeItem(LAST_COMPARED_PROJECT_KEY)
    const only = useComparisonStore()
    only.preselectProject([9])
    expect(only.form.projectId).toBe(9)

    setActivePinia(createPinia())
    const several = useComparisonStore()
    several.preselectProject([2, 9])
    expect(several.form.projectId).toBeNull()

    setActivePinia(createPinia())
    const chosen = useComparisonStore()
    chosen.form.sampleIds = [5]
    chosen.preselectProject([9])
    expect(chosen.form.projectId).toBeNull()
  })
})
