import { describe, expect, it } from 'vitest'
import { hysteresisLoop, type LoopPoint } from '@shared/analysis/hysteresisLoop'
import { createRandom } from '@shared/analysis/seededRandom'
import { convertField } from '@shared/units/magneticUnits'

// METHODS.md §5.2 data [D]: descending branch in Oe; ascending branch M_asc(H) = −M_desc(−H).
const descendingH = [100, 60, 30, 10, 0, -10, -20, -30, -60, -100]
const descendingM = [1, 1, 0.98, 0.9, 0.8, 0.6, 0.2, -0.6, -1, -1]

/** Full loop in acquisition order: the descending branch, then the ascending one from the turning frame on. */
function methodsLoop(shift = 0): LoopPoint[] {
  const down = descendingH.map((h, i) => ({ field: h + shift, magnetization: descendingM[i] }))
  // H_asc = −H_desc runs from −100 up to +100; the first ascending frame (−100 Oe) is the turning frame itself.
  const up = descendingH.map((h, i) => ({ field: -h + shift, magnetization: -descendingM[i] })).slice(1)
  return [...down, ...up]
}

/** tanh loop sampled at `steps` fields per branch from +hMax to −hMax and back. */
function tanhLoop(hc: number, width: number, hMax: number, steps: number, bias = 0): LoopPoint[] {
  const fields = Array.from({ length: steps }, (_, i) => hMax - (2 * hMax * i) / (steps - 1))
  const down = fields.map((h) => ({ field: h, magnetization: Math.tanh((h - bias + hc) / width) }))
  const up = fields
    .slice()
    .reverse()
    .slice(1)
    .map((h) => ({ field: h, magnetization: Math.tanh((h - bias - hc) / width) }))
  return [...down, ...up]
}

describe('hysteresisLoop, METHODS §5.2 data', () => {
  const result = hysteresisLoop(methodsLoop())

  it('When the loop is split, then one descending and one ascending branch share the turning frame', () => {
    expect(result.branches).toEqual([
      { direction: 'descending', startIndex: 0, endIndex: 9 },
      { direction: 'ascending', startIndex: 9, endIndex: 18 },
    ])
  })

  it('When Hc is computed, then Hc− = −22.5, Hc+ = +22.5, Hc = 22.5 Oe = 1790.49 A/m = 2.25 mT', () => {
    // METHODS.md check #33 [D]: interpolation between (−20 Oe, 0.2) and (−30 Oe, −0.6) gives −22.5 Oe.
    expect(result.coerciveFieldDescending).toBeCloseTo(-22.5, 12)
    expect(result.coerciveFieldAscending).toBeCloseTo(22.5, 12)
    expect(result.coerciveField).toBeCloseTo(22.5, 12)
    expect(Math.abs(convertField(result.coerciveField!, 'Oe', 'A/m') / 1790.4931 - 1)).toBeLessThan(1e-6)
    expect(convertField(result.coerciveField!, 'Oe', 'mT')).toBeCloseTo(2.25, 12)
  })

  it('When Mr, S and H_E are computed, then 0.8, 0.8 and 0', () => {
    // METHODS.md check #34 [D]: Mr± = ±0.8 at the H = 0 frames; Ms = 1 (saturated ends); H_E = 0.
    expect(result.remanenceDescending).toBe(0.8)
    expect(result.remanenceAscending).toBe(-0.8)
    expect(result.remanence).toBe(0.8)
    expect(result.squareness).toBe(0.8)
    expect(result.exchangeBias).toBe(0)
    expect(result.saturated).toBe(true)
    expect(result.saturationMagnetization).toBe(1)
  })

  it('When the same loop is shifted by +5 Oe, then Hc = 22.5 Oe and H_E = +5 Oe', () => {
    // METHODS.md check #35 [D].
    const shifted = hysteresisLoop(methodsLoop(5))
    expect(shifted.coerciveField).toBeCloseTo(22.5, 9)
    expect(shifted.exchangeBias).toBeCloseTo(5, 9)
    // Mr± now come from interpolation between the ±5 Oe frames [D]: (0.8 + 0.6)/2 and (−0.9 − 0.8)/2.
    expect(shifted.remanenceDescending).toBeCloseTo(0.7, 12)
    expect(shifted.remanenceAscending).toBeCloseTo(-0.85, 12)
  })

  it('When each branch has a single crossing, then both are reported and chosen', () => {
    expect(result.zeroCrossings).toHaveLength(2)
    expect(result.zeroCrossings.every((c) => c.chosen)).toBe(true)
    expect(result.zeroCrossings[0]).toMatchObject({ direction: 'descending', frameIndex: 6 })
    expect(result.zeroCrossings[0].stepDeltaM).toBeCloseTo(0.8, 12)
  })
})

