/**
 * Theory values for domain walls and domains from material constants, to compare with measured widths and periods.
 *
 * Formulas (METHODS §7.2): Bloch parameter Δ = √(A/K); wall width δ_B = π√(A/K) (Lilley width); 180° uniaxial wall
 * energy σ_w = 4√(AK), cubic K1 > 0 180° wall through an intermediate easy axis σ ≈ 2√(AK1) (two 90° walls) [D];
 * exchange length l_ex = √(2A/(μ0Ms²)) or √(A/(μ0Ms²)) — a factor √2, always stated (Abo et al. 2013, IEEE Trans.
 * Magn. 49:4937 [M]); quality factor Q = 2K/(μ0Ms²).
 * Kittel stripe domains (plate thickness t, easy axis normal to the plate, thin walls, Q ≫ 1, D ≪ t): minimising
 * σ_w·t/D + 2·e_ms with e_ms = (2/π³)(7ζ(3)/8)·μ0Ms²D per surface gives D = √(σ_w·t/(c·μ0Ms²)),
 * c = (4/π³)(7ζ(3)/8) = 0.13569 [D] (CGS: D = √(σ_w t/(1.705 Ms²)); C. Kittel (1949), "Physical theory of ferromagnetic
 * domains", Rev. Mod. Phys. 21:541, quotes D = (σ_w L/1.7 I_s²)^½ [from memory]). Finite Q: μ0Ms² → 2μ0Ms²/(1+μ*),
 * μ* = 1 + 1/Q [M]. The stripe period is λ = 2D. Not valid for ultrathin films (exponential regime).
 * Single-domain critical radius of a uniaxial sphere: R_sd = 9σ_w/(μ0Ms²) = 36√(AK)/(μ0Ms²) [M, as in J. M. D. Coey,
 * *Magnetism and Magnetic Materials*, CUP 2010]; soft materials form vortices instead (no closed form here).
 * Checked against: METHODS checks #47–#53 (Fe, Co, Ni, Nd2Fe14B walls; l_ex of Fe; Kittel D = 76.58 nm for
 * σ_w = 1 mJ/m², t = 1 µm, Ms = 1 MA/m; R_sd = 100.6 nm for Nd2Fe14B) [D].
 * Units: SI throughout — A in J/m, K in J/m³, Ms in A/m, lengths in m, σ in J/m². Invalid (non-positive or non-finite)
 * constants throw a RangeError naming the parameter: these are calculator inputs, not measured data.
 */
import { MU0 } from '../units/magneticUnits'

/** Apéry's constant ζ(3) [R: standard value]. */
const ZETA_3 = 1.2020569031595942

/** c in D = √(σ_w·t/(c·μ0Ms²)): (4/π³)(7ζ(3)/8) = 0.13569 (METHODS §7.2 [D]). */
export const KITTEL_STRIPE_CONSTANT = (4 / Math.PI ** 3) * ((7 * ZETA_3) / 8)

function requirePositive(name: string, value: number): void {
  if (!(value > 0) || !Number.isFinite(value)) {
    throw new RangeError(`${name} must be a positive finite number (got ${String(value)}).`)
  }
}

function requireAnisotropy(value: number): void {
  if (value < 0) throw new RangeError(`K must be > 0; for a negative cubic K1 use its magnitude |K1| (got ${value}).`)
  requirePositive('K', value)
}

/**
 * Bloch wall parameter Δ = √(A/K) in m (the w of a tanh(x/w) profile fit, METHODS §7.1).
 * @param A exchange stiffness, J/m. @param K anisotropy constant, J/m³ (> 0).
 */
export function blochWallParameter(A: number, K: number): number {
  requirePositive('A', A)
  requireAnisotropy(K)
  return Math.sqrt(A / K)
}

/**
 * Bloch wall width δ_B = π√(A/K) in m (Lilley width).
 * @example blochWallWidth(21e-12, 48e3) // 6.571e-8 (Fe, 65.71 nm)
 */
export function blochWallWidth(A: number, K: number): number {
  return Math.PI * blochWallParameter(A, K)
}

/**
 * Wall energy per unit area in J/m²: 4√(AK) for a 180° wall in a uniaxial material; 2√(AK1) for a 180° wall in a
 * cubic K1 > 0 material that splits into two 90° walls.
 * @example wallEnergy(21e-12, 48e3) // 4.016e-3 (Fe, uniaxial formula)
 */
