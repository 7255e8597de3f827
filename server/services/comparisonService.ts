/**
 * Comparing samples and anneal conditions (METHODS §5.5). A comparison tells this story: resolve the samples the
 * person may compare ('comparison.use') → collect one value per analysed frame (meanWidth, period, wallDensity,
 * remanence), per image from its stack run (remanence, coerciveField, tc) or per sample from its motion series
 * (creepSlope, below), counting only approved work unless drafts are asked for (server/services/measuredFrames.ts) →
 * group by the chosen anneal parameter of the sample → per group n, mean, SD, a percentile-bootstrap 95 % CI of the
 * mean with a fixed seed (so a saved view re-computes to the same interval) and the type-7 five-number summary →
 * between every pair of groups Welch's t test, Mann–Whitney U, Hedges' g and the rank-biserial correlation
 * (shared/analysis/statistics.ts).
 *
 * The statistical unit is the analysed frame (or the image, for stack-run values): the bootstrap resamples those
 * values, never pixels, which are correlated (METHODS §5.5). Values whose unit cannot be established are left out and
 * counted: widths, periods and wall densities without a pixel size, coercive fields without a field unit.
 *
 * The creep slope (issue #8) is one value per sample: C of the creep law ln v = ln v₀ − C·H^(−1/4) fitted over the
 * steps of all the sample's motion series pooled (motionService.pooledForSample, the fit the sample's motion page
 * shows; shared/analysis/creepLaw.ts), fields as μ0H in mT, μ fixed at 1/4 so that every C is in mT^(1/4). The unit is
 * the sample, not the series, because (a) the anneal condition is a property of the sample: several series of one
 * film are repeated measurements of one specimen, and counting them as separate values would inflate n
 * (pseudo-replication); (b) the creep law needs at least 3 distinct fields, and a series may have only a few pulse
 * steps (three give one degree of freedom), so a fit per series can be impossible or rough where the pooled fit spans
 * the field range of all of them. Each value carries its fit's standard error, all there is to compare by when a
 * group holds a single sample; it measures the scatter of the steps about the creep line only, not a systematic error
 * of the measured velocities, so it can understate the real uncertainty. Motion series have no review step and no
 * stored result: each is analysed from its original file with the motion defaults when compared (cached), and a
 * series counts when its analysis succeeds, as on the motion page; `includeDrafts` does not change this measure.
 * Samples without a motion series, and samples whose series give no creep fit (fewer than 3 fields in a known unit),
 * are left out and counted; so are motion series not linked to a sample.
 */
import type { Sequelize } from 'sequelize'
import { bootstrapMeanCI, hedgesG, mannWhitneyU, mean, quantile, rankBiserial, standardDeviation, welchTTest } from '../../shared/analysis/statistics'
import {
  COMPARISON_CREEP_MU,
  COMPARISON_GROUP_BY_LABELS,
  COMPARISON_MEASURE_INFO,
  REMANENCE_FIELD_TOLERANCE_MT,
  type ComparisonGroupBy,
  type ComparisonGroupDto,
  type ComparisonMeasure,
  type ComparisonQuery,
  type ComparisonResultDto,
  type ComparisonValueDto,
  type PairwiseTestDto,
  type SavedComparisonDto,
} from '../../shared/types/comparison'
import { roleAllows } from '../../shared/auth/permissions'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, notFound } from '../errors'
import { SavedComparison, User, type Image, type Sample } from '../models'
import { recordAudit } from './auditService'
import { fieldInMilliTesla, resolveMeasurementScope, selectMeasuredFrames, selectStackSummaries, type MeasurementScope } from './measuredFrames'
import { selectMotionSeries, type MotionService } from './motionService'

/** Bootstrap settings of every comparison: fixed, so the same values always give the same interval. */
export const COMPARISON_BOOTSTRAP = { seed: 1, resamples: 2000, level: 0.95 } as const

type Excluded = ComparisonResultDto['excluded']
/** The measures of frame analyses and stack runs; the creep slope is collected per sample on its own. */
type FrameOrRunMeasure = Exclude<ComparisonMeasure, 'creepSlope'>
/** What the comparisons need of the motion service. */
type SampleCreepFits = Pick<MotionService, 'pooledForSample'>
type GroupKey = number | string | null

