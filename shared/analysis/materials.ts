/**
 * Room-temperature material constants for the theory checks (METHODS §7.3), each with its source and status tag.
 *
 * Values and source strings are those of METHODS.md §7.3 (status tags: [R] read in a source, "secondary" = a faithful
 * restatement; [M] from memory; [D] derived). Permalloy is added from memory (μMAG standard problem 4 parameters,
 * [M]). The formula checks built on these inputs (#47–#53) are exact for these inputs whatever the true constants are.
 * Units: SI — Ms in A/m, K1 in J/m³ (signed; wall formulas take |K1|), A in J/m, Tc in K.
 */

/** One constant with its SI unit and source. */
export interface MaterialConstant {
  value: number
  unit: 'A/m' | 'J/m³' | 'J/m' | 'K'
  /** Source with its METHODS status tag, e.g. "[R, secondary: …]" or "[M: …]". */
  source: string
}

export interface Material {
  id: MaterialId
  name: string
  structure: string
  anisotropy: 'cubic' | 'uniaxial' | 'negligible'
  Ms: MaterialConstant
  K1: MaterialConstant
  A: MaterialConstant
  /** Null where no value is known well enough. */
  Tc: MaterialConstant | null
  notes?: string
}

export const MATERIAL_IDS = ['fe', 'co', 'ni', 'nd2fe14b', 'permalloy'] as const
export type MaterialId = (typeof MATERIAL_IDS)[number]

const TC_SOURCE = '[R, secondary table citing Coey, Magnetism and Magnetic Materials, CUP 2010/2014]'
const PARAMETER_SET_SOURCE = '[R, secondary: standard micromagnetic parameter sets]'
const TEXTBOOK_SOURCE = '[M: Cullity & Graham, Introduction to Magnetic Materials, 2nd ed. 2009; Coey 2010]'
const ND_SUMMARY_SOURCE = '[R, secondary manufacturer summary]'
const PERMALLOY_SOURCE = '[M: μMAG standard problem 4 parameters, from memory]'

/** The constants table, keyed by id. */
export const MATERIALS: Record<MaterialId, Material> = {
  fe: {
    id: 'fe',
    name: 'Fe',
    structure: 'bcc',
    anisotropy: 'cubic',
    Ms: { value: 1.71e6, unit: 'A/m', source: TEXTBOOK_SOURCE },
    K1: { value: 48e3, unit: 'J/m³', source: PARAMETER_SET_SOURCE },
    A: { value: 21e-12, unit: 'J/m', source: PARAMETER_SET_SOURCE },
    Tc: { value: 1043, unit: 'K', source: TC_SOURCE },
    notes: 'Parameter sets also list Ms 1.70 MA/m. Cubic K1 > 0: a 180° wall splits into two 90° walls, σ ≈ 2√(AK1).',
  },
  co: {
    id: 'co',
    name: 'Co',
    structure: 'hcp',
    anisotropy: 'uniaxial',
    Ms: { value: 1.44e6, unit: 'A/m', source: TEXTBOOK_SOURCE },
    K1: { value: 410e3, unit: 'J/m³', source: TEXTBOOK_SOURCE },
    A: { value: 30e-12, unit: 'J/m', source: PARAMETER_SET_SOURCE },
    Tc: { value: 1388, unit: 'K', source: TC_SOURCE },
    notes: 'Parameter sets also list Ms 1.40 MA/m and K1 520 kJ/m³. Co is hcp only below ≈ 700 K.',
  },
  ni: {
    id: 'ni',
    name: 'Ni',
    structure: 'fcc',
    anisotropy: 'cubic',
    Ms: { value: 0.49e6, unit: 'A/m', source: '[M: METHODS §7.3 table value, no source named there]' },
    K1: { value: -4.5e3, unit: 'J/m³', source: TEXTBOOK_SOURCE },
    A: { value: 9e-12, unit: 'J/m', source: PARAMETER_SET_SOURCE },
    Tc: { value: 628, unit: 'K', source: TC_SOURCE },
    notes: 'K1 < 0: wall formulas use |K1|. Parameter sets also list K1 −5.7 kJ/m³.',
  },
  nd2fe14b: {
    id: 'nd2fe14b',
    name: 'Nd2Fe14B',
    structure: 'tetragonal',
    anisotropy: 'uniaxial',
    Ms: { value: 1.28e6, unit: 'A/m', source: `${ND_SUMMARY_SOURCE}: Js = 1.61 T ⇒ Ms = 1.281 MA/m` },
    K1: {
      value: 4.3e6,
      unit: 'J/m³',
      source: `${ND_SUMMARY_SOURCE}: K1 ≈ 4.2–4.3 MJ/m³; [M: Hirosawa et al. 1986 give K1 = 4.3 MJ/m³; Coey lists 4.9 MJ/m³]`,
    },
    A: { value: 7.7e-12, unit: 'J/m', source: '[M: Durst & Kronmüller 1986]' },
    Tc: { value: 585, unit: 'K', source: ND_SUMMARY_SOURCE },
  },
  permalloy: {
    id: 'permalloy',
    name: 'Permalloy Ni80Fe20',
    structure: 'fcc',
    anisotropy: 'negligible',
    Ms: { value: 8.0e5, unit: 'A/m', source: PERMALLOY_SOURCE },
    K1: { value: 0, unit: 'J/m³', source: `${PERMALLOY_SOURCE}; magnetocrystalline K1 ≈ 0 at this composition` },
    A: { value: 13e-12, unit: 'J/m', source: PERMALLOY_SOURCE },
    Tc: null,
    notes:
      'Soft: K1 ≈ 0, so Bloch-wall and Kittel formulas do not apply (walls and domains are set by shape and ' +
      'induced anisotropy). Tc ≈ 850 K is not known here well enough to tabulate [M].',
  },
}
