/**
 * The stack analysis (shared/analysis/analyzeStack.ts) on synthetic stacks generated here with known ground truth: a
 * field sweep through a tanh loop with a coercive field built in, a temperature ramp whose contrast vanishes at a
 * built-in Tc, a stack with saturated frames, and degenerate stacks. Every expected value is constructed (the
 * generator's parameter), not measured by another program.
 */
import { describe, expect, it } from 'vitest'
import { analyzeStack, type StackMeta } from '@shared/analysis/analyzeStack'
import { normalizeRecipe } from '@shared/analysis/recipe'
import { createRandom } from '@shared/analysis/seededRandom'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import type { GrayImage } from '@shared/analysis/types'
import { labyrinthDomains, renderFieldSweep, renderKerrFrame, renderTemperatureRamp } from '../../../scripts/sampleImages'

const HC_MT = 6
const STEP_MT = 2
const TC_K = 400

/** Every number of a frame's measurements is finite or null: nothing is NaN or infinite. */
function allDefined(m: FrameMeasurements): boolean {
  return Object.values(m).every((v) => v === null || (typeof v === 'number' && Number.isFinite(v)))
}

function fieldMeta(fieldsMT: number[]): StackMeta {
  return { pixelSizeNm: 80, fieldUnit: 'mT', frames: fieldsMT.map((field) => ({ field, temperatureK: null })) }
}

describe('analyzeStack on a field sweep', () => {
  // Seed 2430 as in samples/manifest.json; 128 px keeps the test quick (41 frames).
  const sweep = renderFieldSweep({ size: 128, seed: 2430, coerciveFieldMT: HC_MT, stepMT: STEP_MT, maxFieldMT: 20 })
  const result = analyzeStack(sweep.frames, normalizeRecipe({}), fieldMeta(sweep.fieldsMT))

  it('When a tanh loop with Hc = 6 mT is swept in 2 mT steps, then Hc is recovered within one field step', () => {
    expect(result.loop).not.toBeNull()
    // Source: constructed — M/Ms = tanh((H ± Hc)/w) crosses 0 at ∓6 mT (scripts/sampleImages.ts renderFieldSweep) [D].
    expect(Math.abs(result.loop!.coerciveField! - HC_MT)).toBeLessThanOrEqual(STEP_MT)
    expect(Math.abs(result.loop!.coerciveFieldDescending! + HC_MT)).toBeLessThanOrEqual(STEP_MT)
    expect(Math.abs(result.loop!.coerciveFieldAscending! - HC_MT)).toBeLessThanOrEqual(STEP_MT)
    expect(result.loop!.fieldUnit).toBe('mT')
  })

  it('When every frame is measured, then M/Ms follows the constructed domain maps and the loop is saturated', () => {
    // Source: constructed — the up fraction of each generated domain map (2·A_up − 1); blur and noise move walls by
    // well under a pixel, so 0.05 covers it [D].
    result.frames.forEach((m, i) => expect(Math.abs(m.magnetization - sweep.mapMagnetization[i])).toBeLessThan(0.05))
    // Source: constructed — ±20 mT is 5.6 loop widths beyond Hc, where tanh is 1 to 1e-4 [D].
    expect(result.loop!.saturated).toBe(true)
    expect(result.loop!.jumps).toHaveLength(sweep.frames.length - 1)
  })
})

describe('analyzeStack on a temperature ramp', () => {
  const ramp = renderTemperatureRamp({ size: 128, seed: 7001, curieTemperatureK: TC_K, beta: 0.35 })
  const meta: StackMeta = { pixelSizeNm: null, fieldUnit: null, frames: ramp.temperaturesK.map((t) => ({ field: null, temperatureK: t })) }
  const result = analyzeStack(ramp.frames, normalizeRecipe({}), meta)

  it('When the Kerr contrast vanishes as (1 − T/400 K)^0.35, then the Curie fit gives Tc within 2 %', () => {
    expect(result.curie).not.toBeNull()
    // Source: constructed — c(T) = c0 (1 − T/Tc)^β with Tc = 400 K in renderTemperatureRamp [D].
    expect(Math.abs(result.curie!.tc! - TC_K) / TC_K).toBeLessThan(0.02)
    expect(result.loop).toBeNull()
  })

  it('When no pixel size is known, then every length in nm and density per µm is null, not 0', () => {
    // Source: constructed — meta.pixelSizeNm is null (METHODS §0: calibration unknown ⇒ report px) [P].
    for (const m of result.frames) {
      expect(m.meanWidthNm).toBeNull()
      expect(m.periodNm).toBeNull()
      expect(m.wallDensityPerUm).toBeNull()
    }
  })
})

