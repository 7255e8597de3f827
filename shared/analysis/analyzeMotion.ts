/**
 * Wall motion of a pulsed-field (or timed) image series, end to end: registered masks → wall velocity per step →
 * creep-law fit → roughness exponent and box-counting dimension of the last frame's wall.
 *
 * Composition only; every method is cited in its own module:
 * - Registration: each frame is registered onto frame 0 by phase correlation (./phaseCorrelation, METHODS §8.3)
 *   before it is segmented, because the local displacements compare the frames pixel by pixel and a stage drift
 *   would read as wall motion (ΔA/L̄ itself does not depend on a shift). The shift is applied only when the
 *   correlation peak is significant, peak ≥ max(0.05, 12/√N) for N padded pixels [P]: a growing domain on
 *   independent camera noise has no reliable peak (0.024–0.038 on the 256² demo series, with shifts of up to 59 px),
 *   while static features that move with the film (dust, scratches, pinned domains) give 0.15–0.17 (60 dust spots)
 *   [D, computed here]. A false shift would move every wall, so an unreliable frame is left in place, with a note.
 *   This module registers the frames itself; the recipe's `registerFrames` (which always applies the shift) is off.
 * - Masks: the stack passes of ./analyzeStack on the registered frames (one Otsu threshold from the pooled histogram
 *   of the series when the recipe says 'stack-wide', the default). Motion defaults (`motionRecipeDefaults`): a
 *   flat-field σ of the image's larger side, since a bubble grows to a large part of the field of view and the
 *   labyrinth default (σ 40 px) would subtract the bubble itself; every recipe field given explicitly wins.
 * - The growing domain: the phase given in the options, else the minority phase of frame 0 (a bubble nucleated in a
 *   saturated film covers less than half of the field of view) [P].
 * - Steps: ./wallVelocity `motionSteps`: v = (ΔA / L̄) / Δt ± SE per pair of consecutive frames, with the local
 *   displacements along the wall normals per angular sector (./wallDisplacement).
 * - Creep: ./creepLaw `fitCreepLaw` over the steps (|μ0H| in mT, v ± SE) when they span at least 3 distinct fields;
 *   μ = 1/4 by default (S. Lemerle et al. 1998, Phys. Rev. Lett. 80:849 [from memory]), the flow regime v = m·H
 *   above depinning (Metaxas et al. 2007 [from memory]). Fields in mT whatever the CSV's unit, so that creep slopes
 *   of different files compare directly; the raw field only when its unit is unknown.
 * - Roughness: the largest domain of the growing phase in the last frame (up 8-connected, down 4-connected,
 *   METHODS §1.4), its wall unrolled as r(θ) around the centroid with the modes n ≤ 2 removed (./radialWallProfile)
 *   → B(r) and ζ by the periodic-spectrum fit with a noise floor (./closedWallRoughness, beside the theoretical 2/3
 *   with its source); the box-counting dimension of the same domain's wall (./boxCounting).
 * Checked against: a constructed expanding bubble series (radii, pulse fields and durations known; velocities from a
 * known creep law; a self-affine wall of known ζ) rendered with blur and noise (tests).
 * Input: decoded frames of one size (GrayImage/FloatImage), the recipe, and one motion row per frame (the validated
 * frames CSV: `frame,pulse_field_…,pulse_duration_…` or `frame,time_s`). Output units: see ./wallVelocity (m/s
 * with a pixel size, else px/s; durations in s; displacements in px and nm), creep fields in mT.
 */
import type { BinaryMask, FloatImage, GrayImage } from './types'
import type { AnalysisRecipe } from './recipe'
import { preprocessFrame, segmentPreprocessed } from './analyzeFrame'
import { applyShift, estimateShift } from './phaseCorrelation'
import { nextPowerOfTwo } from './fft2d'
import { frameHistogramPass, pooledThreshold, rawRange, safeHistogramRange } from './analyzeStack'
import { labelComponents } from './connectedComponents'
import { motionSteps, type MotionRow, type MotionStepOptions } from './wallVelocity'
import type { DisplacementSector, LocalDisplacementStats } from './wallDisplacement'
import { fitCreepLaw, type FlowFit } from './creepLaw'
import { closedWallRoughness } from './closedWallRoughness'
import { boxCountingDimension } from './boxCounting'
import { radialWallProfile } from './radialWallProfile'
import type { FieldUnit } from '../units/magneticUnits'