describe('hysteresisLoop, synthetic loops', () => {
  it('When a tanh loop with Hc = 13.7 is sampled at 41 fields, then Hc is recovered within one field step', () => {
    // Synthetic ground truth [D]: M = tanh((H ± Hc)/w), w = 8, fields ±100 in steps of 5.
    const result = hysteresisLoop(tanhLoop(13.7, 8, 100, 41))
    expect(Math.abs(result.coerciveField! - 13.7)).toBeLessThan(5)
    // Between frames the interpolation error is far smaller than the step for a smooth loop.
    expect(Math.abs(result.coerciveField! - 13.7)).toBeLessThan(0.5)
    expect(Math.abs(result.exchangeBias!)).toBeLessThan(1e-9)
    expect(result.saturated).toBe(true)
    // Mr = tanh(Hc/w) for this model [D], within the interpolation error of a 5-unit step.
    expect(result.remanence!).toBeCloseTo(Math.tanh(13.7 / 8), 1)
  })

  it('When a biased tanh loop is analysed, then H_E is the bias and Hc is unchanged', () => {
    const result = hysteresisLoop(tanhLoop(20, 6, 120, 41, -7.5))
    expect(result.exchangeBias!).toBeCloseTo(-7.5, 0)
    expect(Math.abs(result.coerciveField! - 20)).toBeLessThan(6)
  })

  it('When the sweep stops before saturation, then saturated = false and no squareness is given', () => {
    // Minor loop: fields only ±20 with Hc = 15, w = 10, so the ends are still steep.
    const result = hysteresisLoop(tanhLoop(15, 10, 20, 21))
    expect(result.saturated).toBe(false)
    expect(result.squareness).toBeNull()
    expect(result.saturationMagnetization).toBeNull()
    expect(result.coerciveField).not.toBeNull()
  })

  it('When noise makes M cross zero several times, then all crossings are reported and the one at the big step is used', () => {
    // Descending branch with a noisy plateau near M = 0 at positive field and one large jump at −40 [D].
    const fields = [100, 80, 60, 50, 40, 30, 20, 10, 0, -10, -20, -30, -40, -50, -60, -80, -100]
    const m = [1, 1, 0.9, 0.03, -0.02, 0.02, -0.01, 0.6, 0.5, 0.45, 0.4, 0.35, -0.8, -0.95, -1, -1, -1]
    const points = fields.map((field, i) => ({ field, magnetization: m[i] }))
    const result = hysteresisLoop(points)
    const crossings = result.zeroCrossings.filter((c) => c.direction === 'descending')
    expect(crossings.length).toBe(5)
    const chosen = crossings.filter((c) => c.chosen)
    expect(chosen).toHaveLength(1)
    // Largest |ΔM| step: 0.35 → −0.8 between −30 and −40; crossing by interpolation at −30 − 10·0.35/1.15.
    expect(chosen[0].field).toBeCloseTo(-30 - (10 * 0.35) / 1.15, 12)
    expect(result.coerciveFieldDescending).toBe(chosen[0].field)
    // Only one branch: Hc, H_E and Mr need both directions.
    expect(result.coerciveField).toBeNull()
    expect(result.remanence).toBeNull()
    expect(result.remanenceDescending).toBe(0.5)
  })

  it('When frames at M = 0 exactly lie between opposite signs, then their field is the crossing', () => {
    // METHODS §5.2 [P]: "if M equals 0 at a frame, take that H".
    const points = [
      { field: 10, magnetization: 1 },
      { field: 5, magnetization: 0.5 },
      { field: 0, magnetization: 0 },
      { field: -5, magnetization: -0.5 },
      { field: -10, magnetization: -1 },
    ]
    expect(hysteresisLoop(points).coerciveFieldDescending).toBe(0)
  })

  it('When a virgin curve precedes the loop, then the widest ascending branch is used', () => {
    // Virgin curve 0 → +100 (demagnetised start), then the METHODS loop.
    const virgin = [0, 25, 50, 75].map((h) => ({ field: h, magnetization: Math.tanh(h / 20) * 0.99 - 0.01 }))
    const result = hysteresisLoop([...virgin, ...methodsLoop()])
    expect(result.branches.map((b) => b.direction)).toEqual(['ascending', 'descending', 'ascending'])
    expect(result.usedBranches).toEqual({ descending: 1, ascending: 2 })
    expect(result.coerciveField).toBeCloseTo(22.5, 12)
    const virginCrossing = result.zeroCrossings.find((c) => c.branchIndex === 0)
    expect(virginCrossing?.chosen).toBe(false)
  })

  it('When the loop is noisy, then Hc stays within a field step of the truth', () => {
    // Fixed seed 33; noise σ = 0.02 on a tanh loop with Hc = 30, w = 5, step 5.
    const random = createRandom(33)
    const points = tanhLoop(30, 5, 100, 41).map((p) => ({ ...p, magnetization: p.magnetization + random.normal(0, 0.02) }))
    const result = hysteresisLoop(points)
    expect(Math.abs(result.coerciveField! - 30)).toBeLessThan(5)
    expect(result.saturated).toBe(true)
  })
})