function groupKeyOf(sample: Sample, groupBy: ComparisonGroupBy): GroupKey {
  const value = sample[groupBy]
  return value === '' || value === undefined ? null : value
}

function groupLabel(key: GroupKey, groupBy: ComparisonGroupBy): string {
  if (key === null) return 'not recorded'
  if (typeof key === 'string') return key
  const unit = { annealTemperatureC: ' °C', annealDurationMin: ' min', annealFieldMT: ' mT', annealAtmosphere: '' }[groupBy]
  return `${key}${unit}`
}

/** Numbers ascending, then text alphabetically, "not recorded" last. */
function compareKeys(a: GroupKey, b: GroupKey): number {
  if (a === b) return 0
  if (a === null) return 1
  if (b === null) return -1
  if (typeof a === 'number' && typeof b === 'number') return a - b
  if (typeof a === 'number') return -1
  if (typeof b === 'number') return 1
  return a.localeCompare(b)
}

function scopeOf(query: ComparisonQuery): MeasurementScope {
  if (query.projectId !== undefined) return { projectId: query.projectId }
  if (query.sampleIds && query.sampleIds.length > 0) return { sampleIds: query.sampleIds }
  throw new AppError(400, 'invalid-input', 'Give either sampleIds or projectId.', { fields: { sampleIds: ['Choose samples or a project.'] } })
}

/** Values of a frame or stack-run measure for the images in scope, before grouping (see the file header for what counts). */
async function collectValues(sequelize: Sequelize, images: Image[], samples: Sample[], measure: FrameOrRunMeasure, includeDrafts: boolean, excluded: Excluded) {
  const values: ComparisonValueDto[] = []
  const imageRef = (image: Image) => ({ id: image.id, name: image.name })
  const sampleOf = (image: Image) => samples.find((s) => s.id === image.sampleId)
  const push = (image: Image, value: Omit<ComparisonValueDto, 'sample' | 'image' | 'creepFit'>) => {
    const sample = sampleOf(image)
    if (!sample) excluded.noSample++
    else values.push({ ...value, sample: { id: sample.id, name: sample.name }, image: imageRef(image), creepFit: null })
  }
  const runs = COMPARISON_MEASURE_INFO[measure].source === 'analysis' ? [] : await selectStackSummaries(sequelize, images, includeDrafts)

  if (measure === 'coerciveField' || measure === 'tc' || measure === 'remanence') {
    for (const run of runs) {
      const image = images.find((i) => i.id === run.imageId)!
      let value: number | null = null
      if (measure === 'tc') value = run.curie?.tc ?? null
      else if (measure === 'remanence') value = run.loop?.remanence ?? null
      else if (run.loop?.coerciveField != null) {
        value = fieldInMilliTesla(run.loop.coerciveField, run.loop.fieldUnit)
        if (value === null) {
          excluded.uncalibrated++
          continue
        }
      }
      if (value === null || !Number.isFinite(value)) {
        // A remanence measure falls back on the image's frames below; the others have nothing else to offer.
        if (measure !== 'remanence') excluded.missing++
        continue
      }
      push(image, { value, source: 'stack-run', draft: run.draft, frameId: null, frameIndex: null, analysisId: null, stackRunId: run.runId })
    }
  }
  if (measure === 'coerciveField' || measure === 'tc') return values

  // Images whose loop gave a remanence are represented by that one value, not again by their frames.
  const fromLoop = new Set(values.map((v) => v.image?.id))
  for (const row of await selectMeasuredFrames(sequelize, images.filter((i) => !fromLoop.has(i.id)), samples, includeDrafts)) {
    const m = row.measurements
    let value: number | null
    if (measure === 'remanence') {
      if (row.frame.fieldMT === null || Math.abs(row.frame.fieldMT) > REMANENCE_FIELD_TOLERANCE_MT) {
        excluded.notAtRemanence++
        continue
      }
      value = m.magnetization
    } else {
      const [calibrated, inPixels] = { meanWidth: [m.meanWidthNm, m.meanWidthPx], period: [m.periodNm, m.periodPx], wallDensity: [m.wallDensityPerUm, m.wallDensityPerPx] }[measure]
      if (calibrated == null && inPixels != null) {
        excluded.uncalibrated++
        continue
      }
      value = calibrated
    }
    if (value == null || !Number.isFinite(value)) {
      excluded.missing++
      continue
    }
    push(row.image, { value, source: 'analysis', draft: row.draft, frameId: row.frame.id, frameIndex: row.frame.index, analysisId: row.analysisId, stackRunId: null })
  }
  return values
}