export interface MotionOptions {
  /** Pixel size in nm; null = unknown ⇒ velocities in px/s. */
  pixelSizeNm: number | null
  /** Unit of the rows' pulse field (the CSV's), or of `constantField`; null = unknown. */
  fieldUnit: FieldUnit | null
  /** Field of a `frame,time_s` series, constant over the series, in `fieldUnit`. */
  constantField?: number | null
  /** Which row's pulse drives the step k − 1 → k (see ./wallVelocity); default 'to' = row k. */
  pulseRow?: 'to' | 'from'
  /** Phase of the growing domain; default: the minority phase of frame 0. */
  phase?: 0 | 1
  /** Creep exponent when not fitted (default 1/4). */
  mu?: number
  /** Fit μ as well (needs at least 4 creep points). */
  fitMu?: boolean
}

/** One motion step as the API and the page show it (./wallVelocity MotionStep without the per-pixel detail). */
export interface MotionStepResult {
  fromFrame: number
  toFrame: number
  /** Driving field in `fieldUnit` (the CSV's unit). */
  field: number | null
  fieldUnit: FieldUnit | null
  /** Driving field as μ0H, mT. */
  fieldMT: number | null
  /** Pulse duration (or time between the frames), s. */
  duration: number
  displacementPx: number
  displacementStdErrPx: number | null
  displacementNm: number | null
  velocity: number
  velocityStdErr: number | null
  velocityUnit: 'm/s' | 'px/s'
  /** Local displacement along the wall normals (earlier wall → later wall), px. */
  local: LocalDisplacementStats
  /** Mean local displacement per angular sector around the earlier domain's centroid (0° = +x, 90° = down). */
  sectors: DisplacementSector[]
}

export interface MotionCreep {
  mu: number
  muStdErr: number | null
  /** C in ln v = ln v₀ − C·H^(−μ), (field unit)^μ. */
  slope: number
  slopeStdErr: number | null
  lnV0: number
  lnV0StdErr: number | null
  v0: number | null
  /** Unit of every field of this fit ('mT' unless the series' field unit is unknown). */
  fieldUnit: FieldUnit | null
  velocityUnit: 'm/s' | 'px/s'
  /** Highest field still in the creep regime; null when the data do not reach depinning. */
  depinningField: number | null
  depinningBracket: [number, number] | null
  /** Linear flow regime v = m·H above depinning, when at least two points lie there. */
  flow: FlowFit | null
  usedPoints: number
  creepFieldRange: [number, number] | null
  residualRms: number | null
  weighted: boolean
  warning?: string
}

export interface MotionRoughness {
  zeta: number | null
  zetaStdErr: number | null
  /** Box-counting dimension of the same wall. */
  boxDimension: number | null
  boxDimensionStdErr: number | null
  /** Frame whose wall was analysed (the last one). */
  frame: number
  /** How the wall became a profile. */
  profile: 'radial'
  centre: { x: number; y: number } | null
  meanRadiusPx: number
  /** Lags (px of arc) and B(r) (px²). */
  r: number[]
  B: number[]
  /** The fitted B(r) at every lag (amplitude·M_ζ(r) + noise floor), px²; null without a fit. */
  model: number[] | null
  fitRange: [number, number]
  fitPoints: number
  amplitude: number | null
  /** White-noise floor of B (digitisation and segmentation), px². */
  noiseFloor: number | null
  theory: { zeta: number; source: string }
  boxSizes: number[]
  boxCounts: number[]
  warning?: string
}

export interface MotionSummary {
  /** Phase of the growing domain (1 = up = brighter). */
  phase: 0 | 1
  frames: number
  pixelSizeNm: number | null
  fieldUnit: FieldUnit | null
  velocityUnit: 'm/s' | 'px/s'
  steps: MotionStepResult[]
  creep: MotionCreep | null
  roughness: MotionRoughness | null
  /** Why a part is missing or should be read with care. */
  notes: string[]
}

/** Registration of one frame onto frame 0. */
export interface FrameRegistration {
  frame: number
  /** Measured shift (frame = frame 0 moved by +dx, +dy), px. */
  dx: number
  dy: number
  /** Normalised phase-correlation peak. */
  peak: number
  /** True when the shift was applied (peak significant, see header). */
  applied: boolean
}

export interface MotionAnalysis extends MotionSummary {
  /** Stack-wide threshold used (preprocessed units), null for k-means or a per-frame threshold. */
  threshold: number | null
  registration: FrameRegistration[]
}

/** Smallest accepted phase-correlation peak (see header). */
function minimumPeak(width: number, height: number): number {
  return Math.max(0.05, 12 / Math.sqrt(nextPowerOfTwo(width) * nextPowerOfTwo(height)))
}

