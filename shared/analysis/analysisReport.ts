/**
 * The analysis report: one JSON document per analysed file, printed by the CLI (`npm run analyze -- --json`) and
 * served by the API. It carries everything needed to reproduce and read the numbers: file, engine version, recipe,
 * pixel size, every frame's measurements with its field or temperature, the loop with its jumps, and the Curie fit.
 *
 * Determinism: keys always appear in the same order (documented keys first, then the remaining fields in the order
 * the engine produces them), every optional field is present (null when absent), and numbers that are not whole are
 * rounded to 6 significant digits, so the same file, recipe and ENGINE_VERSION give a byte-identical document.
 * Calibration: lengths in nm and densities per µm are null, never 0, when the pixel size is unknown (METHODS §0/§9);
 * likewise a coercive field has no oersted or A/m value when the field unit is unknown.
 * Wall motion (issue #8): a motion series (pulse or time frames CSV) adds `motion` with exactly the keys of the issue:
 * steps[].{fromFrame, toFrame, field, duration (s), displacementNm, velocity, velocityStdErr, velocityUnit},
 * creep {mu, slope, slopeStdErr, v0} (fields as μ0H in mT) or null, roughness {zeta, zetaStdErr, boxDimension} or null.
 * Other files have no `motion` key.
 */
import type { FrameMeasurements } from './analyzeFrame'
import type { CurieSummary, LoopSummary, StackMeta, StackResults } from './analyzeStack'
import type { MotionAnalysis } from './analyzeMotion'
import { ENGINE_VERSION } from './engineVersion'
import { DEFAULT_RECIPE, type AnalysisRecipe } from './recipe'
import { FIELD_UNITS, convertField, type FieldUnit } from '../units/magneticUnits'

type JsonValue = number | string | boolean | null | JsonValue[] | { [key: string]: JsonValue }
type JsonObject = { [key: string]: JsonValue }

/** One frame of the report: its condition and every measurement. */
export interface ReportFrame extends JsonObject {
  index: number
  /** Applied field in the loop's `fieldUnit`, or null. */
  field: number | null
  /** Temperature in K, or null. */
  temperature: number | null
}

export interface AnalysisReport extends JsonObject {
  file: string
  engineVersion: string
  recipe: JsonObject
  pixelSizeNm: number | null
  frames: ReportFrame[]
  loop: JsonObject | null
  curie: JsonObject | null
}

/** Frame keys in the order the report documents them; the other FrameMeasurements fields follow. */
const FRAME_KEYS = [
  'width',
  'height',
  'threshold',
  'upFraction',
  'magnetization',
  'domainCount',
  'meanWidthPx',
  'meanWidthNm',
  'periodPx',
  'periodNm',
  'wallDensityPerPx',
  'wallDensityPerUm',
  'orientationDeg',
  'contrast',
] as const satisfies readonly (keyof FrameMeasurements)[]

const LOOP_KEYS = ['coerciveFieldDescending', 'coerciveFieldAscending', 'coerciveField'] as const
const LOOP_AFTER_UNIT_KEYS = ['remanence', 'squareness', 'exchangeBias', 'saturated'] as const
const CURIE_KEYS = ['tc', 'tcStdErr', 'beta', 'betaStdErr'] as const

/** A number as the report prints it: null when not finite, whole numbers as they are, others to 6 significant digits. */
export function reportNumber(value: number | null | undefined): number | null {
  if (value === null || value === undefined || !Number.isFinite(value)) return null
  if (Number.isInteger(value)) return value === 0 ? 0 : value
  return Number(value.toPrecision(6))
}

/** Any engine value as JSON: numbers through reportNumber, typed arrays as lists, undefined as null, keys in order. */
function toJson(value: unknown): JsonValue {
  if (value === null || value === undefined) return null
  if (typeof value === 'number') return reportNumber(value)
  if (typeof value === 'string' || typeof value === 'boolean') return value
  if (Array.isArray(value)) return value.map(toJson)
  if (ArrayBuffer.isView(value)) return Array.from(value as unknown as ArrayLike<number>, (v) => reportNumber(v))
  if (typeof value === 'object') {
    const out: JsonObject = {}
    for (const [key, v] of Object.entries(value as Record<string, unknown>)) out[key] = toJson(v)
    return out
  }
  return null
}

/** `source` as JSON with `first` keys leading (null when missing) and every other key after them in its own order. */
function ordered(source: object, first: readonly string[], extra: JsonObject = {}): JsonObject {
  const record = source as Record<string, unknown>
  const out: JsonObject = {}
  for (const key of first) out[key] = key in extra ? extra[key] : toJson(record[key])
  for (const [key, value] of Object.entries(extra)) if (!(key in out)) out[key] = value
  for (const key of Object.keys(record)) if (!(key in out)) out[key] = toJson(record[key])
  return out
}

