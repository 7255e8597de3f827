import { describe, expect, it } from 'vitest'
import { gaussianBlur } from '@shared/analysis/gaussianBlur'
import { createRandom } from '@shared/analysis/seededRandom'
import { stripeOrientation } from '@shared/analysis/stripeOrientation'
import type { BinaryMask, FloatImage } from '@shared/analysis/types'
import {
  chainCodeCounts,
  crackLength,
  croftonBiasFactor,
  croftonCrossings,
  wallDensity,
  wallLengthCrofton,
} from '@shared/analysis/wallLength'

/** METHODS §4 disk: pixels with (x−60)² + (y−60)² ≤ 2500 in 121×121. */
function disk50(): BinaryMask {
  const size = 121
  const data = new Uint8Array(size * size)
  for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = (x - 60) ** 2 + (y - 60) ** 2 <= 2500 ? 1 : 0
  return { width: size, height: size, data }
}

/**
 * Grey square-wave stripes (period P, wave vector at θ) with contrast ±40 around 100, an illumination gradient of
 * 0.15 grey levels per px along x and y, and Gaussian noise (sd 15, fixed seed).
 */
function noisyStripes(size: number, period: number, angleDeg: number, seed: number): FloatImage {
  const random = createRandom(seed)
  const c = Math.cos((angleDeg * Math.PI) / 180)
  const s = Math.sin((angleDeg * Math.PI) / 180)
  const data = new Float32Array(size * size)
  for (let y = 0; y < size; y++) {
    for (let x = 0; x < size; x++) {
      const u = (x * c + y * s) / period + 0.37
      data[y * size + x] = 100 + (u - Math.floor(u) < 0.5 ? 40 : -40) + 0.15 * (x + y) + random.normal(0, 15)
    }
  }
  return { width: size, height: size, data }
}

/** Test-side segmentation: subtract a least-squares plane, smooth (σ = 1.5 px), threshold at the mean. */
function binarise(image: FloatImage): BinaryMask {
  const { width, height, data } = image
  const n = width * height
  let sx = 0
  let sy = 0
  let sv = 0
  let sxx = 0
  let syy = 0
  let sxy = 0
  let sxv = 0
  let syv = 0
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const v = data[y * width + x]
      sx += x
      sy += y
      sv += v
      sxx += x * x
      syy += y * y
      sxy += x * y
      sxv += x * v
      syv += y * v
    }
  }
  const mx = sx / n
  const my = sy / n
  const cxx = sxx - n * mx * mx
  const cyy = syy - n * my * my
  const cxy = sxy - n * mx * my
  const cxv = sxv - mx * sv
  const cyv = syv - my * sv
  const det = cxx * cyy - cxy * cxy
  const b = (cxv * cyy - cyv * cxy) / det
  const c = (cyv * cxx - cxv * cxy) / det
  const flat = new Float32Array(n)
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) flat[y * width + x] = data[y * width + x] - b * x - c * y
  const smooth = gaussianBlur({ width, height, data: flat }, 1.5).data
  let mean = 0
  for (const v of smooth) mean += v / n
  return { width, height, data: Uint8Array.from(smooth, (v) => (v > mean ? 1 : 0)) }
}