export function wallEnergy(A: number, K: number, geometry: 'uniaxial' | 'cubic' = 'uniaxial'): number {
  requirePositive('A', A)
  requireAnisotropy(K)
  return (geometry === 'cubic' ? 2 : 4) * Math.sqrt(A * K)
}

/** Definition of the exchange length: √(2A/(μ0Ms²)) ('sqrt2A', preferred) or √(A/(μ0Ms²)) ('sqrtA'). */
export type ExchangeLengthForm = 'sqrt2A' | 'sqrtA'

/**
 * Exchange length in m.
 * @param A exchange stiffness, J/m. @param Ms saturation magnetization, A/m.
 * @example exchangeLength(21e-12, 1.71e6) // 3.381e-9 (Fe)
 */
export function exchangeLength(A: number, Ms: number, form: ExchangeLengthForm = 'sqrt2A'): number {
  requirePositive('A', A)
  requirePositive('Ms', Ms)
  return Math.sqrt(((form === 'sqrt2A' ? 2 : 1) * A) / (MU0 * Ms * Ms))
}

/** Quality factor Q = 2K/(μ0Ms²) (dimensionless); K in J/m³ (> 0), Ms in A/m. */
export function qualityFactor(K: number, Ms: number): number {
  requireAnisotropy(K)
  requirePositive('Ms', Ms)
  return (2 * K) / (MU0 * Ms * Ms)
}

/** μ0Ms², or 2μ0Ms²/(1 + μ*) with μ* = 1 + 1/Q when a finite Q is given (METHODS §7.2 [M]). */
function effectiveMagnetostatic(Ms: number, q: number | undefined): number {
  const base = MU0 * Ms * Ms
  if (q === undefined) return base
  requirePositive('qualityFactor', q)
  return (2 * base) / (2 + 1 / q)
}

/** Inputs of the Kittel stripe model, SI. */
export interface KittelStripeInput {
  /** σ_w, J/m². */
  wallEnergy: number
  /** Plate thickness t, m. */
  thickness: number
  /** Saturation magnetization, A/m. */
  Ms: number
  /** Finite Q correction (omit for Q ≫ 1). */
  qualityFactor?: number
}

/**
 * Kittel stripe-domain width D = √(σ_w·t/(0.1357·μ0Ms²)) in m; the period is 2D.
 * @example kittelStripeWidth({ wallEnergy: 1e-3, thickness: 1e-6, Ms: 1e6 }) // 7.658e-8 (76.58 nm)
 */
export function kittelStripeWidth(input: KittelStripeInput): number {
  requirePositive('wallEnergy', input.wallEnergy)
  requirePositive('thickness', input.thickness)
  requirePositive('Ms', input.Ms)
  const magnetostatic = effectiveMagnetostatic(input.Ms, input.qualityFactor)
  return Math.sqrt((input.wallEnergy * input.thickness) / (KITTEL_STRIPE_CONSTANT * magnetostatic))
}

/**
 * Wall energy σ_w = 0.1357·μ0Ms²·D²/t in J/m² inferred from a measured stripe width D (inverse of the Kittel model).
 * @param domainWidth D in m (half the period). @param thickness t in m. @param Ms A/m.
 */
export function wallEnergyFromStripeWidth(
  domainWidth: number,
  thickness: number,
  Ms: number,
  options: { qualityFactor?: number } = {},
): number {
  requirePositive('domainWidth', domainWidth)
  requirePositive('thickness', thickness)
  requirePositive('Ms', Ms)
  return (KITTEL_STRIPE_CONSTANT * effectiveMagnetostatic(Ms, options.qualityFactor) * domainWidth ** 2) / thickness
}

/** Inputs of {@link singleDomainRadius}: Ms with either σ_w or A and K. */
export type SingleDomainInput = { Ms: number } & ({ wallEnergy: number } | { A: number; K: number })

/**
 * Critical single-domain radius of a uniaxial sphere R_sd = 9σ_w/(μ0Ms²) in m (σ_w = 4√(AK) when A, K are given).
 * @example singleDomainRadius({ A: 7.7e-12, K: 4.3e6, Ms: 1.28e6 }) // 1.006e-7 (Nd2Fe14B, 100.6 nm)
 */
export function singleDomainRadius(input: SingleDomainInput): number {
  const sigma = 'wallEnergy' in input ? input.wallEnergy : wallEnergy(input.A, input.K)
  requirePositive('wallEnergy', sigma)
  requirePositive('Ms', input.Ms)
  return (9 * sigma) / (MU0 * input.Ms * input.Ms)
}