/**
 * Recipe defaults for a motion series of this frame size (see header): flat-field with σ = the larger side (40–500 px).
 * Spread these under the person's own recipe fields.
 */
export function motionRecipeDefaults(width: number, height: number): Partial<AnalysisRecipe> {
  return { background: 'flatten', flattenSigma: Math.min(500, Math.max(40, Math.max(width, height))) }
}

/**
 * Register every frame onto frame 0 by phase correlation, applying only significant shifts (see header).
 * @returns the frames (frame 0 and unshifted frames as given, shifted ones as new float images) and each frame's
 *   registration.
 */
export function registerMotionFrames(frames: (GrayImage | FloatImage)[]): { frames: (GrayImage | FloatImage)[]; registration: FrameRegistration[] } {
  assertOneFrameSize(frames)
  if (frames.length === 0) return { frames: [], registration: [] }
  const threshold = minimumPeak(frames[0].width, frames[0].height)
  const registration: FrameRegistration[] = [{ frame: 0, dx: 0, dy: 0, peak: 1, applied: false }]
  const out: (GrayImage | FloatImage)[] = [frames[0]]
  for (let k = 1; k < frames.length; k++) {
    const shift = estimateShift(frames[0], frames[k])
    const applied = shift.peak >= threshold && (shift.dx !== 0 || shift.dy !== 0)
    registration.push({ frame: k, dx: shift.dx, dy: shift.dy, peak: shift.peak, applied })
    // mov(x) = ref(x − s): shifting by −s brings the frame back onto frame 0.
    out.push(applied ? applyShift(frames[k], -shift.dy, -shift.dx) : frames[k])
  }
  return { frames: out, registration }
}

/** A note on the frames left in place, or null when every frame could be registered. */
function registrationNote(registration: FrameRegistration[], width: number, height: number): string | null {
  const skipped = registration.filter((r) => r.frame > 0 && !r.applied && r.peak < minimumPeak(width, height))
  if (skipped.length === 0) return null
  return (
    `Frames ${skipped.map((r) => r.frame).join(', ')} were not registered: their phase-correlation peak ` +
    `(${Math.max(...skipped.map((r) => r.peak)).toFixed(3)} or less) is below ${minimumPeak(width, height).toFixed(3)}, ` +
    'so no reliable shift was found (nothing static in the field of view); they are compared as recorded.'
  )
}

/** Throws a RangeError naming the first frame whose size differs from frame 0's. */
export function assertOneFrameSize(frames: readonly { width: number; height: number }[]): void {
  const first = frames[0]
  if (first === undefined) return
  frames.forEach((f, k) => {
    if (f.width !== first.width || f.height !== first.height) {
      throw new RangeError(
        `frame ${k} is ${f.width} × ${f.height} px but frame 0 is ${first.width} × ${first.height} px; a motion series needs frames of one size`,
      )
    }
  })
}

/** Minority phase of a mask (1 when both are equal or the mask is empty). */
function minorityPhase(mask: BinaryMask): 0 | 1 {
  let up = 0
  for (let i = 0; i < mask.data.length; i++) up += mask.data[i] === 1 ? 1 : 0
  return 2 * up <= mask.data.length ? 1 : 0
}

/** The largest component of `phase` as a mask with that domain = 1 and everything else = 0; null without one. */
function largestDomain(mask: BinaryMask, phase: 0 | 1): BinaryMask | null {
  const { width, height } = mask
  const components = labelComponents(mask.data, width, height, phase === 1 ? 8 : 4, phase, { ignore: mask.ignore })
  if (components.count === 0) return null
  let best = 1
  for (let label = 2; label <= components.count; label++) if (components.sizes[label] > components.sizes[best]) best = label
  const data = new Uint8Array(width * height)
  for (let i = 0; i < data.length; i++) data[i] = components.labels[i] === best ? 1 : 0
  return mask.ignore ? { width, height, data, ignore: mask.ignore } : { width, height, data }
}

/** One v(H) point for a creep fit: |field| in the fit's unit, velocity and its standard error. */
export interface MotionCreepPoint {
  field: number
  velocity: number
  velocityStdErr: number | null
}

/**
 * The creep-law fit of v(H) points (one series' steps, or a sample's pooled steps).
 * @returns the fit, or null with the reason when the points span fewer than 3 distinct fields or the fit fails.
 */
