import { beforeAll, describe, expect, it } from 'vitest'
import type { BinaryMask } from '@shared/analysis/types'
import { normalizeRecipe } from '@shared/analysis/recipe'
import { analyzeStack } from '@shared/analysis/analyzeStack'
import {
  analyzeMotion,
  motionFromMasks,
  motionRecipeDefaults,
  registerMotionFrames,
  segmentMotionFrames,
  type MotionAnalysis,
} from '@shared/analysis/analyzeMotion'
import type { MotionRow } from '@shared/analysis/wallVelocity'
import { parseFramesCsv, validateFramesCsv } from '@shared/imageio/framesCsv'
import { renderMotionSeries, type MotionSeries } from '../../../scripts/sampleImages'

/** Motion rows of a constructed series, as the frames CSV gives them (fields in mT, durations in s). */
function rowsOf(series: MotionSeries): MotionRow[] {
  return series.pulseFieldsMT.map((field, frame) => ({ frame, pulseField: field, pulseFieldMT: field, pulseDurationS: series.pulseDurationsS[frame] }))
}

/** Digital disk of radius r (1 inside unless `inside` says 0). */
function disk(size: number, r: number, inside: 0 | 1 = 1): BinaryMask {
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = (x - 64.3) ** 2 + (y - 63.7) ** 2 <= r * r ? inside : 1 - inside
  return { width: size, height: size, data }
}

const RECIPE = normalizeRecipe(motionRecipeDefaults(256, 256))
const CREEP = { slope: 40, lnV0: 22.4, mu: 0.25 }

