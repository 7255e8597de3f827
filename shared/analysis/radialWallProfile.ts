/**
 * Wall position of a closed domain (a bubble) as a profile along its wall: the radius r(θ) around the centroid,
 * unrolled to arc length, with the domain's overall shape removed, ready for ./wallRoughness.
 *
 * Method: rays from the domain's centroid at N equally spaced angles, N = round(2π·R̄) with R̄ = √(A/π) the
 * area-equivalent radius, so that successive samples are ≈ 1 px of arc apart. Along each ray the mask is sampled
 * every 0.25 px (nearest pixel) and r(θ) = (number of domain samples) × 0.25 px: the radius of a star-shaped domain,
 * and the area-equivalent radius along the ray where the wall has overhangs or the domain has holes — the polar
 * counterpart of the column count of ./wallRoughness `wallProfileFromMask`. Then the Fourier modes n = 0 … 2 of
 * r(θ) (size, centroid offset, elliptical elongation) are removed by least squares, so that B(r) measures the
 * roughness of the wall and not the shape of the domain; the profile u(s) = r(θ(s)) − fit keeps every mode n ≥ 3.
 * Polar unrolling of a bubble domain's wall for its displacement correlation is common practice [P] (bubble
 * expansion studies measure the wall position u along the mean circle); the ray-count definition and the removal of
 * n ≤ 2 are this module's documented choices.
 * Checked against: digital disks (r(θ) = R within 0.75 px, residual rms < 0.3 px), an off-centre ellipse (removed by
 * the n ≤ 2 fit), a rosette r = R + a·cos 5θ (the n = 5 amplitude comes back) and a self-affine rough bubble of
 * known ζ through ./wallRoughness (tests).
 * Input: a BinaryMask holding the domain as phase `phase` (default 1 = up); pass a mask of that one domain (other
 * domains of the phase move the centroid). Pixels outside the image and ignored pixels end a ray: a ray that leaves
 * the image or meets an ignored pixel while still inside the domain gives NaN (a truncated wall, unknown position);
 * domain pixels beyond such a stop (an overhang past a scratch) are not counted.
 * Output: px; u has one sample per ray, in order of increasing θ (from +x towards +y, rows downwards on screen).
 */
import type { BinaryMask } from './types'
import { solveLinearSystem } from './linearSolve'

export interface RadialWallProfileOptions {
  /** Phase value of the domain (default 1 = up). */
  phase?: 0 | 1
  /** Highest Fourier mode of r(θ) removed (default 2: size, offset, elongation); 0 removes the mean radius only. */
  removeModes?: number
}

export interface RadialWallProfile {
  /** r(θ) minus the fitted low modes, px; NaN where the wall position is unknown (see header). */
  u: Float64Array
  /** r(θ) as measured, px. */
  radiusPx: Float64Array
  /** Centroid of the domain (x = column, y = row), the origin of the rays; null without domain pixels. */
  centre: { x: number; y: number } | null
  /** Area-equivalent radius √(A/π), px. */
  meanRadiusPx: number
  /** Arc length between successive samples at R̄, px (≈ 1). */
  arcStepPx: number
  removedModes: number
}

/** Sampling step along a ray, px. */
const RAY_STEP = 0.25

/** Basis functions 1, cos θ, sin θ, …, cos Mθ, sin Mθ at θ. */
function basis(theta: number, modes: number): number[] {
  const out = [1]
  for (let m = 1; m <= modes; m++) out.push(Math.cos(m * theta), Math.sin(m * theta))
  return out
}

/** r(θ) minus its least-squares fit by modes 0 … M over the known samples. */
function removeLowModes(radius: Float64Array, modes: number): Float64Array {
  const n = radius.length
  const p = 1 + 2 * modes
  const ata = Array.from({ length: p }, () => new Array<number>(p).fill(0))
  const atb = new Array<number>(p).fill(0)
  let known = 0
  for (let k = 0; k < n; k++) {
    if (Number.isNaN(radius[k])) continue
    known++
    const f = basis((2 * Math.PI * k) / n, modes)
    for (let i = 0; i < p; i++) {
      atb[i] += f[i] * radius[k]
      for (let j = 0; j < p; j++) ata[i][j] += f[i] * f[j]
    }
  }
  // Too few known samples to fit the modes: keep the mean removal only (or nothing).
  const coefficients = known > 2 * p ? solveLinearSystem(ata.flat(), atb, 1e-12) : null
  const out = new Float64Array(n)
  let mean = 0
  if (coefficients === null) {
    for (let k = 0; k < n; k++) if (!Number.isNaN(radius[k])) mean += radius[k] / Math.max(1, known)
  }
  for (let k = 0; k < n; k++) {
    if (Number.isNaN(radius[k])) {
      out[k] = Number.NaN
      continue
    }
    if (coefficients === null) {
      out[k] = radius[k] - mean
      continue
    }
    const f = basis((2 * Math.PI * k) / n, modes)
    let fit = 0
    for (let i = 0; i < p; i++) fit += coefficients[i] * f[i]
    out[k] = radius[k] - fit
  }
  return out
}

/**
 * The wall of a closed domain as a profile along its length (see the file header).
 * @returns empty profiles and a null centre for a mask without domain pixels (no wall to follow).
 * @example wallRoughness(radialWallProfile(bubbleMask).u).zeta
 */
export function radialWallProfile(mask: BinaryMask, options: RadialWallProfileOptions = {}): RadialWallProfile {
  const phase = options.phase ?? 1
  const removedModes = Math.max(0, Math.floor(options.removeModes ?? 2))
  const { width, height, data, ignore } = mask
  let sx = 0
  let sy = 0
  let area = 0
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x
      if (data[i] !== phase || (ignore !== undefined && ignore[i] !== 0)) continue
      sx += x
      sy += y
      area++
    }
  }
  // Degenerate: no domain pixel ⇒ no wall.
  if (area === 0) return { u: new Float64Array(0), radiusPx: new Float64Array(0), centre: null, meanRadiusPx: 0, arcStepPx: 0, removedModes }
  const cx = sx / area
  const cy = sy / area
  const meanRadiusPx = Math.sqrt(area / Math.PI)
  const rays = Math.max(8, Math.round(2 * Math.PI * meanRadiusPx))
  // Far enough to leave any domain in the image: the image diagonal from the centroid.
  const reach = Math.hypot(Math.max(cx, width - 1 - cx), Math.max(cy, height - 1 - cy)) + 1
  const radiusPx = new Float64Array(rays)
  for (let k = 0; k < rays; k++) {
    const theta = (2 * Math.PI * k) / rays
    const dx = Math.cos(theta)
    const dy = Math.sin(theta)
    let count = 0
    let truncated = false
    let inside = true
    for (let t = RAY_STEP / 2; t < reach; t += RAY_STEP) {
      const x = Math.round(cx + t * dx)
      const y = Math.round(cy + t * dy)
      if (x < 0 || y < 0 || x >= width || y >= height) {
        truncated = inside
        break
      }
      const i = y * width + x
      if (ignore !== undefined && ignore[i] !== 0) {
        truncated = inside
        break
      }
      inside = data[i] === phase
      if (inside) count++
    }
    radiusPx[k] = truncated ? Number.NaN : count * RAY_STEP
  }
  return {
    u: removeLowModes(radiusPx, removedModes),
    radiusPx,
    centre: { x: cx, y: cy },
    meanRadiusPx,
    arcStepPx: (2 * Math.PI * meanRadiusPx) / rays,
    removedModes,
  }
}