/**
 * One creep slope per sample in scope (see the file header): the pooled creep fit of its motion series. Samples
 * without one are counted in `excluded`, with the fit's reason in `notes`.
 */
async function collectCreepSlopes(motion: SampleCreepFits, images: Image[], samples: Sample[], excluded: Excluded, notes: string[]): Promise<ComparisonValueDto[]> {
  const series = await selectMotionSeries(images)
  excluded.noSample += series.filter((image) => !samples.some((s) => s.id === image.sampleId)).length
  const values: ComparisonValueDto[] = []
  for (const sample of samples) {
    const own = series.filter((image) => image.sampleId === sample.id)
    if (own.length === 0) {
      excluded.noMotionSeries++
      continue
    }
    const pooled = await motion.pooledForSample(sample, own, {}, { mu: COMPARISON_CREEP_MU })
    // Why a series or step is not in the fit (a series that cannot be analysed, another velocity unit) or why no fit.
    const reasons = [...pooled.notes, ...pooled.series.flatMap((s) => (s.error ? [s.error.message] : []))]
    if (pooled.creep === null) {
      excluded.noCreepFit++
      // Steps without a field in a known unit never become points, and the pooled fit then says nothing itself.
      if (pooled.points.length === 0 && pooled.series.some((s) => s.motion !== null)) reasons.push('Its motion series give no step with a pulse field in a known unit (mT, Oe or A/m).')
      notes.push(`${sample.name}: no creep slope. ${reasons.join(' ')}`)
      continue
    }
    if (reasons.length > 0) notes.push(`${sample.name}: ${reasons.join(' ')}`)
    values.push({
      value: pooled.creep.slope,
      source: 'motion',
      draft: false,
      sample: { id: sample.id, name: sample.name },
      image: null,
      frameId: null,
      frameIndex: null,
      analysisId: null,
      stackRunId: null,
      creepFit: {
        slopeStdErr: pooled.creep.slopeStdErr,
        series: pooled.series.filter((s) => s.motion !== null).map((s) => ({ id: s.imageId, name: s.imageName })),
        steps: pooled.points.length,
        usedSteps: pooled.creep.usedPoints,
        creepFieldRangeMT: pooled.creep.creepFieldRange,
      },
    })
  }
  return values
}

function summarizeGroup(key: GroupKey, groupBy: ComparisonGroupBy, values: ComparisonValueDto[]): ComparisonGroupDto {
  const xs = values.map((v) => v.value)
  const ci = bootstrapMeanCI(xs, COMPARISON_BOOTSTRAP)
  const samples = new Map(values.map((v) => [v.sample.id, v.sample]))
  return {
    key,
    label: groupLabel(key, groupBy),
    samples: [...samples.values()].sort((a, b) => a.id - b.id),
    n: xs.length,
    mean: mean(xs),
    standardDeviation: standardDeviation(xs),
    ci: { lower: ci.lower, upper: ci.upper, level: ci.level, resamples: ci.resamples, seed: COMPARISON_BOOTSTRAP.seed },
    fiveNumber: xs.length ? { min: quantile(xs, 0)!, q1: quantile(xs, 0.25)!, median: quantile(xs, 0.5)!, q3: quantile(xs, 0.75)!, max: quantile(xs, 1)! } : null,
    hasDrafts: values.some((v) => v.draft),
    values,
  }
}

