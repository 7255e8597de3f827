import { describe, expect, it } from 'vitest'
import { distanceTransform, featureTransform, featureTransformBothPhases } from '@shared/analysis/distanceTransform'
import { createRandom } from '@shared/analysis/seededRandom'

/** Independent reference: brute-force nearest other-phase pixel centre, with pitches (sx, sy). */
function bruteForce(phase: Uint8Array, width: number, height: number, value: number, sx = 1, sy = 1): Float64Array {
  const out = new Float64Array(width * height)
  for (let i = 0; i < width * height; i++) {
    if (phase[i] !== value) continue
    const x = i % width
    const y = (i - x) / width
    let best = Infinity
    for (let j = 0; j < width * height; j++) {
      if (phase[j] === value) continue
      const dx = ((j % width) - x) * sx
      const dy = (Math.floor(j / width) - y) * sy
      best = Math.min(best, Math.hypot(dx, dy))
    }
    out[i] = best
  }
  return out
}

/** Vertical stripe of `stripeWidth` up columns centred in a down background. */
function stripeMask(stripeWidth: number, width = 40, height = 12): Uint8Array {
  const data = new Uint8Array(width * height)
  const start = 10
  for (let y = 0; y < height; y++) for (let x = start; x < start + stripeWidth; x++) data[y * width + x] = 1
  return data
}

describe('distanceTransform', () => {
  it('When masks are random, then every distance equals the brute-force nearest-centre distance', () => {
    // Fixed seed 31; 60 masks of random size and density, both phases, square and anisotropic pixels.
    const random = createRandom(31)
    for (let t = 0; t < 60; t++) {
      const width = 1 + random.int(24)
      const height = 1 + random.int(24)
      const density = random()
      const phase = Uint8Array.from({ length: width * height }, () => (random() < density ? 1 : 0))
      const sampling = t % 3 === 0 ? { x: 1.5, y: 0.7 } : { x: 1, y: 1 }
      for (const value of [0, 1] as const) {
        const expected = bruteForce(phase, width, height, value, sampling.x, sampling.y)
        const actual = distanceTransform(phase, width, height, value, { sampling })
        for (let i = 0; i < expected.length; i++) {
          if (expected[i] === Infinity) expect(actual[i]).toBe(Infinity)
          else expect(Math.abs(actual[i] - expected[i])).toBeLessThan(1e-5)
        }
      }
    }
  })

  it('When stripes are 9 and 10 px wide, then d_max = 5 and the raw width 2·d_max − 1 = 9 for both', () => {
    // METHODS.md check #15 [D]: scipy distance_transform_edt convention; the −1 px quantisation of even widths.
    for (const stripeWidth of [9, 10]) {
      const d = distanceTransform(stripeMask(stripeWidth), 40, 12, 1)
      const max = Math.max(...d)
      expect(max).toBe(5)
      expect(2 * max - 1).toBe(9)
    }
  })

  it('When the documented row example is used, then the distances are 0, 1, 2, 3', () => {
    expect(Array.from(distanceTransform(new Uint8Array([0, 1, 1, 1]), 4, 1, 1))).toEqual([0, 1, 2, 3])
  })

  it('When the other phase is absent, then every pixel of the phase is at +Infinity', () => {
    // Documented behaviour: no virtual border distance is invented.
    const d = distanceTransform(new Uint8Array(12).fill(1), 4, 3, 1)
    expect(Array.from(d).every((v) => v === Infinity)).toBe(true)
    // The other phase itself gets 0 when the requested phase is absent.
    expect(Array.from(distanceTransform(new Uint8Array(12).fill(1), 4, 3, 0))).toEqual(new Array(12).fill(0))
  })

  it('When an output buffer is passed, then it is reused', () => {
    const out = new Float32Array(16)
    const result = distanceTransform(new Uint8Array(16).map((_, i) => (i === 5 ? 0 : 1)), 4, 4, 1, { out })
    expect(result).toBe(out)
    expect(out[5]).toBe(0)
    expect(out[15]).toBeCloseTo(Math.hypot(2, 2), 6)
  })

  it('When the image is empty or 1×1, then a defined array is returned', () => {
    expect(distanceTransform(new Uint8Array(0), 0, 0, 1).length).toBe(0)
    expect(Array.from(distanceTransform(new Uint8Array([1]), 1, 1, 1))).toEqual([Infinity])
    expect(Array.from(distanceTransform(new Uint8Array([0]), 1, 1, 1))).toEqual([0])
  })
})

describe('featureTransform', () => {
  it('When masks are random, then the nearest index is an other-phase pixel at exactly the reported distance', () => {
    const random = createRandom(32) // fixed seed
    for (let t = 0; t < 30; t++) {
      const width = 2 + random.int(20)
      const height = 2 + random.int(20)
      const phase = Uint8Array.from({ length: width * height }, () => (random() < 0.6 ? 1 : 0))
      const { distance, nearest } = featureTransform(phase, width, height, 1)
      const hasOther = phase.some((v) => v === 0)
      for (let i = 0; i < width * height; i++) {
        if (!hasOther) {
          expect(nearest[i]).toBe(phase[i] === 1 ? -1 : i)
          continue
        }
        const j = nearest[i]
        expect(phase[j]).toBe(0)
        const dx = (j % width) - (i % width)
        const dy = Math.floor(j / width) - Math.floor(i / width)
        expect(Math.abs(Math.hypot(dx, dy) - distance[i])).toBeLessThan(1e-5)
      }
    }
  })
})

describe('featureTransformBothPhases', () => {
  it('When masks are random, then every pixel gets the brute-force distance to the other phase and the same nearest pixel as the one-phase transform', () => {
    // Fixed seed 47; sizes up to 120 px wide, sparse and dense masks.
    const random = createRandom(47)
    for (let t = 0; t < 40; t++) {
      const width = 1 + random.int(120)
      const height = 1 + random.int(20)
      const density = t % 8 === 0 ? 0.01 : random()
      const phase = Uint8Array.from({ length: width * height }, () => (random() < density ? 1 : 0))
      const up = bruteForce(phase, width, height, 1)
      const down = bruteForce(phase, width, height, 0)
      const { distance, nearest } = featureTransformBothPhases(phase, width, height)
      const onePhase = [featureTransform(phase, width, height, 0), featureTransform(phase, width, height, 1)]
      for (let i = 0; i < width * height; i++) {
        // Same tie-breaking as the one-phase transform, so widths measured through either are identical.
        expect(nearest[i]).toBe(onePhase[phase[i]].nearest[i])
        const expected = phase[i] === 1 ? up[i] : down[i]
        expect(distance[i]).toBeCloseTo(expected, 5)
        if (expected === Infinity) {
          expect(nearest[i]).toBe(-1)
          continue
        }
        const j = nearest[i]
        expect(phase[j]).not.toBe(phase[i])
        expect(Math.hypot((j % width) - (i % width), Math.floor(j / width) - Math.floor(i / width))).toBeCloseTo(expected, 5)
      }
    }
  })

  it('When one phase is absent, then every distance is +Infinity and no pixel has a nearest', () => {
    const { distance, nearest } = featureTransformBothPhases(new Uint8Array(12).fill(1), 4, 3)
    expect(Array.from(distance)).toEqual(new Array(12).fill(Infinity))
    expect(Array.from(nearest)).toEqual(new Array(12).fill(-1))
  })
})
