import { describe, expect, it } from 'vitest'
import type { BinaryMask } from '@shared/analysis/types'
import { motionSteps, type MotionRow } from '@shared/analysis/wallVelocity'
import { parseFramesCsv, validateFramesCsv } from '@shared/imageio/framesCsv'

/** Digital disk of radius r (pixels with (x − cx)² + (y − cy)² ≤ r²). */
function disk(size: number, r: number, cx = 64.3, cy = 63.7): BinaryMask {
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = (x - cx) ** 2 + (y - cy) ** 2 <= r * r ? 1 : 0
  return { width: size, height: size, data }
}

/** Constructed series: r_k = r₀ + v·t_k with t_k the cumulative pulse time (row 0's pulse only nucleates). */
const R0 = 20
const V_PX_PER_NS = 0.2
const DURATIONS_NS = [100, 25, 50, 40, 60]

function expandingSeries(): { masks: BinaryMask[]; rows: MotionRow[] } {
  const masks: BinaryMask[] = []
  const rows: MotionRow[] = []
  let t = 0
  DURATIONS_NS.forEach((ns, frame) => {
    if (frame > 0) t += ns
    masks.push(disk(128, R0 + V_PX_PER_NS * t))
    rows.push({ frame, pulseField: 10 + frame, pulseDurationS: ns * 1e-9 })
  })
  return { masks, rows }
}