describe('wallLength: digital disk R = 50', () => {
  const mask = disk50()

  it('When the disk is built, then it has 7845 pixels and reference perimeter 313.98', () => {
    // METHODS.md check #22 [D]: area 7845 px; reference 2π·√(7845/π) = 313.98.
    let area = 0
    for (const v of mask.data) area += v
    expect(area).toBe(7845)
    expect(2 * Math.PI * Math.sqrt(area / Math.PI)).toBeCloseTo(313.98, 2)
  })

  it('When the crack length is taken, then it has 404 edges and ×π/4 = 317.30', () => {
    // METHODS.md check #23 [D].
    const crack = crackLength(mask)
    expect(crack.edges).toBe(404)
    expect(crack.lengthPx).toBe(404)
    expect(Math.abs(crack.isotropicPx - 317.3)).toBeLessThan(0.01)
  })

  it('When the outer boundary is chain-coded, then n_e 160, n_o 120, n_c 148 and Freeman 329.71', () => {
    // METHODS.md check #24 [D]: 8-connected Moore-type tracing, corners counted cyclically.
    const chain = chainCodeCounts(mask)
    expect([chain.ne, chain.no, chain.nc]).toEqual([160, 120, 148])
    expect(chain.areaPx).toBe(7845)
    expect(Math.abs(chain.freemanPx - 329.71)).toBeLessThan(0.01)
  })

  it('When corrected chain-code estimators are applied, then V–S gives 312.05 and Kulpa-type 312.58', () => {
    // METHODS.md check #25 [R coefficients, secondary] + [D]; check #26 [D] (Kulpa 1977 coefficients [M]).
    const chain = chainCodeCounts(mask)
    expect(Math.abs(chain.vossepoelSmeuldersPx - 312.05)).toBeLessThan(0.01)
    expect(Math.abs(chain.kulpaPx - 312.58)).toBeLessThan(0.01)
  })

  it('When the 4-direction Crofton formula is applied, then the length is 315.26', () => {
    // METHODS.md check #27 [D]; equals scikit-image 0.26 perimeter_crofton(directions=4).
    const crofton = wallLengthCrofton(mask)
    expect(Math.abs(crofton.lengthPx - 315.26)).toBeLessThan(0.01)
    expect(crofton.crossings.n0).toBe(crofton.crossings.n90)
  })
})

describe('wallLength: bias factors', () => {
  it('When walls run along the pixel axes in a large image, then Crofton reads ×0.9481 of the true length', () => {
    // METHODS.md check #28 [D]: tolerance ±0.3 %. 512×512, vertical walls every 16 px: 31 walls × 512 px.
    const size = 512
    const data = new Uint8Array(size * size)
    for (let y = 0; y < size; y++) for (let x = 0; x < size; x++) data[y * size + x] = Math.floor(x / 16) % 2
    const ratio = wallLengthCrofton({ width: size, height: size, data }).lengthPx / (31 * 512)
    expect(Math.abs(ratio / 0.9481 - 1)).toBeLessThan(0.003)
    expect(croftonBiasFactor(0)).toBeCloseTo(0.9481, 4)
    expect(croftonBiasFactor(90)).toBeCloseTo(0.9481, 4)
  })

  it('When averaged over all wall directions, then the Crofton bias factor is 1', () => {
    // Crofton formula, integral geometry [D]: unbiased on average over orientations.
    let sum = 0
    const steps = 18000
    for (let i = 0; i < steps; i++) sum += croftonBiasFactor((180 * (i + 0.5)) / steps)
    expect(Math.abs(sum / steps - 1)).toBeLessThan(1e-6)
    // METHODS.md §4 [D]: about +2 % at 30°.
    expect(croftonBiasFactor(30)).toBeCloseTo(1.0174, 4)
  })

  it('When the Freeman factor of straight lines is averaged over directions, then it is 1.0548 = 1/Kulpa factor', () => {
    // METHODS.md check #29 [D]: a digital straight line at θ ∈ [0°, 45°] has n_e = cosθ − sinθ and n_o = sinθ steps per
    // unit length, so Freeman reads cosθ + (√2 − 1)·sinθ; its mean is (8/π)(√2 − 1) = 1.0548 (tolerance 1e-4).
    let sum = 0
    const steps = 100000
    for (let i = 0; i < steps; i++) {
      const t = ((Math.PI / 4) * (i + 0.5)) / steps
      sum += Math.cos(t) + (Math.SQRT2 - 1) * Math.sin(t)
    }
    expect(Math.abs(sum / steps - 1.0548)).toBeLessThan(1e-4)
    expect(((Math.PI * (Math.SQRT2 + 1)) / 8) * (sum / steps)).toBeCloseTo(1, 9)
  })

  it('When rotated squares are chain-coded, then Freeman averages ≈ 1.05 of the perimeter and Crofton ≈ 1', () => {
    // Synthetic ground truth [D]: 240-px squares at 30 angles in 0.5°…87.5°. Boundary-pixel centres lie ≈ ½ px inside
    // the true edge, so Freeman lands 0.4 % below 1.0548 (tolerance 0.6 %); Crofton is unbiased (tolerance 0.5 %).
    const size = 400
    let freeman = 0
    let crofton = 0
    let count = 0
    for (let angle = 0.5; angle < 90; angle += 3) {
      const c = Math.cos((angle * Math.PI) / 180)
      const s = Math.sin((angle * Math.PI) / 180)
      const data = new Uint8Array(size * size)
      for (let y = 0; y < size; y++) {
        for (let x = 0; x < size; x++) {
          const u = (x - 199.5) * c + (y - 199.5) * s
          const v = -(x - 199.5) * s + (y - 199.5) * c
          data[y * size + x] = Math.abs(u) <= 120 && Math.abs(v) <= 120 ? 1 : 0
        }
      }
      const mask = { width: size, height: size, data }
      freeman += chainCodeCounts(mask).freemanPx / 960
      crofton += wallLengthCrofton(mask).lengthPx / 960
      count++
    }
    expect(Math.abs(freeman / count / 1.0548 - 1)).toBeLessThan(0.006)
    expect(Math.abs(crofton / count - 1)).toBeLessThan(0.005)
  })
})