function pairwise(a: ComparisonGroupDto, b: ComparisonGroupDto): PairwiseTestDto {
  const xa = a.values.map((v) => v.value)
  const xb = b.values.map((v) => v.value)
  const mw = mannWhitneyU(xa, xb)
  return {
    groupA: a.key,
    groupB: b.key,
    labelA: a.label,
    labelB: b.label,
    welch: welchTTest(xa, xb),
    mannWhitney: { u: mw.u, z: mw.z, p: mw.p },
    hedgesG: hedgesG(xa, xb),
    rankBiserial: rankBiserial(xa, xb),
  }
}

function creepSlopeNotes(): string[] {
  return [
    `Each sample is one value: the creep slope C of ln v = ln v₀ − C·H^(−μ), μ = ${COMPARISON_CREEP_MU} fixed, fitted over the steps of all its motion series with fields as μ0H in mT (the fit of the sample's motion page). Series of one sample are not independent of each other, so they are pooled, not counted as separate values.`,
    'Motion series have no review step: each is analysed from its original file with the motion defaults whenever compared, so including drafts does not change this measure.',
    `The 95 % interval is a percentile bootstrap of the mean over the samples of a group (seed ${COMPARISON_BOOTSTRAP.seed}, ${COMPARISON_BOOTSTRAP.resamples} resamples); a group of one sample has no spread, so compare such slopes by the standard error of each fit.`,
    'The tests between groups need several samples per group; Mann–Whitney p uses the normal approximation, so with fewer than about 8 samples per group read it as indicative.',
  ]
}

function notesFor(query: ComparisonQuery): string[] {
  const info = COMPARISON_MEASURE_INFO[query.measure]
  if (query.measure === 'creepSlope') return creepSlopeNotes()
  const notes = [
    query.includeDrafts
      ? 'Drafts are included: each frame counts with its newest analysis, approved or not, and each image with its newest finished stack run; values that are not approved are flagged.'
      : 'Only approved work counts: the newest approved analysis of each frame, and the newest stack run of each image that finished with status "done" (stack runs have no review step).',
    `Each ${info.source === 'stack-run' ? 'image (its stack run)' : 'analysed frame'} is one value; the 95 % interval is a percentile bootstrap of the mean over these values (seed ${COMPARISON_BOOTSTRAP.seed}, ${COMPARISON_BOOTSTRAP.resamples} resamples).`,
    'Mann–Whitney p uses the normal approximation; with fewer than about 8 values per group read it as indicative.',
  ]
  if (query.measure === 'remanence') {
    notes.push(`Remanence: an image with a hysteresis loop from a stack run gives its loop remanence Mr; other images give M/Ms of each frame at |μ0H| ≤ ${REMANENCE_FIELD_TOLERANCE_MT} mT.`)
  }
  if (query.measure === 'coerciveField') notes.push('Coercive fields are converted to μ0Hc in mT from the unit of the frames.')
  return notes
}

function toSavedDto(row: SavedComparison): SavedComparisonDto {
  const createdBy = (row as unknown as { createdBy?: User | null }).createdBy
  return { id: row.id, labId: row.labId, name: row.name, query: row.query as unknown as ComparisonQuery, createdBy: createdBy ? { id: createdBy.id, name: createdBy.name } : null, createdAt: row.createdAt.toISOString() }
}

