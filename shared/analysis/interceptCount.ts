/**
 * Wall crossings per unit length of test line (P_L) in four directions, and the mean chord lengths they imply.
 *
 * Method (METHODS §2.1): intercept counting along test lines in the stereology tradition (Saltykov; Underwood;
 * ASTM E112 intercept procedure): the test lines are all pixel rows, columns and both diagonal families; a crossing
 * is a transition between successive analysed pixels of different phase, and the test-line length L_T is measured
 * between successive sampled pixel centres (1 px per axial step, √2 px per diagonal step), so P_L(θ) = N_θ / L_T(θ).
 * Mean chord over both phases ℓ̄ = 1/P̄_L with P̄_L the mean of the four directions; per phase
 * ℓ̄_up = 2·A_A(up)/P̄_L and ℓ̄_down = 2·A_A(down)/P̄_L (each chord has two ends; Delesse A_A = L_L) [P].
 * (π/2)·P̄_L is the 4-direction Crofton wall density L_A (the same identity as ./wallLength).
 * For stripes measured perpendicular to the walls P_L⊥ = 1/w̄ and the period is 2/P_L⊥; use the per-direction values.
 * Checked against: METHODS.md check #11 (257-px rows of 8-px stripes: 32 crossings per row, P_L = 0.125 px⁻¹) and
 * check #12 (isotropic average over stripe orientations: (π/2)·P̄_L = 1/w), reproduced by the tests.
 * ASTM half-counts at line ends are not applied: lines end at the image border, which is never a wall.
 * Input: BinaryMask (1 = up); pairs with an ignored pixel are skipped (both the crossing and its line length).
 * Conventions: deg45 = direction (x+1, y+1), deg135 = (x−1, y+1); angles from +x towards +y (x = column, y = row).
 * Output: crossings per px, chord lengths in px.
 */
import type { BinaryMask } from './types'

export interface DirectionalValues {
  deg0: number
  deg45: number
  deg90: number
  deg135: number
}

export interface LineInterceptResult {
  /** P_L per direction, crossings per px of test line (0 where a direction has no test line). */
  crossingsPerPx: DirectionalValues
  /** Raw crossing counts per direction. */
  crossings?: DirectionalValues
  /** Total test-line length per direction, px. */
  lineLengthPx?: DirectionalValues
  /** ℓ̄ = 1/P̄_L over both phases, px; null without crossings. */
  meanChordPx: number | null
  /** 2·A_A(up)/P̄_L, px; null without crossings. */
  upMeanChordPx: number | null
  /** 2·A_A(down)/P̄_L, px; null without crossings. */
  downMeanChordPx: number | null
  /** (max − min)/(max + min) of the four P_L values, ∈ [0, 1]; 0 without crossings. */
  anisotropy: number
  /** max/min of the four P_L values; null when some direction has no crossing. */
  anisotropyRatio?: number | null
  /** Area fraction of the up phase among analysed pixels. */
  upAreaFraction?: number
}

/**
 * Wall crossings per unit test-line length in 0°, 45°, 90°, 135° and the mean chords (METHODS §2.1).
 * @returns zero P_L and null chords for an empty mask or a single phase.
 * @example lineIntercepts(stripes8px257wide).crossingsPerPx.deg0 // 0.125
 */
export function lineIntercepts(mask: BinaryMask): LineInterceptResult {
  const { width, height, data, ignore } = mask
  // Crossing counts N and neighbour-pair counts M per direction (test-line length = M·step).
  let n0 = 0
  let n45 = 0
  let n90 = 0
  let n135 = 0
  let m0 = 0
  let m45 = 0
  let m90 = 0
  let m135 = 0
  let up = 0
  let analysed = 0
  const ok = (i: number): boolean => ignore === undefined || ignore[i] === 0
  for (let y = 0; y < height; y++) {
    const row = y * width
    const hasNext = y + 1 < height
    for (let x = 0; x < width; x++) {
      const i = row + x
      if (!ok(i)) continue
      const v = data[i]
      analysed++
      if (v !== 0) up++
      if (x + 1 < width && ok(i + 1)) {
        m0++
        if (data[i + 1] !== v) n0++
      }
      if (!hasNext) continue
      const j = i + width
      if (ok(j)) {
        m90++
        if (data[j] !== v) n90++
      }
      if (x + 1 < width && ok(j + 1)) {
        m45++
        if (data[j + 1] !== v) n45++
      }
      if (x > 0 && ok(j - 1)) {
        m135++
        if (data[j - 1] !== v) n135++
      }
    }
  }
  const perPx = (n: number, pairs: number, step: number): number => (pairs > 0 ? n / (pairs * step) : 0)
  const crossingsPerPx: DirectionalValues = {
    deg0: perPx(n0, m0, 1),
    deg45: perPx(n45, m45, Math.SQRT2),
    deg90: perPx(n90, m90, 1),
    deg135: perPx(n135, m135, Math.SQRT2),
  }
  const values = [crossingsPerPx.deg0, crossingsPerPx.deg45, crossingsPerPx.deg90, crossingsPerPx.deg135]
  const mean = (values[0] + values[1] + values[2] + values[3]) / 4
  const max = Math.max(...values)
  const min = Math.min(...values)
  const upFraction = analysed > 0 ? up / analysed : 0
  // Degenerate: no crossing (empty, single phase, 1×1) ⇒ chords undefined, reported as null.
  const hasCrossings = mean > 0
  return {
    crossingsPerPx,
    crossings: { deg0: n0, deg45: n45, deg90: n90, deg135: n135 },
    lineLengthPx: { deg0: m0, deg45: m45 * Math.SQRT2, deg90: m90, deg135: m135 * Math.SQRT2 },
    meanChordPx: hasCrossings ? 1 / mean : null,
    upMeanChordPx: hasCrossings ? (2 * upFraction) / mean : null,
    downMeanChordPx: hasCrossings ? (2 * (1 - upFraction)) / mean : null,
    anisotropy: max + min > 0 ? (max - min) / (max + min) : 0,
    anisotropyRatio: min > 0 ? max / min : null,
    upAreaFraction: upFraction,
  }
}