function recipeJson(recipe: AnalysisRecipe): JsonObject {
  return ordered(recipe, Object.keys(DEFAULT_RECIPE))
}

function frameJson(measurements: FrameMeasurements, index: number, meta: StackMeta): ReportFrame {
  const condition = meta.frames[index]
  const extra: JsonObject = {
    index,
    field: reportNumber(condition?.field ?? null),
    temperature: reportNumber(condition?.temperatureK ?? null),
  }
  return ordered(measurements, ['index', 'width', 'height', 'field', 'temperature', ...FRAME_KEYS.slice(2)], extra) as ReportFrame
}

function isFieldUnit(unit: string | null): unit is FieldUnit {
  return unit !== null && (FIELD_UNITS as readonly string[]).includes(unit)
}

/** Hc in every field unit the product offers, or null without a known unit or Hc. */
function coerciveFieldByUnit(loop: LoopSummary): JsonObject | null {
  const unit = loop.fieldUnit
  if (loop.coerciveField === null || !isFieldUnit(unit)) return null
  const out: JsonObject = {}
  for (const target of FIELD_UNITS) out[target] = reportNumber(convertField(loop.coerciveField, unit, target))
  return out
}

function loopJson(loop: LoopSummary): JsonObject {
  const jumps = loop.jumps.map((j) => ordered(j, ['fromFrame', 'toFrame', 'deltaM', 'clusterSizesPx', 'censoredClusters']))
  const fit = loop.jumpSizeFit === null ? null : ordered(loop.jumpSizeFit, ['alpha', 'alphaStdErr', 'xMin', 'nTail', 'n', 'ks', 'pValue', 'bootstrap', 'method', 'warning'])
  const extra: JsonObject = {
    fieldUnit: loop.fieldUnit,
    coerciveFieldByUnit: coerciveFieldByUnit(loop),
    jumps,
    jumpSizeFit: fit,
  }
  return ordered(loop, [...LOOP_KEYS, 'fieldUnit', 'coerciveFieldByUnit', ...LOOP_AFTER_UNIT_KEYS, 'jumps', 'jumpSizeFit'], extra)
}

function curieJson(curie: CurieSummary): JsonObject {
  return ordered(curie, [...CURIE_KEYS, 'amplitude', 'amplitudeStdErr', 'covarianceTcBeta', 'residualRms', 'usedPoints', 'converged', 'zeroLevel', 'tcLowerBound', 'reducedTemperatureRange', 'warning', 'maskFrame', 'contrasts'])
}

/** `keys` of `source` as JSON, in that order, and nothing else. */
function picked(source: object, keys: readonly string[]): JsonObject {
  const out: JsonObject = {}
  for (const key of keys) out[key] = toJson((source as Record<string, unknown>)[key])
  return out
}

const MOTION_STEP_KEYS = ['fromFrame', 'toFrame', 'field', 'duration', 'displacementNm', 'velocity', 'velocityStdErr', 'velocityUnit'] as const
const MOTION_CREEP_KEYS = ['mu', 'slope', 'slopeStdErr', 'v0'] as const
const MOTION_ROUGHNESS_KEYS = ['zeta', 'zetaStdErr', 'boxDimension'] as const

function motionJson(motion: MotionAnalysis): JsonObject {
  return {
    steps: motion.steps.map((step) => picked(step, MOTION_STEP_KEYS)),
    creep: motion.creep === null ? null : picked(motion.creep, MOTION_CREEP_KEYS),
    roughness: motion.roughness === null ? null : picked(motion.roughness, MOTION_ROUGHNESS_KEYS),
  }
}

/**
 * The report of an analysed file (see the file header for the rules).
 * @param context.file the name shown for the file (as given by the user; no directory is added).
 * @example JSON.stringify(buildAnalysisReport(analyzeStack(frames, recipe, meta), { file: 'KB24.tif', recipe, meta }))
 */
export function buildAnalysisReport(analysis: StackResults, context: { file: string; recipe: AnalysisRecipe; meta: StackMeta; motion?: MotionAnalysis }): AnalysisReport {
  const { meta } = context
  const nm = meta.pixelSizeNm !== null && meta.pixelSizeNm > 0 ? meta.pixelSizeNm : null
  return {
    file: context.file,
    engineVersion: ENGINE_VERSION,
    recipe: recipeJson(context.recipe),
    pixelSizeNm: reportNumber(nm),
    frames: analysis.frames.map((m, i) => frameJson(m, i, meta)),
    loop: analysis.loop === null ? null : loopJson(analysis.loop),
    curie: analysis.curie === null ? null : curieJson(analysis.curie),
    ...(context.motion ? { motion: motionJson(context.motion) } : {}),
  }
}

/** The report as text: two-space indented JSON with a final newline. */
export function formatAnalysisReport(report: AnalysisReport): string {
  return `${JSON.stringify(report, null, 2)}\n`
}
