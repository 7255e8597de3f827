/**
 * Domain-wall velocity per motion step of a pulsed-field (or timed) Kerr image series.
 *
 * Method: v = d̄ / Δt per pair of consecutive frames, d̄ the robust mean wall displacement ΔA / L̄ (./wallDisplacement)
 * and Δt the pulse duration (or the time between the frames). The standard quasi-static pulse technique of
 * domain-wall creep studies (e.g. S. Lemerle et al. 1998, Phys. Rev. Lett. 80:849 [from memory]; P. J. Metaxas et al.
 * 2007, Phys. Rev. Lett. 99:217208 [from memory]): the wall moves only while the pulse is on, so the displacement
 * between the images before and after a pulse divided by its duration is the velocity at the pulse field. The
 * standard error propagates that of d̄ only (durations are taken as exact): σ_v = σ_d̄ / Δt.
 * Checked against: a synthetic expanding digital disk with radii r_k = r₀ + v·t_k (velocity within 2 %) (tests).
 * Input: binary masks of the frames (registered, same size; the domain is phase 1 unless `phase` says otherwise) and
 * the per-frame rows of the sidecar CSV (./imageio/framesCsv: `frame,pulse_field_…,pulse_duration_…` with durations
 * in s, or `frame,time_s`). Pulse series: the step from frame k − 1 to frame k uses the pulse of row k (the pulse
 * applied before frame k was recorded; row 0's pulse, e.g. a nucleation pulse, is not used), or of row k − 1 with
 * `pulseRow: 'from'`. Time series: Δt = t_k − t_{k−1} and the field is the constant `constantField` of the options.
 * Output: velocity in m/s when the pixel size is known (nm per px), else px/s; displacement in px and nm; the field
 * in the CSV's unit (`fieldUnit`) and as μ0H in mT.
 */
import { convertField, type FieldUnit } from '../units/magneticUnits'
import type { BinaryMask } from './types'
import { wallDisplacement, type WallDisplacementResult } from './wallDisplacement'

/** The per-frame values used here; ValidatedFramesCsv rows (./imageio/framesCsv) have this shape. */
export interface MotionRow {
  /** 0-based frame index. */
  frame: number
  /** Pulse amplitude in `fieldUnit`. */
  pulseField?: number
  /** Pulse amplitude as μ0H in mT. */
  pulseFieldMT?: number
  /** Pulse duration, s. */
  pulseDurationS?: number
  /** Acquisition time, s. */
  timeS?: number
}

export interface MotionStepOptions {
  /** Pixel size in nm (square pixels); null/absent = unknown ⇒ velocities in px/s. */
  pixelSizeNm?: number | null
  /** Unit of `pulseField` and `constantField` (the CSV's field unit); null/absent = unknown. */
  fieldUnit?: FieldUnit | null
  /** Field of a `frame,time_s` series (in `fieldUnit`), constant over the series. */
  constantField?: number | null
  /** Which row's pulse drives the step k − 1 → k: 'to' = row k (default) or 'from' = row k − 1. */
  pulseRow?: 'to' | 'from'
  /** Phase of the growing domain (default 1 = up). */
  phase?: 0 | 1
}

export interface MotionStep {
  fromFrame: number
  toFrame: number
  /** Driving field in `fieldUnit` (null for a time series without `constantField`). */
  field: number | null
  fieldUnit: FieldUnit | null
  /** Driving field as μ0H, mT (null when the field or its unit is unknown). */
  fieldMT: number | null
  /** Pulse duration or time between the frames, s. */
  durationS: number
  /** Mean wall displacement ΔA / L̄, px (+ = the domain grew). */
  displacementPx: number
  displacementStdErrPx: number | null
  /** Mean wall displacement in nm (null when the pixel size is unknown). */
  displacementNm: number | null
  /** Displacement / duration, in `velocityUnit`. */
  velocity: number
  velocityStdErr: number | null
  velocityUnit: 'm/s' | 'px/s'
  /** Full displacement analysis of the step (local and per-sector values). */
  detail: WallDisplacementResult
}

interface Drive {
  durationS: number
  field: number | null
  fieldMT: number | null
}

function rowOf(byFrame: Map<number, MotionRow>, frame: number): MotionRow {
  const row = byFrame.get(frame)
  if (row === undefined) throw new RangeError(`motionSteps: frame ${frame} has no row in the frames table`)
  return row
}

