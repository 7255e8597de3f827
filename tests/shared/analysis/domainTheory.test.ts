import { describe, expect, it } from 'vitest'
import {
  KITTEL_STRIPE_CONSTANT,
  blochWallParameter,
  blochWallWidth,
  exchangeLength,
  kittelStripeWidth,
  qualityFactor,
  singleDomainRadius,
  wallEnergy,
  wallEnergyFromStripeWidth,
} from '@shared/analysis/domainTheory'
import { MATERIALS } from '@shared/analysis/materials'

const within = (actual: number, expected: number, rel: number) =>
  expect(Math.abs(actual / expected - 1)).toBeLessThanOrEqual(rel)

describe('Bloch walls from METHODS §7.3 constants', () => {
  it.each([
    // METHODS.md checks #47–#50 [D; inputs R/M as tagged in §7.3]: δ_B in nm, σ_w in mJ/m², tolerance 0.1 %.
    ['#47 Fe', 'fe', 65.71, 4.016],
    ['#48 Co', 'co', 26.87, 14.03],
    ['#49 Ni (|K1|)', 'ni', 140.5, 0.805],
    ['#50 Nd2Fe14B', 'nd2fe14b', 4.204, 23.02],
  ] as const)('When %s constants are used, then δ_B = %f nm and σ_w = %f mJ/m²', (_check, id, deltaNm, sigmaMilli) => {
    const { A, K1 } = MATERIALS[id]
    const k = Math.abs(K1.value)
    within(blochWallWidth(A.value, k) * 1e9, deltaNm, 1e-3)
    within(wallEnergy(A.value, k) * 1e3, sigmaMilli, 1e-3)
  })

  it('When the Bloch parameter is computed, then Δ = δ_B/π (Fe 20.92 nm, Co 8.554 nm)', () => {
    // METHODS.md §7.3 table [D].
    within(blochWallParameter(21e-12, 48e3) * 1e9, 20.92, 1e-3)
    within(blochWallParameter(30e-12, 410e3) * 1e9, 8.554, 1e-3)
  })

  it('When Fe is treated as cubic, then the 180° wall energy halves to 2.008 mJ/m²', () => {
    // METHODS.md §7.2/§7.3 [D]: σ ≈ 2√(AK1) for cubic K1 > 0.
    within(wallEnergy(21e-12, 48e3, 'cubic') * 1e3, 2.008, 1e-3)
  })
})

describe('exchange length and quality factor', () => {
  it('When Fe Ms = 1.71 MA/m and A = 21 pJ/m, then l_ex = 3.381 nm (√2A) or 2.391 nm (√A)', () => {
    // METHODS.md check #51 [D].
    within(exchangeLength(21e-12, 1.71e6) * 1e9, 3.381, 1e-3)
    within(exchangeLength(21e-12, 1.71e6, 'sqrtA') * 1e9, 2.391, 1e-3)
  })

  it.each([
    // METHODS.md §7.3 table [D]: l_ex (√2A form) for Co, Ni, Nd2Fe14B.
    ['co', 4.799],
    ['ni', 7.724],
    ['nd2fe14b', 2.735],
  ] as const)('When %s constants are used, then l_ex = %f nm', (id, nm) => {
    within(exchangeLength(MATERIALS[id].A.value, MATERIALS[id].Ms.value) * 1e9, nm, 1e-3)
  })

  it('When Q is computed, then Q = 2K/(μ0Ms²): Nd2Fe14B ≫ 1, Fe < 1', () => {
    // [D] 2·4.3e6/(4π×10⁻⁷·1.28e12·1.28) = 4.177; Fe 2·48e3/(4π×10⁻⁷·1.71e6²) = 0.02613.
    within(qualityFactor(4.3e6, 1.28e6), (2 * 4.3e6) / (4e-7 * Math.PI * 1.28e6 ** 2), 1e-12)
    expect(qualityFactor(4.3e6, 1.28e6)).toBeCloseTo(4.177, 3)
    expect(qualityFactor(48e3, 1.71e6)).toBeCloseTo(0.02613, 5)
  })
})

describe('Kittel stripe domains', () => {
  it('When σ_w = 1 mJ/m², t = 1 µm, Ms = 1 MA/m, then D = 76.58 nm (period 153.2 nm)', () => {
    // METHODS.md check #52 [D]; constant (4/π³)(7ζ(3)/8) = 0.1357, 4π× that = 1.705 (CGS form; Kittel 1949 quotes
    // 1.7 [M]).
    const d = kittelStripeWidth({ wallEnergy: 1e-3, thickness: 1e-6, Ms: 1e6 })
    within(d * 1e9, 76.58, 1e-3)
    within(2 * d * 1e9, 153.2, 1e-3)
    expect(KITTEL_STRIPE_CONSTANT).toBeCloseTo(0.1357, 4)
    expect(4 * Math.PI * KITTEL_STRIPE_CONSTANT).toBeCloseTo(1.705, 3)
  })

  it('When the measured width is inverted, then the wall energy comes back (round trip)', () => {
    const d = kittelStripeWidth({ wallEnergy: 2.5e-3, thickness: 3e-6, Ms: 1.28e6, qualityFactor: 4 })
    within(wallEnergyFromStripeWidth(d, 3e-6, 1.28e6, { qualityFactor: 4 }), 2.5e-3, 1e-12)
    within(wallEnergyFromStripeWidth(76.58e-9, 1e-6, 1e6), 1e-3, 1e-3)
  })

  it('When a finite Q is given, then μ0Ms² is reduced by 2/(1 + μ*) and D grows', () => {
    // METHODS §7.2 [M]: μ* = 1 + 1/Q; Q = 1 → factor 2/3 → D × √(3/2).
    const base = kittelStripeWidth({ wallEnergy: 1e-3, thickness: 1e-6, Ms: 1e6 })
    within(kittelStripeWidth({ wallEnergy: 1e-3, thickness: 1e-6, Ms: 1e6, qualityFactor: 1 }), base * Math.sqrt(1.5), 1e-12)
  })
})

describe('single-domain radius', () => {
  it('When Nd2Fe14B inputs are used, then R_sd = 36√(AK)/(μ0Ms²) = 100.6 nm', () => {
    // METHODS.md check #53 [D; formula M, as in Coey 2010].
    within(singleDomainRadius({ A: 7.7e-12, K: 4.3e6, Ms: 1.28e6 }) * 1e9, 100.6, 1e-3)
    const sigma = wallEnergy(7.7e-12, 4.3e6)
    within(singleDomainRadius({ wallEnergy: sigma, Ms: 1.28e6 }), singleDomainRadius({ A: 7.7e-12, K: 4.3e6, Ms: 1.28e6 }), 1e-14)
  })
})

describe('invalid constants', () => {
  it('When a constant is zero, negative or not finite, then a RangeError names it', () => {
    expect(() => blochWallWidth(0, 1e4)).toThrow(/A must be/)
    expect(() => wallEnergy(1e-11, -4.5e3)).toThrow(/\|K1\|/)
    expect(() => exchangeLength(1e-11, Number.NaN)).toThrow(/Ms must be/)
    expect(() => kittelStripeWidth({ wallEnergy: 1e-3, thickness: 0, Ms: 1e6 })).toThrow(/thickness/)
    expect(() => qualityFactor(0, 1e6)).toThrow(RangeError)
  })
})
