/**
 * Comparing samples and anneal conditions (METHODS §5.5): one measure, values grouped by an anneal parameter, per-group
 * distribution with a bootstrap CI of the mean, and two-sample tests between every pair of groups.
 */

export const COMPARISON_MEASURES = ['meanWidth', 'period', 'wallDensity', 'remanence', 'coerciveField', 'tc'] as const
export type ComparisonMeasure = (typeof COMPARISON_MEASURES)[number]

/** Label and unit of each measure ('' = dimensionless). */
export const COMPARISON_MEASURE_INFO: Record<ComparisonMeasure, { label: string; unit: string; source: 'analysis' | 'stack-run' | 'both' }> = {
  meanWidth: { label: 'Mean domain width', unit: 'nm', source: 'analysis' },
  period: { label: 'Domain period', unit: 'nm', source: 'analysis' },
  wallDensity: { label: 'Wall density', unit: 'µm⁻¹', source: 'analysis' },
  remanence: { label: 'Remanence M/Ms', unit: '', source: 'both' },
  coerciveField: { label: 'Coercive field μ0Hc', unit: 'mT', source: 'stack-run' },
  tc: { label: 'Curie temperature', unit: 'K', source: 'stack-run' },
}

export const COMPARISON_GROUP_BY = ['annealTemperatureC', 'annealDurationMin', 'annealAtmosphere', 'annealFieldMT'] as const
export type ComparisonGroupBy = (typeof COMPARISON_GROUP_BY)[number]

export const COMPARISON_GROUP_BY_LABELS: Record<ComparisonGroupBy, string> = {
  annealTemperatureC: 'Anneal temperature',
  annealDurationMin: 'Anneal duration',
  annealAtmosphere: 'Anneal atmosphere',
  annealFieldMT: 'Anneal field',
}

/**
 * |μ0H| below which a frame counts as "at remanence" for the remanence measure, mT. 0.5 mT (5 Oe) is inside the
 * field step of typical Kerr sweeps while well below usual coercive fields [P].
 */
export const REMANENCE_FIELD_TOLERANCE_MT = 0.5

/** Exactly one of sampleIds / projectId. */
export interface ComparisonQuery {
  sampleIds?: number[]
  projectId?: number
  measure: ComparisonMeasure
  groupBy: ComparisonGroupBy
  /** Default false: only approved analyses (and stack runs with status 'done') count. */
  includeDrafts?: boolean
}

/** One value of a group: an analysed frame, or a stack-run summary (one per image). */
export interface ComparisonValueDto {
  value: number
  source: 'analysis' | 'stack-run'
  /** True when the value is not approved (a draft analysis, or a run that finished with errors). */
  draft: boolean
  sample: { id: number; name: string }
  image: { id: number; name: string }
  frameId: number | null
  frameIndex: number | null
  analysisId: number | null
  stackRunId: number | null
}

export interface FiveNumberSummaryDto {
  min: number
  q1: number
  median: number
  q3: number
  max: number
}

export interface ComparisonGroupDto {
  /** The groupBy value; null = not recorded for these samples. */
  key: number | string | null
  label: string
  samples: { id: number; name: string }[]
  n: number
  mean: number | null
  standardDeviation: number | null
  /** Percentile-bootstrap CI of the mean over the values (fixed seed, so a re-computation gives the same interval). */
  ci: { lower: number | null; upper: number | null; level: number; resamples: number; seed: number }
  /** Type-7 quantiles; null for an empty group. */
  fiveNumber: FiveNumberSummaryDto | null
  hasDrafts: boolean
  values: ComparisonValueDto[]
}

export interface PairwiseTestDto {
  groupA: number | string | null
  groupB: number | string | null
  labelA: string
  labelB: string
  /** Welch's t test, two-sided; t of A − B. */
  welch: { t: number | null; df: number | null; p: number | null; meanDifference: number | null }
  /** Mann–Whitney U of A (normal approximation with tie and continuity correction), two-sided. */
  mannWhitney: { u: number | null; z: number | null; p: number | null }
  hedgesG: number | null
  rankBiserial: number | null
}

export interface ComparisonResultDto {
  measure: ComparisonMeasure
  label: string
  unit: string
  groupBy: ComparisonGroupBy
  groupByLabel: string
  includeDrafts: boolean
  labId: number
  groups: ComparisonGroupDto[]
  pairs: PairwiseTestDto[]
  /** Values left out, by reason (no calibration, no sample, field not near zero, measure not available). */
  excluded: { uncalibrated: number; noSample: number; notAtRemanence: number; missing: number }
  /** Plain-language notes on how the values were chosen. */
  notes: string[]
}

export interface SavedComparisonDto {
  id: number
  labId: number
  name: string
  query: ComparisonQuery
  createdBy: { id: number; name: string } | null
  createdAt: string
}