export function createComparisonService(deps: { sequelize: Sequelize; motion: SampleCreepFits }) {
  const { sequelize, motion } = deps

  /**
   * Compute a comparison.
   * @throws 400 when neither samples nor a project is given or the samples span labs; 404 for unknown or other labs'
   *   ids; 403 when the role may not compare.
   */
  async function compute(user: SessionUser, query: ComparisonQuery): Promise<ComparisonResultDto> {
    const scope = await resolveMeasurementScope(user, scopeOf(query), 'comparison.use')
    const excluded: Excluded = { uncalibrated: 0, noSample: 0, notAtRemanence: 0, missing: 0, noMotionSeries: 0, noCreepFit: 0 }
    const notes = notesFor(query)
    const values =
      query.measure === 'creepSlope'
        ? await collectCreepSlopes(motion, scope.images, scope.samples, excluded, notes)
        : await collectValues(sequelize, scope.images, scope.samples, query.measure, query.includeDrafts ?? false, excluded)
    const byKey = new Map<GroupKey, ComparisonValueDto[]>()
    for (const v of values) {
      const key = groupKeyOf(scope.samples.find((s) => s.id === v.sample.id)!, query.groupBy)
      byKey.set(key, [...(byKey.get(key) ?? []), v])
    }
    const groups = [...byKey.entries()].sort(([a], [b]) => compareKeys(a, b)).map(([key, vs]) => summarizeGroup(key, query.groupBy, vs))
    const pairs: PairwiseTestDto[] = []
    for (let i = 0; i < groups.length; i++) for (let j = i + 1; j < groups.length; j++) pairs.push(pairwise(groups[i], groups[j]))
    const info = COMPARISON_MEASURE_INFO[query.measure]
    return {
      measure: query.measure,
      label: info.label,
      unit: info.unit,
      groupBy: query.groupBy,
      groupByLabel: COMPARISON_GROUP_BY_LABELS[query.groupBy],
      includeDrafts: query.includeDrafts ?? false,
      labId: scope.labId,
      groups,
      pairs,
      excluded,
      notes,
    }
  }

  /** Save a comparison view for the lab; its query is checked by resolving it now. */
  async function save(user: SessionUser, input: { name: string; query: ComparisonQuery }): Promise<SavedComparisonDto> {
    const scope = await resolveMeasurementScope(user, scopeOf(input.query), 'comparison.use')
    const query: ComparisonQuery = { ...input.query, includeDrafts: input.query.includeDrafts ?? false }
    const row = await SavedComparison.create({ labId: scope.labId, name: input.name.trim(), query: query as unknown as Record<string, unknown>, createdById: user.id })
    await recordAudit({ labId: scope.labId, actorId: user.id, action: 'comparison.save', entityType: 'comparison', entityId: row.id, after: { name: row.name, query } })
    return toSavedDto(Object.assign(row, { createdBy: { id: user.id, name: user.name } }))
  }

  /** Saved comparisons of the person's labs where they may compare (optionally one lab), newest first. */
  async function list(user: SessionUser, labId?: number): Promise<SavedComparisonDto[]> {
    const labIds = user.memberships.filter((m) => roleAllows(m.role, 'comparison.use') && (labId === undefined || m.labId === labId)).map((m) => m.labId)
    if (labId !== undefined && labIds.length === 0) assertLabAction(user, labId, 'comparison.use', 'lab')
    const rows = await SavedComparison.findAll({ where: { labId: labIds }, include: [{ model: User, as: 'createdBy', attributes: ['id', 'name'] }], order: [['id', 'DESC']], limit: 500 })
    return rows.map(toSavedDto)
  }

  async function savedFor(user: SessionUser, id: number): Promise<SavedComparison> {
    const row = await SavedComparison.findByPk(id, { include: [{ model: User, as: 'createdBy', attributes: ['id', 'name'] }] })
    if (!row) throw notFound('comparison')
    assertLabAction(user, row.labId, 'lab.read', 'comparison')
    assertLabAction(user, row.labId, 'comparison.use', 'comparison')
    return row
  }

  /** A saved comparison, re-computed from the current data. */
  async function get(user: SessionUser, id: number): Promise<{ comparison: SavedComparisonDto; result: ComparisonResultDto }> {
    const row = await savedFor(user, id)
    return { comparison: toSavedDto(row), result: await compute(user, row.query as unknown as ComparisonQuery) }
  }

  /** Delete a saved view: its creator or a lab manager. */
  async function remove(user: SessionUser, id: number): Promise<void> {
    const row = await savedFor(user, id)
    if (row.createdById !== user.id) assertLabAction(user, row.labId, 'lab.manage', 'comparison')
    await row.destroy()
    await recordAudit({ labId: row.labId, actorId: user.id, action: 'comparison.delete', entityType: 'comparison', entityId: id, before: { name: row.name, query: row.query } })
  }

  return { compute, save, list, get, remove }
}

export type ComparisonService = ReturnType<typeof createComparisonService>