export function fitMotionCreep(
  points: MotionCreepPoint[],
  units: { fieldUnit: FieldUnit | null; velocityUnit: 'm/s' | 'px/s' },
  options: { mu?: number; fitMu?: boolean } = {},
): { creep: MotionCreep | null; note: string | null } {
  const distinct = new Set(points.map((p) => Math.abs(p.field))).size
  if (distinct < 3) return { creep: null, note: `No creep fit: the steps span ${distinct} distinct field(s); the creep law needs at least 3.` }
  const fit = fitCreepLaw(
    points.map((p) => ({ field: p.field, velocity: p.velocity, ...(p.velocityStdErr !== null ? { velocityStdErr: p.velocityStdErr } : {}) })),
    { mu: options.mu, fitMu: options.fitMu },
  )
  if (fit.mu === null || fit.slope === null || fit.lnV0 === null) return { creep: null, note: `No creep fit: ${fit.warning ?? 'the fit failed'}` }
  const creep: MotionCreep = {
    mu: fit.mu,
    muStdErr: fit.muStdErr,
    slope: fit.slope,
    slopeStdErr: fit.slopeStdErr,
    lnV0: fit.lnV0,
    lnV0StdErr: fit.lnV0StdErr,
    v0: fit.v0,
    fieldUnit: units.fieldUnit,
    velocityUnit: units.velocityUnit,
    depinningField: fit.depinningField,
    depinningBracket: fit.depinningBracket,
    flow: fit.flow,
    usedPoints: fit.usedPoints,
    creepFieldRange: fit.creepFieldRange,
    residualRms: fit.residualRms,
    weighted: fit.weighted,
    ...(fit.warning ? { warning: fit.warning } : {}),
  }
  return { creep, note: null }
}

function creepOf(steps: MotionStepResult[], options: MotionOptions, velocityUnit: 'm/s' | 'px/s', notes: string[]): MotionCreep | null {
  const inMT = steps.length > 0 && steps.every((s) => s.fieldMT !== null)
  const points = steps.flatMap((s) => {
    const field = inMT ? s.fieldMT : s.field
    return field === null ? [] : [{ field, velocity: s.velocity, velocityStdErr: s.velocityStdErr }]
  })
  const { creep, note } = fitMotionCreep(points, { fieldUnit: inMT ? 'mT' : options.fieldUnit, velocityUnit }, options)
  if (note !== null) notes.push(note)
  return creep
}

function roughnessOf(mask: BinaryMask, frame: number, phase: 0 | 1, notes: string[]): MotionRoughness | null {
  const domain = largestDomain(mask, phase)
  if (domain === null) {
    notes.push(`No roughness: frame ${frame} has no domain of the growing phase.`)
    return null
  }
  const profile = radialWallProfile(domain)
  const roughness = closedWallRoughness(profile.u, { removedModes: profile.removedModes })
  const box = boxCountingDimension(domain)
  const truncated = profile.u.reduce((n, v) => n + (Number.isNaN(v) ? 1 : 0), 0)
  const warnings = [roughness.warning, truncated > 0 ? `${truncated} of ${profile.u.length} rays leave the image or meet ignored pixels inside the domain: the wall is cut there.` : undefined].filter(Boolean)
  return {
    zeta: roughness.zeta,
    zetaStdErr: roughness.zetaStdErr,
    boxDimension: box.dimension,
    boxDimensionStdErr: box.dimensionStdErr,
    frame,
    profile: 'radial',
    centre: profile.centre,
    meanRadiusPx: profile.meanRadiusPx,
    r: roughness.r,
    B: roughness.B,
    model: roughness.model,
    fitRange: roughness.fitRange,
    fitPoints: roughness.fitPoints,
    amplitude: roughness.amplitude,
    noiseFloor: roughness.noiseFloor,
    theory: roughness.theory,
    boxSizes: box.sizes,
    boxCounts: box.counts,
    ...(warnings.length ? { warning: warnings.join(' ') } : {}),
  }
}

/**
 * Steps, creep fit and roughness from the registered masks of a motion series (everything after segmentation; the
 * server runs this in a worker thread).
 * @param masks one mask per frame, registered, of one size.
 * @param rows one motion row per frame (any order).
 * @throws RangeError for masks of different sizes, a missing row, a duration ≤ 0 or times that do not increase (the
 *   message names the frame).
 * @returns no steps for fewer than two frames; creep null below 3 distinct fields; roughness null without frames or
 *   without a domain of the growing phase in the last frame (each with a note).
 */
