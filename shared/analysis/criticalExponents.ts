/**
 * Reference values of the order-parameter exponent β (M ∝ (1 − T/Tc)^β) for comparison with fitted exponents.
 *
 * Source: METHODS.md §6 and check #45, with its status tags: mean field 1/2 [R]; 3-D Ising 0.326419 (conformal
 * bootstrap) [R, secondary table]; 3-D XY 0.3486 [M]; 3-D Heisenberg 0.3689(3) (Campostrini et al.,
 * arXiv:cond-mat/0110336 [R]; Phys. Rev. B 65:144520 (2002) [M]); 2-D Ising 1/8 exactly (Onsager 1944, Yang 1952) [R].
 * Cautions (METHODS §6): Kerr is surface-weighted (surface critical behaviour differs from bulk [M]); thin films cross
 * over toward 2-D behaviour; the fitted β depends on the fit window (exact 2-D curve: 0.123 on [0.99, 0.999]Tc, 0.115
 * on [0.90, 0.999]Tc [D]).
 */

export const UNIVERSALITY_CLASSES = ['meanField', 'ising3d', 'xy3d', 'heisenberg3d', 'ising2d'] as const
export type UniversalityClass = (typeof UNIVERSALITY_CLASSES)[number]

/** A reference exponent with its source and status tag. */
export interface CriticalExponentReference {
  id: UniversalityClass
  name: string
  beta: number
  /** Quoted uncertainty of β (null for exact values or where none is quoted). */
  betaUncertainty: number | null
  source: string
}

/** β per universality class. */
export const CRITICAL_EXPONENTS: Record<UniversalityClass, CriticalExponentReference> = {
  meanField: { id: 'meanField', name: 'Mean field', beta: 0.5, betaUncertainty: null, source: 'exact (Landau theory) [R]' },
  ising3d: {
    id: 'ising3d',
    name: '3-D Ising',
    beta: 0.326419,
    betaUncertainty: null,
    source: 'conformal bootstrap [R, secondary table]',
  },
  xy3d: { id: 'xy3d', name: '3-D XY', beta: 0.3486, betaUncertainty: null, source: '[M]' },
  heisenberg3d: {
    id: 'heisenberg3d',
    name: '3-D Heisenberg',
    beta: 0.3689,
    betaUncertainty: 0.0003,
    source: 'Campostrini et al., arXiv:cond-mat/0110336 [R]; Phys. Rev. B 65:144520 (2002) [M]',
  },
  ising2d: {
    id: 'ising2d',
    name: '2-D Ising',
    beta: 0.125,
    betaUncertainty: null,
    source: 'exactly 1/8 (Onsager 1944; Yang 1952) [R]',
  },
}
