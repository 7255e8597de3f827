import { describe, expect, it } from 'vitest'
import {
  AMPERE_PER_METRE_PER_OERSTED,
  FIELD_UNITS,
  MU0,
  amperePerMetreToEmuPerCm3,
  convertField,
  emuPerCm3ToAmperePerMetre,
  ergPerCm2ToJoulePerM2,
  ergPerCm3ToJoulePerM3,
  ergPerCmToJoulePerM,
  fourPiMGauss,
  joulePerM2ToErgPerCm2,
  joulePerM3ToErgPerCm3,
  joulePerMToErgPerCm,
  magnetizationToTesla,
} from '@shared/units/magneticUnits'

const relClose = (actual: number, expected: number, rel: number) =>
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.abs(expected))

describe('convertField', () => {
  it('When 1 Oe is converted, then it is 79.5775 A/m and μ0H = 0.1 mT', () => {
    // METHODS.md check #59 [R]: IEEE/NBS "Units for magnetic properties" table, 1 Oe = 10³/(4π) A/m.
    relClose(convertField(1, 'Oe', 'A/m'), 79.5775, 1e-6)
    expect(convertField(1, 'Oe', 'mT')).toBe(0.1)
    // METHODS.md §9.3 [D]: 1 Oe → μ0H = 1.0000×10⁻⁴ T, computed from μ0·H in SI.
    relClose((MU0 * convertField(1, 'Oe', 'A/m')) / 1, 1e-4, 1e-12)
  })

  it('When the loop coercivity 22.5 Oe is converted, then 1790.49 A/m and 2.25 mT come out', () => {
    // METHODS.md check #33 [D]: 22.5 Oe = 22.5·10³/(4π) A/m = 1790.49 A/m (quoted to 2 decimals); μ0Hc = 2.25 mT.
    relClose(convertField(22.5, 'Oe', 'A/m'), (22.5 * 1000) / (4 * Math.PI), 1e-12)
    expect(convertField(22.5, 'Oe', 'A/m')).toBeCloseTo(1790.49, 2)
    relClose(convertField(22.5, 'Oe', 'mT'), 2.25, 1e-12)
    relClose(convertField(1790.4931, 'A/m', 'Oe'), 22.5, 1e-6)
  })

  it('When 10 mT and 1 kOe are converted, then 100 Oe and 100 mT (= 0.1 T) result', () => {
    // METHODS.md §9.3 table [R]: 1 kOe = 0.1 T; 10 mT = 100 Oe.
    expect(convertField(10, 'mT', 'Oe')).toBeCloseTo(100, 12)
    expect(convertField(1000, 'Oe', 'mT')).toBeCloseTo(100, 12)
  })

  it.each(FIELD_UNITS.flatMap((from) => FIELD_UNITS.map((to) => [from, to] as const)))(
    'When a field goes %s → %s → back, then it round-trips',
    (from, to) => {
      relClose(convertField(convertField(-37.25, from, to), to, from), -37.25, 1e-14)
    },
  )

  it('When the value is not finite, then it passes through unchanged', () => {
    expect(convertField(Number.NaN, 'Oe', 'A/m')).toBeNaN()
    expect(convertField(Infinity, 'mT', 'A/m')).toBe(Infinity)
    expect(AMPERE_PER_METRE_PER_OERSTED).toBeCloseTo(79.57747, 5)
  })
})

describe('CGS ↔ SI material quantities', () => {
  it('When Fe Ms 1710 emu/cm³ is converted, then 1.71 MA/m, μ0Ms 2.149 T and 4πMs 21.49 kG', () => {
    // METHODS.md check #60 [R + D]: 1 emu/cm³ = 10³ A/m; μ0M = 4π×10⁻⁷·1.71×10⁶ = 2.149 T; 4πM = 21.49 kG.
    relClose(emuPerCm3ToAmperePerMetre(1710), 1.71e6, 1e-12)
    relClose(magnetizationToTesla(1.71e6), 2.148849, 1e-6)
    expect(fourPiMGauss(1710) / 1000).toBeCloseTo(21.49, 2)
    relClose(amperePerMetreToEmuPerCm3(1.71e6), 1710, 1e-12)
  })

  it('When K, A and σ are converted, then the factors of the §9.3 table apply both ways', () => {
    // METHODS.md §9.3 [R for K; D for A and σ]: 1 erg/cm³ = 0.1 J/m³; 1 erg/cm = 10⁻⁵ J/m; 1 erg/cm² = 10⁻³ J/m².
    relClose(ergPerCm3ToJoulePerM3(4.8e5), 4.8e4, 1e-12)
    relClose(joulePerM3ToErgPerCm3(4.8e4), 4.8e5, 1e-12)
    // 10⁻⁶ erg/cm = 10 pJ/m (METHODS §9.3 [D]).
    relClose(ergPerCmToJoulePerM(1e-6), 10e-12, 1e-12)
    relClose(joulePerMToErgPerCm(21e-12), 2.1e-6, 1e-12)
    relClose(ergPerCm2ToJoulePerM2(4.016), 4.016e-3, 1e-12)
    relClose(joulePerM2ToErgPerCm2(1e-3), 1, 1e-12)
  })
})
