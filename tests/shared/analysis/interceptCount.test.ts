import { describe, expect, it } from 'vitest'
import { lineIntercepts } from '@shared/analysis/interceptCount'
import { wallLengthCrofton } from '@shared/analysis/wallLength'
import type { BinaryMask } from '@shared/analysis/types'

/** Stripes with walls at angle θ + 90°: up where frac((x·cosθ + y·sinθ)/P + 0.37) < duty. */
function stripes(size: number, period: number, angleDeg: number, duty = 0.5): BinaryMask {
  const c = Math.cos((angleDeg * Math.PI) / 180)
  const s = Math.sin((angleDeg * Math.PI) / 180)
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const u = (x * c + y * s) / period + 0.37
      data[y * size + x] = u - Math.floor(u) < duty ? 1 : 0
    }
  }
  return { width: size, height: size, data }
}

describe('lineIntercepts', () => {
  it('When 257-px rows cross 8-px stripes, then 32 crossings per row, P_L = 0.125 px⁻¹, w̄ = 8, λ = 16', () => {
    // METHODS.md check #11 [D]: column x is up iff floor(x/8) is even; horizontal test lines.
    const width = 257
    const height = 10
    const data = new Uint8Array(width * height)
    for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) data[y * width + x] = Math.floor(x / 8) % 2 === 0 ? 1 : 0
    const result = lineIntercepts({ width, height, data })
    expect(result.crossings?.deg0).toBe(32 * height)
    expect(result.lineLengthPx?.deg0).toBe(256 * height)
    const perpendicular = result.crossingsPerPx.deg0
    expect(perpendicular).toBe(0.125)
    // Stripes, lines perpendicular to the walls: w̄ = 1/P_L⊥, λ = 2/P_L⊥.
    expect(1 / perpendicular).toBe(8)
    expect(2 / perpendicular).toBe(16)
    // Lines parallel to the walls cross nothing.
    expect(result.crossingsPerPx.deg90).toBe(0)
    expect(result.anisotropy).toBe(1)
    expect(result.anisotropyRatio).toBeNull()
  })

  it('When P̄_L is averaged over stripe orientations, then (π/2)·P̄_L = 1/w', () => {
    // METHODS.md check #12 [D]: isotropic lines on stripes of spacing w give P̄_L = (2/π)/w. The stripe orientation is
    // averaged over 0…180° in 36 steps (equivalent to isotropic lines on fixed stripes); tolerance 1 %.
    const w = 12
    let sum = 0
    let count = 0
    for (let angle = 0; angle < 180; angle += 5) {
      const p = lineIntercepts(stripes(256, 2 * w, angle)).crossingsPerPx
      sum += (p.deg0 + p.deg45 + p.deg90 + p.deg135) / 4
      count++
    }
    expect(Math.abs(((Math.PI / 2) * sum) / count / (1 / w) - 1)).toBeLessThan(0.01)
  })

  it('When (π/2)·P̄_L is compared with the Crofton wall length per area, then they agree', () => {
    // METHODS.md §4 [D]: L_A = (π/2)·P̄_L is the same Crofton identity (equal up to the pair counts at the border).
    const mask = stripes(300, 26, 37)
    const p = lineIntercepts(mask).crossingsPerPx
    const fromIntercepts = (Math.PI / 2) * ((p.deg0 + p.deg45 + p.deg90 + p.deg135) / 4)
    const fromCrofton = wallLengthCrofton(mask).lengthPx / (300 * 300)
    expect(Math.abs(fromIntercepts / fromCrofton - 1)).toBeLessThan(0.01)
  })

  it('When up stripes are 30 % of the period, then the per-phase chords split 2·A_A/P_L', () => {
    // METHODS.md §2.1 [P]: ℓ̄_up = 2·A_A(up)/P̄_L and ℓ̄_down = 2·A_A(down)/P̄_L, so their ratio is A_up/A_down and
    // their mean is ℓ̄. Along the lines perpendicular to the walls the up chord is 2·A_A(up)/P_L⊥ = 0.3·P = 12 px.
    const result = lineIntercepts(stripes(400, 40, 0, 0.3))
    expect(result.upAreaFraction as number).toBeCloseTo(0.3, 2)
    const ratio = (result.upMeanChordPx as number) / (result.downMeanChordPx as number)
    expect(ratio).toBeCloseTo((result.upAreaFraction as number) / (1 - (result.upAreaFraction as number)), 10)
    expect(((result.upMeanChordPx as number) + (result.downMeanChordPx as number)) / 2).toBeCloseTo(
      result.meanChordPx as number,
      10,
    )
    const perpendicular = result.crossingsPerPx.deg0
    expect(Math.abs((2 * 0.3) / perpendicular - 12)).toBeLessThan(1)
  })

  it('When a pair involves an ignored pixel, then neither its crossing nor its length counts', () => {
    const width = 10
    const data = Uint8Array.from({ length: width }, (_, x) => (x < 5 ? 1 : 0))
    const ignore = new Uint8Array(width)
    ignore[5] = 1
    const result = lineIntercepts({ width, height: 1, data, ignore })
    expect(result.crossings?.deg0).toBe(0)
    expect(result.lineLengthPx?.deg0).toBe(7)
  })

  it('When the mask is one phase, 1×1 or empty, then P_L = 0 and the chords are null', () => {
    // METHODS.md §0 [P]: no walls ⇒ P_L = 0; chords undefined ⇒ null, never NaN or Infinity.
    for (const mask of [
      { width: 16, height: 16, data: new Uint8Array(256).fill(1) },
      { width: 1, height: 1, data: new Uint8Array([0]) },
      { width: 0, height: 0, data: new Uint8Array(0) },
    ]) {
      const result = lineIntercepts(mask)
      expect(Object.values(result.crossingsPerPx)).toEqual([0, 0, 0, 0])
      expect(result.meanChordPx).toBeNull()
      expect(result.upMeanChordPx).toBeNull()
      expect(result.downMeanChordPx).toBeNull()
      expect(result.anisotropy).toBe(0)
    }
  })
})
