/**
 * Conversions between Gaussian/cgs-emu and SI units for the magnetic quantities the product reports.
 *
 * Source: METHODS.md §9.3, after the IEEE/NBS "Units for magnetic properties" table and the Magnetics Society of Japan
 * table [R]; the rows for exchange stiffness A and wall energy σ follow from erg = 10⁻⁷ J and cm = 10⁻² m [D].
 * μ0 is taken as 4π×10⁻⁷ H/m, exact before the 2019 SI redefinition; the CODATA 2018 value 1.25663706212×10⁻⁶ H/m
 * differs by about 10⁻¹⁰ relative [M], far below any measurement this product handles.
 * Field units: 'mT' means μ0H in millitesla (what "a field of 10 mT" means in a lab), 'Oe' is H in oersted,
 * 'A/m' is H in SI. In air/vacuum 1 Oe ↔ μ0H = 0.1 mT; inside a magnet B ≠ μ0H [P].
 */

/** Vacuum permeability μ0 = 4π×10⁻⁷ H/m (exact before 2019; see the file header). */
export const MU0 = 4e-7 * Math.PI

/** Field units offered for display and input. */
export const FIELD_UNITS = ['mT', 'Oe', 'A/m'] as const
export type FieldUnit = (typeof FIELD_UNITS)[number]

/** 1 Oe = 10³/(4π) A/m = 79.5775 A/m (METHODS §9.3 [R]). */
export const AMPERE_PER_METRE_PER_OERSTED = 1000 / (4 * Math.PI)

/**
 * Size of one unit expressed in oersted. Going through oersted keeps the common Oe ↔ mT conversion exact in
 * binary floating point (factor 10), while A/m carries the 4π.
 */
const OERSTED_PER_UNIT: Record<FieldUnit, number> = {
  Oe: 1,
  mT: 10,
  'A/m': (4 * Math.PI) / 1000,
}

/**
 * Convert a magnetic field value between mT (μ0H), Oe and A/m.
 * Non-finite values pass through unchanged (NaN stays NaN) so a missing reading is not turned into a number.
 * @example convertField(22.5, 'Oe', 'A/m') // 1790.49
 * @example convertField(1, 'Oe', 'mT') // 0.1
 */
export function convertField(value: number, from: FieldUnit, to: FieldUnit): number {
  if (from === to) return value
  return (value * OERSTED_PER_UNIT[from]) / OERSTED_PER_UNIT[to]
}

/** Magnetization: 1 emu/cm³ = 10³ A/m. */
export function emuPerCm3ToAmperePerMetre(magnetization: number): number {
  return magnetization * 1e3
}

/** Magnetization: A/m → emu/cm³ (1 A/m = 10⁻³ emu/cm³). */
export function amperePerMetreToEmuPerCm3(magnetization: number): number {
  return magnetization * 1e-3
}

/** μ0M in tesla from M in A/m (e.g. Fe Ms = 1.71 MA/m → 2.149 T). */
export function magnetizationToTesla(magnetizationAperM: number): number {
  return MU0 * magnetizationAperM
}

/** 4πM in gauss from M in emu/cm³ (Fe: 1710 emu/cm³ → 21.49 kG). */
export function fourPiMGauss(magnetizationEmuPerCm3: number): number {
  return 4 * Math.PI * magnetizationEmuPerCm3
}

/** Energy density (anisotropy K): 1 erg/cm³ = 0.1 J/m³. */
export function ergPerCm3ToJoulePerM3(energyDensity: number): number {
  return energyDensity * 0.1
}

/** Energy density: J/m³ → erg/cm³ (1 J/m³ = 10 erg/cm³). */
export function joulePerM3ToErgPerCm3(energyDensity: number): number {
  return energyDensity * 10
}

/** Exchange stiffness A: 1 erg/cm = 10⁻⁵ J/m (10⁻⁶ erg/cm = 10 pJ/m). */
export function ergPerCmToJoulePerM(exchangeStiffness: number): number {
  return exchangeStiffness * 1e-5
}

/** Exchange stiffness A: J/m → erg/cm. */
export function joulePerMToErgPerCm(exchangeStiffness: number): number {
  return exchangeStiffness * 1e5
}

/** Wall energy σ: 1 erg/cm² = 10⁻³ J/m² (= 1 mJ/m²). */
export function ergPerCm2ToJoulePerM2(wallEnergy: number): number {
  return wallEnergy * 1e-3
}

/** Wall energy σ: J/m² → erg/cm². */
export function joulePerM2ToErgPerCm2(wallEnergy: number): number {
  return wallEnergy * 1e3
}