describe('wallDensity', () => {
  it('When noisy oblique stripes on a gradient are binarised, then L_A = 2/P within 3 %', () => {
    // Synthetic ground truth [D]: straight walls, two per period ⇒ L_A = 2/P. Crofton's factor at 30° is 1.017.
    for (const [period, angle] of [
      [20, 30],
      [32, 60],
    ]) {
      const mask = binarise(noisyStripes(512, period, angle, 21))
      const density = wallDensity(mask)
      expect(density.estimator).toBe('crofton')
      expect(Math.abs(density.perPx / (2 / period) - 1)).toBeLessThan(0.03)
    }
  })

  it('When stripes are axis-aligned, then Crofton reads −5.2 % and the orientation-corrected estimate 2/P within 3 %', () => {
    // METHODS.md §4 pitfalls [P]: isotropic factors are wrong for aligned stripes; correct with §3.3's wall angle.
    const period = 20
    const image = noisyStripes(512, period, 0, 22)
    const mask = binarise(image)
    const plain = wallDensity(mask)
    expect(Math.abs(plain.perPx / (2 / period) / 0.9481 - 1)).toBeLessThan(0.03)
    const orientation = stripeOrientation(image)
    expect(orientation.orderParameter).toBeGreaterThan(0.9)
    const corrected = wallDensity(mask, { wallAngleDeg: orientation.wallAngleDeg as number })
    expect(corrected.estimator).toBe('crofton-oriented')
    expect(Math.abs(corrected.perPx / (2 / period) - 1)).toBeLessThan(0.03)
  })

  it('When two half-planes meet, then the wall is counted once and the image border never', () => {
    // Left half up, right half down, 100×40: one vertical wall of 40 px; crack = 40 edges, not 80.
    const width = 100
    const height = 40
    const data = new Uint8Array(width * height)
    for (let y = 0; y < height; y++) for (let x = 0; x < 50; x++) data[y * width + x] = 1
    const mask = { width, height, data }
    expect(crackLength(mask).edges).toBe(40)
    const crofton = wallLengthCrofton(mask)
    expect(crofton.crossings).toEqual({ n0: 40, n90: 0, n45: 39, n135: 39 })
    const density = wallDensity(mask)
    expect(density.analysedAreaPx).toBe(4000)
    expect(density.perPx).toBeCloseTo(crofton.lengthPx / 4000, 12)
  })

  it('When the wall lies under ignored pixels, then no wall is counted and the area shrinks', () => {
    const width = 100
    const height = 40
    const data = new Uint8Array(width * height)
    const ignore = new Uint8Array(width * height)
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < 50; x++) data[y * width + x] = 1
      ignore[y * width + 49] = 1
      ignore[y * width + 50] = 1
    }
    const density = wallDensity({ width, height, data, ignore })
    expect(density.lengthPx).toBe(0)
    expect(density.analysedAreaPx).toBe(width * height - 2 * height)
  })

  it('When the mask is all one phase, 1×1 or empty, then there are no walls and L_A = 0', () => {
    // METHODS.md §0 [P]: all one phase → no walls, L_A = 0; never NaN.
    const cases: BinaryMask[] = [
      { width: 20, height: 10, data: new Uint8Array(200).fill(1) },
      { width: 1, height: 1, data: new Uint8Array([1]) },
      { width: 0, height: 0, data: new Uint8Array(0) },
      { width: 4, height: 4, data: new Uint8Array(16).fill(1), ignore: new Uint8Array(16).fill(1) },
    ]
    for (const mask of cases) {
      const density = wallDensity(mask)
      expect(density.perPx).toBe(0)
      expect(density.lengthPx).toBe(0)
    }
  })
})

