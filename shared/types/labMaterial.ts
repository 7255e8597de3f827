/**
 * A lab's own material constants for the theory checks (METHODS §7.2), beside the built-in table
 * (shared/analysis/materials.ts). SI units, as the field names say; every row names where its numbers come from.
 */
export interface LabMaterialDto {
  id: number
  labId: number
  name: string
  /** Saturation magnetization Ms, A/m. */
  msAPerM: number
  /** Exchange stiffness A, J/m. */
  aJPerM: number
  /** Anisotropy constant K (K1, signed; the wall formulas use |K|), J/m³. */
  kJPerM3: number
  /** Curie temperature, K, when known. */
  tcK: number | null
  /** Where the numbers come from (paper, handbook, own measurement). */
  source: string
  createdAt: string
  updatedAt: string
}

/** What a person enters for a lab material; PATCH sends any subset. */
export type LabMaterialInput = Pick<LabMaterialDto, 'name' | 'msAPerM' | 'aJPerM' | 'kJPerM3' | 'tcK' | 'source'>
