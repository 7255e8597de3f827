import { describe, expect, it } from 'vitest'
import { MATERIALS } from '@shared/analysis/materials'
import { inferredWallEnergyMJPerM2, theoryPredictions } from '@/theoryPredictions'
import { guessMaterialChoice, materialChoices } from '@/materialChoices'

const FE = { msAPerM: 1.71e6, aJPerM: 21e-12, kJPerM3: 48e3, tcK: 1043, anisotropy: 'cubic' as const }
const within = (actual: number | null, expected: number, relative: number) => {
  expect(actual).not.toBeNull()
  expect(Math.abs((actual as number) / expected - 1)).toBeLessThan(relative)
}

describe('theoryPredictions', () => {
  it('When given the Fe constants, then δ_B = 65.71 nm and σ_w = 4.016 mJ/m²', () => {
    // METHODS.md check #47 [D]: A = 21 pJ/m, K = 48 kJ/m³ (inputs §7.3: standard micromagnetic parameter sets [R,
    // secondary]) → δ_B = π√(A/K) = 65.71 nm, σ_w = 4√(AK) = 4.016 mJ/m², tolerance 0.1 %.
    const p = theoryPredictions(FE, null)
    within(p.blochWallWidthNm, 65.71, 1e-3)
    within(p.wallEnergyMJPerM2, 4.016, 1e-3)
    // METHODS.md §7.3 table [D]: Δ = 20.92 nm; cubic 180° wall 2√(AK1) = 2.008 mJ/m².
    within(p.blochParameterNm, 20.92, 1e-3)
    within(p.cubicWallEnergyMJPerM2, 2.008, 1e-3)
    // METHODS.md check #51 [D]: l_ex = 3.381 nm (√(2A/(μ0Ms²)) form), 2.391 nm (√(A/(μ0Ms²)) form).
    within(p.exchangeLengthNm, 3.381, 1e-3)
    within(p.exchangeLengthSqrtANm, 2.391, 1e-3)
  })

  it('When the built-in Fe entry is chosen, then the panel gets the same constants as METHODS §7.3', () => {
    const fe = materialChoices([]).find((c) => c.key === 'builtin:fe')!
    expect(fe.constants).toMatchObject({ msAPerM: MATERIALS.fe.Ms.value, aJPerM: 21e-12, kJPerM3: 48e3 })
    within(theoryPredictions(fe.constants, null).blochWallWidthNm, 65.71, 1e-3)
  })

  it('When σ_w = 1 mJ/m², t = 1 µm and Ms = 1 MA/m, then the Kittel width is 76.58 nm and inverting it gives σ_w back', () => {
    // METHODS.md check #52 [D]: D = √(σ_w·t/(0.1357·μ0Ms²)) = 76.58 nm. A and K chosen so that 4√(AK) = 1 mJ/m².
    const p = theoryPredictions({ msAPerM: 1e6, aJPerM: 1e-11, kJPerM3: 6250, tcK: null, anisotropy: 'uniaxial' }, 1000)
    within(p.wallEnergyMJPerM2, 1, 1e-12)
    within(p.kittelWidthNm, 76.58, 1e-3)
    within(p.kittelPeriodNm, 153.16, 1e-3)
    within(inferredWallEnergyMJPerM2(p.kittelWidthNm, 1000, 1e6), 1, 1e-12)
  })

  it('When K is zero (permalloy), then no wall or Kittel values are given and the note says why', () => {
    const py = materialChoices([]).find((c) => c.key === 'builtin:permalloy')!
    const p = theoryPredictions(py.constants, 50)
    expect(p.blochWallWidthNm).toBeNull()
    expect(p.kittelWidthNm).toBeNull()
    expect(p.notes.join(' ')).toContain('K = 0')
  })

  it('When K is negative (Ni), then |K| is used: δ_B = 140.5 nm, σ_w = 0.805 mJ/m²', () => {
    // METHODS.md check #49 [D]: A 9 pJ/m, |K1| 4.5 kJ/m³.
    const p = theoryPredictions({ msAPerM: 0.49e6, aJPerM: 9e-12, kJPerM3: -4.5e3, tcK: 628, anisotropy: 'cubic' }, null)
    within(p.blochWallWidthNm, 140.5, 1e-3)
    within(p.wallEnergyMJPerM2, 0.805, 1e-3)
    expect(p.cubicWallEnergyMJPerM2).toBeNull()
  })
})

describe('guessMaterialChoice', () => {
  it.each([
    ['Fe', 'builtin:fe'],
    ['iron', 'builtin:fe'],
    ['Ni80Fe20', 'builtin:permalloy'],
    ['Nd-Fe-B', 'builtin:nd2fe14b'],
    ['Ta/CoFeB/MgO', null],
  ])('When the sample material is "%s", then the choice is %s', (text, key) => {
    expect(guessMaterialChoice(text, materialChoices([]))?.key ?? null).toBe(key)
  })
})