describe('hysteresisLoop, degenerate input', () => {
  it.each([
    ['no point', []],
    ['one point', [{ field: 1, magnetization: 1 }]],
    ['a constant field', [{ field: 5, magnetization: 1 }, { field: 5, magnetization: -1 }]],
    ['non-finite values', [{ field: Number.NaN, magnetization: 1 }, { field: 1, magnetization: Infinity }]],
  ])('When the input has %s, then nulls, no branches and saturated = false', (_name, points) => {
    const result = hysteresisLoop(points)
    expect(result.branches).toEqual([])
    expect(result.coerciveField).toBeNull()
    expect(result.remanence).toBeNull()
    expect(result.squareness).toBeNull()
    expect(result.saturated).toBe(false)
    expect(result.zeroCrossings).toEqual([])
  })

  it('When M is the same everywhere, then there is no crossing and the loop is not saturated', () => {
    const points = [100, 50, 0, -50, -100, -50, 0, 50, 100].map((field) => ({ field, magnetization: 0.3 }))
    const result = hysteresisLoop(points)
    expect(result.branches).toHaveLength(2)
    expect(result.zeroCrossings).toEqual([])
    expect(result.coerciveField).toBeNull()
    expect(result.remanence).toBe(0)
    expect(result.saturated).toBe(false)
  })

  it('When a NaN frame sits inside the sweep, then it is skipped and indices still refer to the input', () => {
    const points = methodsLoop()
    points.splice(3, 0, { field: Number.NaN, magnetization: 0.5 })
    const result = hysteresisLoop(points)
    expect(result.coerciveField).toBeCloseTo(22.5, 12)
    expect(result.branches[0]).toEqual({ direction: 'descending', startIndex: 0, endIndex: 10 })
  })
})