describe('analyzeMotion', () => {
  // Constructed series (scripts/sampleImages renderMotionSeries, seeds fixed): 8 frames of 256² px, 200 nm pixels,
  // a bubble of radius 24 px growing by v(H)·Δt per pulse with v from the creep law C = 40 mT^¼, ln v₀ = 22.4.
  let smooth: MotionSeries
  let smoothResult: MotionAnalysis
  let rough: MotionSeries
  let roughResult: MotionAnalysis

  beforeAll(() => {
    smooth = renderMotionSeries({ seed: 8, creep: CREEP })
    smoothResult = analyzeMotion(smooth.frames, RECIPE, rowsOf(smooth), { pixelSizeNm: 200, fieldUnit: 'mT' })
    rough = renderMotionSeries({ seed: 9, creep: CREEP, roughness: { zeta: 2 / 3, rmsPx: 2 } })
    roughResult = analyzeMotion(rough.frames, RECIPE, rowsOf(rough), { pixelSizeNm: 200, fieldUnit: 'mT' })
  }, 60_000)

  it('When a smooth bubble expands pulse by pulse (blur, gradient, noise), then every step velocity is within 2 % of the constructed one', () => {
    // Constructed: v_k = creep law at the pulse field of row k; ΔA/L̄ of a disk = ΔR exactly (wallDisplacement header).
    expect(smoothResult.steps).toHaveLength(7)
    smoothResult.steps.forEach((step, k) => {
      expect(step.fromFrame).toBe(k)
      expect(step.toFrame).toBe(k + 1)
      expect(step.field).toBe(smooth.pulseFieldsMT[k + 1])
      expect(step.duration).toBe(smooth.pulseDurationsS[k + 1])
      expect(step.velocityUnit).toBe('m/s')
      expect(Math.abs(step.velocity / smooth.velocitiesMPerS[k] - 1)).toBeLessThan(0.02)
      expect(step.velocityStdErr!).toBeGreaterThan(0)
      // [D]: displacement in nm = px × 200 nm.
      expect(step.displacementNm!).toBeCloseTo(step.displacementPx * 200, 6)
    })
    expect(smoothResult.phase).toBe(1)
  })

  it('When the bubble grows evenly, then the local displacement is ΔR within 0.5 px in every direction', () => {
    // Constructed: isotropic growth; wallDisplacement's local mean reads ≈ 0.15–0.3 px low on digital disks (its header).
    for (const [k, step] of smoothResult.steps.entries()) {
      expect(Math.abs(step.local.meanPx! - smooth.displacementsPx[k])).toBeLessThan(0.5)
      for (const sector of step.sectors) expect(Math.abs(sector.meanPx! - smooth.displacementsPx[k])).toBeLessThan(1)
    }
  })

  it('When the velocities follow a creep law, then the fit returns its slope within 2 % and ln v₀ within 0.5', () => {
    // Constructed law (μ = ¼ fixed, Lemerle et al. 1998 [M]); fields of the steps 3…9 mT, all in the creep regime.
    const creep = smoothResult.creep!
    expect(creep.mu).toBe(0.25)
    expect(creep.fieldUnit).toBe('mT')
    expect(creep.velocityUnit).toBe('m/s')
    expect(Math.abs(creep.slope / CREEP.slope - 1)).toBeLessThan(0.02)
    expect(Math.abs(creep.lnV0 - CREEP.lnV0)).toBeLessThan(0.5)
    expect(creep.slopeStdErr!).toBeGreaterThan(0)
    expect(creep.usedPoints).toBe(7)
  })

  it('When the last wall is a circle, then its box-counting dimension is 1 within 0.05', () => {
    // Falconer 1990 [M]: a smooth curve has D = 1; boxCounting's finite-size terms give 1.01–1.06 (its header).
    expect(Math.abs(smoothResult.roughness!.boxDimension! - 1)).toBeLessThan(0.05)
    expect(smoothResult.roughness!.frame).toBe(7)
    expect(smoothResult.roughness!.profile).toBe('radial')
  })

  it('When the wall is self-affine with ζ = 2/3 (2 px rms), then ζ comes back within 0.1 beside the theoretical 2/3', () => {
    // Constructed wall (modes n ≥ 3, ∝ n^(−(½ + ζ))) rendered with blur and segmented: over seeds 8–10 the estimates
    // were 0.67–0.74 (the optics and the clean-up smooth the smallest scales; closedWallRoughness header) [D].
    const roughness = roughResult.roughness!
    expect(Math.abs(roughness.zeta! - 2 / 3)).toBeLessThan(0.1)
    expect(roughness.zetaStdErr!).toBeGreaterThan(0)
    expect(roughness.theory.zeta).toBeCloseTo(2 / 3, 15)
    // The rough wall is longer than the circle (constructed excess 1.06 in the last frame), so ΔA/L̄ reads below ΔR/Δt
    // by about that factor, but the steps still scale together: the creep slope is unchanged within 2 %.
    expect(Math.abs(roughResult.creep!.slope / CREEP.slope - 1)).toBeLessThan(0.02)
  })

  it('When the frames hold nothing static, then no registration shift is applied and a note says so', () => {
    // [D]: growing bubble + independent camera noise ⇒ phase-correlation peaks 0.02–0.04, below the 0.05 floor.
    expect(smoothResult.registration.slice(1).every((r) => !r.applied)).toBe(true)
    expect(smoothResult.notes.join(' ')).toMatch(/were not registered/)
  })

  it('When no shift is applied, then the masks are those of the stack passes (analyzeStack) with the same recipe', () => {
    // Same passes, same threshold: identical masks (first three frames, to keep the test short).
    const frames = smooth.frames.slice(0, 3)
    const stack = analyzeStack(frames, RECIPE, { pixelSizeNm: 200, fieldUnit: 'mT', frames: frames.map(() => ({ field: null, temperatureK: null })) })
    const motion = segmentMotionFrames(frames, RECIPE)
    expect(motion.threshold).toBe(stack.threshold)
    motion.masks.forEach((mask, k) => expect(mask.data).toEqual(stack.masks[k].data))
  })
})

describe('registerMotionFrames', () => {
  it('When the film drifts by (2.4, −1.3) px per frame and carries dust, then the shifts come back within 0.1 px and are applied', () => {
    // Constructed drift; 60 dust spots (σ 1.5 px, up to 30 % dark) move with the film and give the correlation peak.
    const series = renderMotionSeries({ seed: 12, creep: CREEP, driftPx: { x: 2.4, y: -1.3 }, dust: { count: 60, depth: 0.3 }, pulseFieldsMT: [12, 4, 6, 8], pulseDurationsS: [2e-6, 800e-6, 50e-6, 8e-6] })
    const { registration, frames } = registerMotionFrames(series.frames)
    registration.slice(1).forEach((r) => {
      expect(r.applied).toBe(true)
      expect(Math.abs(r.dx - 2.4 * r.frame)).toBeLessThan(0.1)
      expect(Math.abs(r.dy + 1.3 * r.frame)).toBeLessThan(0.1)
    })
    expect(frames[0]).toBe(series.frames[0])
  }, 30_000)
})

