/**
 * Bubble/domain size statistics from connected components: equivalent-circle diameters (ECD).
 *
 * Method (METHODS §2.2): d_ECD = 2·√(A/π) per component, A = pixel count. Components touching the image border or an
 * ignored pixel are truncated: they are excluded from the statistics and reported separately as censored. Number-
 * weighted mean d̄_n = Σd/n with standard error sd/√n; area-weighted mean d̄_A = ΣA·d/ΣA (weights ∝ area, the mean
 * seen by a randomly chosen pixel) [P]. Labelling: ./connectedComponents (up 8-connected by default, METHODS §1.4).
 * Checked against: METHODS.md check #14 (A = 100 px² → 11.2838 px); disks of known radius; the property
 * π(d/2)² = pixel count (tests).
 * Input: a BinaryMask (labelled here; `phase` selects up = 1 or down = 0) or precomputed ComponentStats.
 * Output: diameters in px (square pixels; for pitches ax, ay multiply by √(ax·ay)), areas in px.
 */
import { componentStats } from './connectedComponents'
import type { ComponentStats } from './connectedComponents'
import type { BinaryMask, Connectivity } from './types'

export interface DomainSizeOptions {
  /** Phase labelled when a mask is given: 1 = up (default), 0 = down. */
  phase?: 0 | 1
  /** Connectivity when a mask is given (default 8 for up, 4 for down: opposite connectivities, METHODS §1.4). */
  connectivity?: Connectivity
  /** Components smaller than this many pixels are left out (default 1: keep all). */
  minAreaPx?: number
}

export interface DomainSizeStats {
  /** ECD of every complete (not truncated) component, px, in label order. */
  diametersPx: Float64Array
  /** Pixel counts of the complete components, same order. */
  areasPx: Uint32Array
  /** ECD of the components touching the border or an ignored pixel (lower bounds), px. */
  censoredDiametersPx: Float64Array
  count: number
  censoredCount: number
  /** Number-weighted mean ECD, px; null without complete components. */
  numberMeanPx: number | null
  /** Area-weighted mean ECD, px; null without complete components. */
  areaWeightedMeanPx: number | null
  /** Standard error of the number-weighted mean, sd/√n, px; null for n < 2. */
  stdErrPx: number | null
}

/** Equivalent-circle diameter of an area A (px²): 2·√(A/π). */
export function equivalentCircleDiameter(areaPx: number): number {
  return 2 * Math.sqrt(areaPx / Math.PI)
}

/**
 * ECD statistics of the domains of one phase (METHODS §2.2).
 * @returns count 0 and null means when the phase is absent or every domain is truncated.
 * @example domainSizeStats(diskMask).numberMeanPx // ≈ 2R for one interior disk of radius R
 */
export function domainSizeStats(input: BinaryMask | ComponentStats, options: DomainSizeOptions = {}): DomainSizeStats {
  let components: ComponentStats
  if ('sizes' in input) {
    components = input
  } else {
    const phase = options.phase ?? 1
    const connectivity = options.connectivity ?? (phase === 1 ? 8 : 4)
    components = componentStats(input.data, input.width, input.height, connectivity, phase, { ignore: input.ignore })
  }
  // Degenerate input (no component, or all truncated) falls through with n = 0: means null, not NaN.
  const minArea = options.minAreaPx ?? 1
  const diameters: number[] = []
  const areas: number[] = []
  const censored: number[] = []
  for (let l = 1; l <= components.count; l++) {
    const area = components.sizes[l]
    if (area < minArea) continue
    const d = equivalentCircleDiameter(area)
    if (components.touchesBorder[l] !== 0 || components.touchesIgnore[l] !== 0) censored.push(d)
    else {
      diameters.push(d)
      areas.push(area)
    }
  }
  const n = diameters.length
  let sum = 0
  let areaSum = 0
  let weighted = 0
  for (let i = 0; i < n; i++) {
    sum += diameters[i]
    areaSum += areas[i]
    weighted += areas[i] * diameters[i]
  }
  const numberMeanPx = n > 0 ? sum / n : null
  let stdErrPx: number | null = null
  if (numberMeanPx !== null && n >= 2) {
    let ss = 0
    for (let i = 0; i < n; i++) ss += (diameters[i] - numberMeanPx) ** 2
    stdErrPx = Math.sqrt(ss / (n - 1) / n)
  }
  return {
    diametersPx: Float64Array.from(diameters),
    areasPx: Uint32Array.from(areas),
    censoredDiametersPx: Float64Array.from(censored),
    count: n,
    censoredCount: censored.length,
    numberMeanPx,
    areaWeightedMeanPx: n > 0 ? weighted / areaSum : null,
    stdErrPx,
  }
}