describe('chainCodeCounts', () => {
  it('When there is no up pixel or only a single one, then all steps are zero', () => {
    expect(chainCodeCounts({ width: 5, height: 5, data: new Uint8Array(25) }).freemanPx).toBe(0)
    const single = chainCodeCounts({ width: 3, height: 3, data: new Uint8Array([0, 0, 0, 0, 1, 0, 0, 0, 0]) })
    expect([single.ne, single.no, single.nc, single.areaPx]).toEqual([0, 0, 0, 1])
  })

  it('When a 3×3 block is traced, then the chain has 8 axial steps and 4 corners', () => {
    // Hand count: boundary pixels are the 8 outer pixels of the block, 2 steps per side, 4 direction changes.
    const chain = chainCodeCounts({ width: 5, height: 5, data: Uint8Array.from({ length: 25 }, (_, i) => (i % 5 > 0 && i % 5 < 4 && i > 4 && i < 20 ? 1 : 0)) })
    expect([chain.ne, chain.no, chain.nc, chain.areaPx]).toEqual([8, 0, 4, 9])
  })

  it('When several components exist, then the largest one is traced', () => {
    const width = 20
    const data = new Uint8Array(width * 10)
    data[0] = 1
    for (let y = 3; y < 7; y++) for (let x = 10; x < 15; x++) data[y * width + x] = 1
    expect(chainCodeCounts({ width, height: 10, data }).areaPx).toBe(20)
  })
})

describe('croftonCrossings', () => {
  /** The definition counted pair by pair: neighbours (x+1, y), (x, y+1), (x+1, y+1), (x−1, y+1) with another value. */
  function countByDefinition(width: number, height: number, data: Uint8Array) {
    const counts = { n0: 0, n90: 0, n45: 0, n135: 0 }
    const at = (x: number, y: number) => data[y * width + x]
    for (let y = 0; y < height; y++) {
      for (let x = 0; x < width; x++) {
        if (x + 1 < width && at(x + 1, y) !== at(x, y)) counts.n0++
        if (y + 1 < height && at(x, y + 1) !== at(x, y)) counts.n90++
        if (x + 1 < width && y + 1 < height && at(x + 1, y + 1) !== at(x, y)) counts.n45++
        if (x > 0 && y + 1 < height && at(x - 1, y + 1) !== at(x, y)) counts.n135++
      }
    }
    return counts
  }

  it('When random masks of any width and buffer offset are counted, then every count matches the definition', () => {
    const random = createRandom(23) // fixed seed
    for (const [width, height] of [[1, 1], [4, 1], [1, 4], [3, 5], [4, 4], [8, 3], [9, 6], [12, 7], [64, 9]]) {
      for (const offset of [0, 1, 4]) {
        // 0/1 masks (counted a word at a time where the rows allow it) and a mask with a stray value 2.
        for (const values of [2, 3]) {
          const data = new Uint8Array(offset + width * height).subarray(offset)
          for (let i = 0; i < data.length; i++) data[i] = Math.floor(random() * values)
          expect(croftonCrossings({ width, height, data })).toEqual(countByDefinition(width, height, data))
        }
      }
    }
  })
})
