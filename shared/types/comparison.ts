/**
 * Comparing samples and anneal conditions (METHODS §5.5): one measure, values grouped by an anneal parameter, per-group
 * distribution with a bootstrap CI of the mean, and two-sample tests between every pair of groups.
 */

export const COMPARISON_MEASURES = ['meanWidth', 'period', 'wallDensity', 'remanence', 'coerciveField', 'tc', 'creepSlope'] as const
export type ComparisonMeasure = (typeof COMPARISON_MEASURES)[number]

/** Where a measure's values come from: frame analyses, stack runs, either, or a sample's motion series. */
export type ComparisonMeasureSource = 'analysis' | 'stack-run' | 'both' | 'motion'

/**
 * Creep exponent of the creep-slope measure. Fixed, not fitted: C of ln v = ln v₀ − C·H^(−μ) has the unit mT^μ and
 * means something else at another μ, so slopes compare only at one μ (1/4, shared/analysis/creepLaw.ts).
 */
export const COMPARISON_CREEP_MU = 0.25

/**
 * Label and unit of each measure ('' = dimensionless). The creep slope is C of the creep law with fields as μ0H in
 * mT and μ = 1/4, so its unit is mT^(1/4); it does not depend on the velocity unit (that only shifts ln v₀).
 */
export const COMPARISON_MEASURE_INFO: Record<ComparisonMeasure, { label: string; unit: string; source: ComparisonMeasureSource }> = {
  meanWidth: { label: 'Mean domain width', unit: 'nm', source: 'analysis' },
  period: { label: 'Domain period', unit: 'nm', source: 'analysis' },
  wallDensity: { label: 'Wall density', unit: 'µm⁻¹', source: 'analysis' },
  remanence: { label: 'Remanence M/Ms', unit: '', source: 'both' },
  coerciveField: { label: 'Coercive field μ0Hc', unit: 'mT', source: 'stack-run' },
  tc: { label: 'Curie temperature', unit: 'K', source: 'stack-run' },
  creepSlope: { label: 'Creep slope C', unit: 'mT^(1/4)', source: 'motion' },
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

/** The creep fit behind a creep-slope value: one sample, its motion series pooled. */
export interface ComparisonCreepFitDto {
  /**
   * Standard error of C from the fit, mT^(1/4); null with too few points for one. It measures the scatter of the steps
   * about the creep line only, not a systematic error of the velocities.
   */
  slopeStdErr: number | null
  /** The motion series whose steps were pooled. */
  series: { id: number; name: string }[]
  /** Steps offered to the fit, and those in its creep range. */
  steps: number
  usedSteps: number
  /** Lowest and highest |μ0H| of the steps in the creep range, mT. */
  creepFieldRangeMT: [number, number] | null
}

/** One value of a group: an analysed frame, a stack-run summary (one per image), or a sample's creep fit. */
export interface ComparisonValueDto {
  value: number
  source: 'analysis' | 'stack-run' | 'motion'
  /** True when the value is not approved (a draft analysis, or a run that finished with errors). */
  draft: boolean
  sample: { id: number; name: string }
  /** Null for a value of the whole sample (the creep slope, pooled over its motion series). */
  image: { id: number; name: string } | null
  frameId: number | null
  frameIndex: number | null
  analysisId: number | null
  stackRunId: number | null
  /** Only for the creep slope. */
  creepFit: ComparisonCreepFitDto | null
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
  /**
   * Values left out, by reason (no calibration, no sample, field not near zero, measure not available); for the creep
   * slope, samples without a motion series and samples whose series give no creep fit.
   */
  excluded: { uncalibrated: number; noSample: number; notAtRemanence: number; missing: number; noMotionSeries: number; noCreepFit: number }
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