describe('motionFromMasks', () => {
  it('When the growing domain is dark (phase 0), then it is found as the minority phase and grows with positive velocity', () => {
    // Constructed: dark disks of radius 20 → 25 → 31 in a bright film, 1 µs pulses, 100 nm pixels ⇒ 0.5 and 0.6 m/s.
    const masks = [disk(128, 20, 0), disk(128, 25, 0), disk(128, 31, 0)]
    const rows: MotionRow[] = [0, 1, 2].map((frame) => ({ frame, pulseField: 5 + frame, pulseDurationS: 1e-6 }))
    const result = motionFromMasks(masks, rows, { pixelSizeNm: 100, fieldUnit: 'mT' })
    expect(result.phase).toBe(0)
    expect(Math.abs(result.steps[0].velocity / 0.5 - 1)).toBeLessThan(0.02)
    expect(Math.abs(result.steps[1].velocity / 0.6 - 1)).toBeLessThan(0.02)
    // Two distinct fields only: no creep fit, said in a note.
    expect(result.creep).toBeNull()
    expect(result.notes.join(' ')).toMatch(/2 distinct field/)
  })

  it('When the masks differ in size, then a RangeError names the frame', () => {
    // Issue #8 bad input: frames of different sizes.
    const rows: MotionRow[] = [0, 1].map((frame) => ({ frame, pulseField: 5, pulseDurationS: 1e-6 }))
    expect(() => motionFromMasks([disk(128, 20), { width: 64, height: 64, data: new Uint8Array(4096) }], rows, { pixelSizeNm: null, fieldUnit: 'mT' })).toThrow(/frame 1 is 64 × 64 px but frame 0 is 128 × 128 px/)
  })

  it('When a pulse duration is zero, then a RangeError names the frame', () => {
    // Issue #8 bad input: zero or negative duration (rows built directly; the CSV reader refuses them earlier).
    const rows: MotionRow[] = [
      { frame: 0, pulseField: 5, pulseDurationS: 1e-6 },
      { frame: 1, pulseField: 5, pulseDurationS: 0 },
    ]
    expect(() => motionFromMasks([disk(128, 20), disk(128, 22)], rows, { pixelSizeNm: null, fieldUnit: 'mT' })).toThrow(/frame 1.*greater than 0/)
  })

  it('When the rows come from a frame,time_s CSV at a constant field, then Δt is the time between frames and no creep is fitted', () => {
    // Constructed: radii 20, 24, 28 px at t = 0, 2, 3 s ⇒ 2 px/s and 4 px/s without a pixel size.
    const csv = validateFramesCsv(parseFramesCsv('frame,time_s\n0,0\n1,2\n2,3\n'), 3)
    const result = motionFromMasks([disk(128, 20), disk(128, 24), disk(128, 28)], csv.rows, { pixelSizeNm: null, fieldUnit: 'mT', constantField: 6 })
    expect(result.velocityUnit).toBe('px/s')
    expect(result.steps.map((s) => s.duration)).toEqual([2, 1])
    expect(Math.abs(result.steps[0].velocity / 2 - 1)).toBeLessThan(0.02)
    expect(Math.abs(result.steps[1].velocity / 4 - 1)).toBeLessThan(0.02)
    expect(result.steps[0].field).toBe(6)
    expect(result.creep).toBeNull()
    expect(result.notes.join(' ')).toMatch(/pixel size is unknown/)
  })

  it.each([
    ['no frame', [] as BinaryMask[]],
    ['one frame', [disk(64, 10)]],
  ])('When given %s, then there are no steps and no creep fit, never NaN', (_name, masks) => {
    // Degenerate input: nothing to compare.
    const rows: MotionRow[] = [{ frame: 0, pulseField: 5, pulseDurationS: 1e-6 }]
    const result = motionFromMasks(masks, rows, { pixelSizeNm: 100, fieldUnit: 'mT' })
    expect(result.steps).toEqual([])
    expect(result.creep).toBeNull()
    expect(result.roughness === null || result.roughness.frame === 0).toBe(true)
  })
})