describe('motionSteps', () => {
  it('When a disk expands at 0.2 px/ns with 100 nm pixels, then every step gives 20 m/s within 2 %', () => {
    // Constructed: v = 0.2 px/ns × 100 nm/px = 20 m/s; digital disks, mean displacement ΔA/L̄ (wallDisplacement).
    const { masks, rows } = expandingSeries()
    const steps = motionSteps(masks, rows, { pixelSizeNm: 100, fieldUnit: 'mT' })
    expect(steps).toHaveLength(4)
    steps.forEach((step, k) => {
      expect(step.fromFrame).toBe(k)
      expect(step.toFrame).toBe(k + 1)
      expect(step.velocityUnit).toBe('m/s')
      expect(Math.abs(step.velocity / 20 - 1)).toBeLessThan(0.02)
      expect(step.durationS).toBeCloseTo(DURATIONS_NS[k + 1] * 1e-9, 18)
      // Constructed: the pulse of row k + 1 drives the step k → k + 1; field carried in its unit, μ0H in mT.
      expect(step.field).toBe(10 + k + 1)
      expect(step.fieldUnit).toBe('mT')
      expect(step.fieldMT).toBe(10 + k + 1)
      expect(step.displacementNm!).toBeCloseTo(step.displacementPx * 100, 9)
      // [D]: σ_v = σ_d/Δt, the duration being exact.
      expect(step.velocityStdErr!).toBeCloseTo((step.displacementStdErrPx! * 100e-9) / step.durationS, 12)
      expect(step.velocityStdErr!).toBeGreaterThan(0)
    })
  })

  it('When the pixel size is unknown, then velocities are in px/s and no nm displacement is invented', () => {
    // METHODS §0 [P]: calibration unknown ⇒ report in px. Constructed: 0.2 px/ns = 2e8 px/s.
    const { masks, rows } = expandingSeries()
    const steps = motionSteps(masks, rows)
    expect(steps[0].velocityUnit).toBe('px/s')
    expect(steps[0].displacementNm).toBeNull()
    expect(Math.abs(steps[0].velocity / 2e8 - 1)).toBeLessThan(0.02)
    expect(steps[0].fieldMT).toBeNull()
  })

  it('When the rows come from a frame,pulse_field_Oe,pulse_duration_us CSV, then field and duration are taken from it', () => {
    // Constructed: the project's CSV reader (framesCsv) converts µs to s and keeps Oe, with μ0H = 0.1 mT per Oe
    // (METHODS check #59).
    const csv = validateFramesCsv(parseFramesCsv('frame,pulse_field_Oe,pulse_duration_us\n0,50,1\n1,50,0.025\n2,60,0.05\n'), 3)
    const masks = [disk(128, 20), disk(128, 25), disk(128, 35)]
    const steps = motionSteps(masks, csv.rows, { pixelSizeNm: 100, fieldUnit: csv.fieldUnit })
    expect(steps.map((s) => s.field)).toEqual([50, 60])
    expect(steps[1].fieldUnit).toBe('Oe')
    expect(steps[1].fieldMT).toBeCloseTo(6, 12)
    expect(steps[0].durationS).toBeCloseTo(25e-9, 18)
    expect(Math.abs(steps[0].velocity / 20 - 1)).toBeLessThan(0.02)
  })

  it("When pulseRow is 'from', then the step k → k + 1 uses row k's pulse", () => {
    // Constructed: same disks, durations shifted by one row.
    const { masks } = expandingSeries()
    const rows: MotionRow[] = DURATIONS_NS.map((_, frame) => ({
      frame,
      pulseField: 5,
      pulseDurationS: (frame + 1 < DURATIONS_NS.length ? DURATIONS_NS[frame + 1] : 1) * 1e-9,
    }))
    const steps = motionSteps(masks, rows, { pulseRow: 'from', pixelSizeNm: 100 })
    steps.forEach((step) => expect(Math.abs(step.velocity / 20 - 1)).toBeLessThan(0.02))
  })

  it('When the series is timed (frame,time_s), then Δt is the time difference and the field is the constant given', () => {
    // Constructed: radius 20 + 2·t (t in s) ⇒ 2 px/s; with 250 nm pixels 5e-7 m/s.
    const times = [0, 2.5, 5, 9]
    const masks = times.map((t) => disk(128, 20 + 2 * t))
    const rows: MotionRow[] = times.map((timeS, frame) => ({ frame, timeS }))
    const steps = motionSteps(masks, rows, { pixelSizeNm: 250, constantField: 3.2, fieldUnit: 'mT' })
    expect(steps.map((s) => s.durationS)).toEqual([2.5, 2.5, 4])
    steps.forEach((step) => {
      expect(step.field).toBe(3.2)
      expect(Math.abs(step.velocity / 5e-7 - 1)).toBeLessThan(0.02)
    })
  })

  it('When a pulse duration is zero or negative, then a RangeError names the frame', () => {
    // Constructed: frame 2's pulse has duration 0, then −1 ns.
    const { masks, rows } = expandingSeries()
    rows[2] = { ...rows[2], pulseDurationS: 0 }
    expect(() => motionSteps(masks, rows)).toThrow(RangeError)
    expect(() => motionSteps(masks, rows)).toThrow(/frame 2/)
    rows[2] = { ...rows[2], pulseDurationS: -1e-9 }
    expect(() => motionSteps(masks, rows)).toThrow(/frame 2.*greater than 0/)
  })

  it('When the times do not increase, then a RangeError names the frame', () => {
    // Constructed: frame 2 at the same time as frame 1.
    const masks = [disk(64, 10, 32, 32), disk(64, 12, 32, 32), disk(64, 14, 32, 32)]
    const rows: MotionRow[] = [
      { frame: 0, timeS: 0 },
      { frame: 1, timeS: 1 },
      { frame: 2, timeS: 1 },
    ]
    expect(() => motionSteps(masks, rows)).toThrow(/frame 2/)
  })

  it('When a row is missing or the pixel size is not positive, then a RangeError says so', () => {
    // Constructed.
    const { masks, rows } = expandingSeries()
    expect(() => motionSteps(masks, rows.slice(0, 3))).toThrow(/frame 3 has no row/)
    expect(() => motionSteps(masks, rows, { pixelSizeNm: 0 })).toThrow(/pixel size/)
  })

  it('When the masks differ in size, then the RangeError of wallDisplacement surfaces', () => {
    // Constructed: 128² then 64².
    const rows: MotionRow[] = [
      { frame: 0, pulseDurationS: 1e-9 },
      { frame: 1, pulseDurationS: 1e-9 },
    ]
    expect(() => motionSteps([disk(128, 20), disk(64, 10, 32, 32)], rows)).toThrow(/differ in size/)
  })

  it('When there are fewer than two frames, then there is no step', () => {
    // METHODS §0 [P]: degenerate input returns a defined (empty) result.
    expect(motionSteps([], [])).toEqual([])
    expect(motionSteps([disk(32, 5, 16, 16)], [{ frame: 0, pulseDurationS: 1e-9 }])).toEqual([])
  })
})