describe('analyzeStack with saturated frames', () => {
  // Frame 0 a labyrinth (both phases), frames 1 and 2 saturated up and down: the same sample, camera and noise.
  const size = 128
  const maze = labyrinthDomains(size, 16, 31)
  const frames: GrayImage[] = [
    renderKerrFrame(maze, size, 0.1, 32),
    renderKerrFrame(new Float32Array(size * size).fill(1), size, 0.1, 33),
    renderKerrFrame(new Float32Array(size * size).fill(-1), size, 0.1, 34),
  ]
  const meta = fieldMeta([0, 20, -20])
  const stackWide = analyzeStack(frames, normalizeRecipe({ stackThreshold: 'stack-wide' }), meta)
  const perFrame = analyzeStack(frames, normalizeRecipe({ stackThreshold: 'per-frame' }), meta)

  it('When the threshold comes from the pooled histogram, then the saturated frames are M/Ms = +1 and −1', () => {
    // Source: constructed — frames 1 and 2 are uniform ±1 domain maps (only camera noise) [D].
    expect(stackWide.frames[1].magnetization).toBe(1)
    expect(stackWide.frames[2].magnetization).toBe(-1)
    expect(stackWide.frames[1].domainCount).toBe(1)
    expect(stackWide.threshold).not.toBeNull()
  })

  it('When each frame gets its own Otsu threshold, then the saturated frames are split into invented domains', () => {
    // Source: constructed — the same uniform frames; Otsu must split a unimodal noise histogram somewhere
    // (METHODS §1.1 pitfalls), so both phases appear [D].
    expect(Math.abs(perFrame.frames[1].magnetization)).toBeLessThan(0.9)
    expect(Math.abs(perFrame.frames[2].magnetization)).toBeLessThan(0.9)
    expect(perFrame.frames[1].domainCount).toBeGreaterThan(1)
    expect(perFrame.threshold).toBeNull()
  })

  it('When the labyrinth frame is measured either way, then its M/Ms stays near the constructed value', () => {
    let up = 0
    for (const v of maze) if (v > 0) up++
    const constructed = (2 * up) / maze.length - 1
    // Source: constructed — up fraction of the generated labyrinth map [D].
    expect(Math.abs(stackWide.frames[0].magnetization - constructed)).toBeLessThan(0.05)
    expect(Math.abs(perFrame.frames[0].magnetization - constructed)).toBeLessThan(0.05)
  })
})

describe('analyzeStack on degenerate stacks', () => {
  it('When every frame is constant, then each frame has defined measurements (one domain) and nothing crashes', () => {
    const constant: GrayImage = { width: 32, height: 24, data: new Uint16Array(32 * 24).fill(1000) }
    const result = analyzeStack([constant, constant, constant], normalizeRecipe({}), fieldMeta([1, 0, -1]))
    for (const m of result.frames) {
      // Source: constructed — a constant image has a single phase [D].
      expect(allDefined(m)).toBe(true)
      expect(Math.abs(m.magnetization)).toBe(1)
      expect(m.domainCount).toBe(1)
      expect(m.wallDensityPerPx).toBe(0)
    }
  })

  it('When the frames are 1 × 1 pixel, then the stack is analysed without NaN', () => {
    const random = createRandom(11) // fixed seed: the test must not depend on luck
    const frames: GrayImage[] = [0, 1, 2, 3].map(() => ({ width: 1, height: 1, data: new Uint16Array([Math.floor(random() * 4000)]) }))
    const meta: StackMeta = { pixelSizeNm: 10, fieldUnit: null, frames: [300, 310, 320, 330].map((t) => ({ field: null, temperatureK: t })) }
    const result = analyzeStack(frames, normalizeRecipe({}), meta)
    expect(result.frames).toHaveLength(4)
    // Source: constructed — one pixel is one domain of one phase [D].
    for (const m of result.frames) {
      expect(allDefined(m)).toBe(true)
      expect(m.domainCount).toBe(1)
    }
  })

  it('When the stack is empty, then the result is empty', () => {
    expect(analyzeStack([], normalizeRecipe({}), { pixelSizeNm: null, fieldUnit: null, frames: [] })).toEqual({ threshold: null, frames: [], masks: [], loop: null, curie: null })
  })
})