export function motionFromMasks(masks: BinaryMask[], rows: MotionRow[], options: MotionOptions): MotionSummary {
  assertOneFrameSize(masks)
  const notes: string[] = []
  // Degenerate: no frame ⇒ nothing moved and no wall to analyse.
  const phase = options.phase ?? (masks.length > 0 ? minorityPhase(masks[0]) : 1)
  const stepOptions: MotionStepOptions = {
    pixelSizeNm: options.pixelSizeNm,
    fieldUnit: options.fieldUnit,
    constantField: options.constantField,
    pulseRow: options.pulseRow,
    phase,
  }
  const velocityUnit: 'm/s' | 'px/s' = options.pixelSizeNm !== null && options.pixelSizeNm > 0 ? 'm/s' : 'px/s'
  const steps: MotionStepResult[] = motionSteps(masks, rows, stepOptions).map((s) => ({
    fromFrame: s.fromFrame,
    toFrame: s.toFrame,
    field: s.field,
    fieldUnit: s.fieldUnit,
    fieldMT: s.fieldMT,
    duration: s.durationS,
    displacementPx: s.displacementPx,
    displacementStdErrPx: s.displacementStdErrPx,
    displacementNm: s.displacementNm,
    velocity: s.velocity,
    velocityStdErr: s.velocityStdErr,
    velocityUnit: s.velocityUnit,
    local: s.detail.local,
    sectors: s.detail.sectors,
  }))
  if (masks.length < 2) notes.push('No steps: a motion series needs at least two frames.')
  if (velocityUnit === 'px/s') notes.push('The pixel size is unknown: displacements in px and velocities in px/s.')
  const creep = creepOf(steps, options, velocityUnit, notes)
  const last = masks.length - 1
  const roughness = last >= 0 ? roughnessOf(masks[last], last, phase, notes) : null
  return { phase, frames: masks.length, pixelSizeNm: options.pixelSizeNm, fieldUnit: options.fieldUnit, velocityUnit, steps, creep, roughness, notes }
}

/**
 * Masks of a series with the stack passes (pooled-histogram threshold when the recipe says so), in this thread; the
 * frames are registered first (registerMotionFrames) and the recipe's own `registerFrames` is not used.
 */
export function segmentMotionFrames(
  frames: (GrayImage | FloatImage)[],
  recipe: AnalysisRecipe,
): { masks: BinaryMask[]; threshold: number | null; registration: FrameRegistration[] } {
  const registered = registerMotionFrames(frames)
  const series = registered.frames
  if (series.length === 0) return { masks: [], threshold: null, registration: [] }
  const passes: AnalysisRecipe = { ...recipe, registerFrames: false }
  const context = { reference: passes.background === 'reference' ? series[passes.referenceFrame ?? 0] : undefined }
  if (passes.background === 'reference' && !context.reference) {
    throw new RangeError(`recipe.referenceFrame ${passes.referenceFrame} is not a frame of this series (it has ${series.length})`)
  }
  let threshold: number | undefined
  if (passes.method === 'otsu' && passes.stackThreshold === 'stack-wide') {
    let min = Infinity
    let max = -Infinity
    for (const f of series) {
      const r = rawRange(f)
      min = Math.min(min, r.min)
      max = Math.max(max, r.max)
    }
    const range = safeHistogramRange(min, max, passes)
    threshold = pooledThreshold(series.map((f) => frameHistogramPass(f, passes, range, context)), range)
  }
  const masks = series.map((f) => segmentPreprocessed(preprocessFrame(f, passes, context), passes, threshold).mask)
  return { masks, threshold: threshold ?? null, registration: registered.registration }
}

/**
 * The whole motion analysis of a decoded series in this thread (the CLI, tests, and each worker of the server pool).
 * @param recipe the segmentation recipe (merge motionRecipeDefaults under the person's fields first).
 * @throws RangeError for frames of different sizes and for bad rows (see motionFromMasks).
 * @example analyzeMotion(frames, recipe, csv.rows, { pixelSizeNm: 200, fieldUnit: csv.fieldUnit ?? null }).creep?.slope
 */
export function analyzeMotion(frames: (GrayImage | FloatImage)[], recipe: AnalysisRecipe, rows: MotionRow[], options: MotionOptions): MotionAnalysis {
  const { masks, threshold, registration } = segmentMotionFrames(frames, recipe)
  const summary = motionFromMasks(masks, rows, options)
  const note = frames.length > 0 ? registrationNote(registration, frames[0].width, frames[0].height) : null
  return { ...summary, notes: note === null ? summary.notes : [note, ...summary.notes], threshold, registration }
}
