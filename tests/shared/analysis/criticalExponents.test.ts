import { describe, expect, it } from 'vitest'
import { CRITICAL_EXPONENTS, UNIVERSALITY_CLASSES } from '@shared/analysis/criticalExponents'

describe('CRITICAL_EXPONENTS', () => {
  it('When the reference β values are read, then they are 0.5, 0.326419, 0.3486, 0.3689 and 0.125', () => {
    // METHODS.md check #45 [R]: mean field 1/2; 3-D Ising 0.326419 (conformal bootstrap, secondary table);
    // 3-D Heisenberg 0.3689(3) (Campostrini et al., arXiv:cond-mat/0110336); 2-D Ising 1/8 exactly; 3-D XY 0.3486 [M].
    expect(CRITICAL_EXPONENTS.meanField.beta).toBe(0.5)
    expect(CRITICAL_EXPONENTS.ising3d.beta).toBe(0.326419)
    expect(CRITICAL_EXPONENTS.xy3d.beta).toBe(0.3486)
    expect(CRITICAL_EXPONENTS.heisenberg3d.beta).toBe(0.3689)
    expect(CRITICAL_EXPONENTS.heisenberg3d.betaUncertainty).toBe(0.0003)
    expect(CRITICAL_EXPONENTS.ising2d.beta).toBe(1 / 8)
  })

  it('When sources are listed, then every class has one with its status tag, and 3-D XY is marked [M]', () => {
    for (const id of UNIVERSALITY_CLASSES) {
      expect(CRITICAL_EXPONENTS[id].id).toBe(id)
      expect(CRITICAL_EXPONENTS[id].source).toMatch(/\[(R|M)/)
    }
    expect(CRITICAL_EXPONENTS.xy3d.source).toBe('[M]')
  })
})