function fieldInMT(field: number | null, unit: FieldUnit | null, given: number | undefined): number | null {
  if (given !== undefined && Number.isFinite(given)) return given
  return field !== null && unit !== null ? convertField(field, unit, 'mT') : null
}

/** Duration and field of the step from → to; throws RangeError naming the frame for a duration ≤ 0 or missing. */
function driveOf(byFrame: Map<number, MotionRow>, from: number, to: number, options: MotionStepOptions): Drive {
  const unit = options.fieldUnit ?? null
  const pulse = rowOf(byFrame, options.pulseRow === 'from' ? from : to)
  if (pulse.pulseDurationS !== undefined) {
    const durationS = pulse.pulseDurationS
    if (!(durationS > 0) || !Number.isFinite(durationS)) {
      throw new RangeError(`motionSteps: frame ${pulse.frame}: the pulse duration is ${durationS} s; it must be greater than 0`)
    }
    const field = pulse.pulseField !== undefined && Number.isFinite(pulse.pulseField) ? pulse.pulseField : null
    return { durationS, field, fieldMT: fieldInMT(field, unit, pulse.pulseFieldMT) }
  }
  const t0 = rowOf(byFrame, from).timeS
  const t1 = rowOf(byFrame, to).timeS
  if (t0 === undefined || t1 === undefined) {
    throw new RangeError(`motionSteps: frame ${to}: the row has neither a pulse duration nor a time (time_s)`)
  }
  const durationS = t1 - t0
  if (!(durationS > 0) || !Number.isFinite(durationS)) {
    throw new RangeError(`motionSteps: frame ${to}: its time ${t1} s is not after frame ${from} (${t0} s); times must increase`)
  }
  const field = options.constantField !== undefined && options.constantField !== null && Number.isFinite(options.constantField) ? options.constantField : null
  return { durationS, field, fieldMT: fieldInMT(field, unit, undefined) }
}

/**
 * Wall velocity for every pair of consecutive frames.
 * @param masks binary masks of frames 0…N−1 (registered, equal sizes).
 * @param rows per-frame rows (any order), one per frame index used.
 * @throws RangeError for a missing row, a pulse duration ≤ 0 or non-increasing times (the message names the frame),
 *   a non-positive pixel size, or masks of different sizes.
 * @returns one step per consecutive pair; an empty list for fewer than two masks.
 * @example motionSteps(masks, csv.rows, { pixelSizeNm: 250, fieldUnit: csv.fieldUnit })[0].velocity // m/s
 */
export function motionSteps(masks: BinaryMask[], rows: MotionRow[], options: MotionStepOptions = {}): MotionStep[] {
  const pixelSizeNm = options.pixelSizeNm ?? null
  if (pixelSizeNm !== null && !(pixelSizeNm > 0 && Number.isFinite(pixelSizeNm))) {
    throw new RangeError(`motionSteps: the pixel size must be a positive number of nm, got ${pixelSizeNm}`)
  }
  const byFrame = new Map<number, MotionRow>()
  for (const row of rows) byFrame.set(row.frame, row)
  const unit = options.fieldUnit ?? null
  const steps: MotionStep[] = []
  // Degenerate: fewer than two frames ⇒ no step (the loop does not run).
  for (let to = 1; to < masks.length; to++) {
    const from = to - 1
    const drive = driveOf(byFrame, from, to, options)
    const detail = wallDisplacement(masks[from], masks[to], { phase: options.phase })
    const displacementPx = detail.meanDisplacementPx
    const displacementStdErrPx = detail.meanDisplacementStdErrPx
    const metresPerPx = pixelSizeNm !== null ? pixelSizeNm * 1e-9 : null
    const scale = metresPerPx ?? 1
    steps.push({
      fromFrame: from,
      toFrame: to,
      field: drive.field,
      fieldUnit: unit,
      fieldMT: drive.fieldMT,
      durationS: drive.durationS,
      displacementPx,
      displacementStdErrPx,
      displacementNm: pixelSizeNm !== null ? displacementPx * pixelSizeNm : null,
      velocity: (displacementPx * scale) / drive.durationS,
      velocityStdErr: displacementStdErrPx !== null ? (displacementStdErrPx * scale) / drive.durationS : null,
      velocityUnit: metresPerPx !== null ? 'm/s' : 'px/s',
      detail,
    })
  }
  return steps
}
