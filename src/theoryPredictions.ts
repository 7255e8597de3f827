/**
 * Theory values for a sample from its material constants and thickness (METHODS §7.2), in the units the theory panel
 * shows, with the reasons a formula does not apply. The formulas are those of shared/analysis/domainTheory.ts; this
 * module only picks inputs, converts units and says when a prediction is meaningless:
 * - K = 0 (soft materials, e.g. permalloy): no Bloch wall width or energy, no Kittel width;
 * - K < 0 (cubic K1 < 0, e.g. Ni): |K| is used, as METHODS §7.3 does;
 * - Q < 1: the Kittel model assumes Q ≫ 1 (magnetization held normal to the film), so its width is only indicative.
 */
import { blochWallParameter, blochWallWidth, exchangeLength, kittelStripeWidth, qualityFactor, wallEnergy, wallEnergyFromStripeWidth } from '@shared/analysis/domainTheory'

/** Constants in SI (Ms A/m, A J/m, K J/m³ signed, Tc K). */
export interface MaterialConstantsSI {
  msAPerM: number
  aJPerM: number
  kJPerM3: number
  tcK: number | null
  /** Cubic materials also get the 180° wall energy through an intermediate easy axis, 2√(AK1). */
  anisotropy: 'cubic' | 'uniaxial' | 'negligible' | 'unknown'
}

export interface TheoryPredictions {
  /** Δ = √(A/|K|), nm. */
  blochParameterNm: number | null
  /** δ_B = π√(A/|K|), nm. */
  blochWallWidthNm: number | null
  /** σ_w = 4√(A|K|), mJ/m² (numerically equal to erg/cm²). */
  wallEnergyMJPerM2: number | null
  /** σ ≈ 2√(A·K1) for cubic K1 > 0, mJ/m²; null otherwise. */
  cubicWallEnergyMJPerM2: number | null
  /** l_ex = √(2A/(μ0Ms²)), nm (the form used here). */
  exchangeLengthNm: number
  /** √(A/(μ0Ms²)), nm: the other textbook form, √2 smaller. */
  exchangeLengthSqrtANm: number
  /** Q = 2|K|/(μ0Ms²). */
  qualityFactor: number | null
  /** Kittel stripe width D for the sample's thickness, nm (Q ≫ 1 form); period 2D. */
  kittelWidthNm: number | null
  kittelPeriodNm: number | null
  /** Why a value is missing or to be read with care, in plain words. */
  notes: string[]
}

const NM = 1e9
const MJ = 1e3

/** Predictions for `material` in a film of `thicknessNm` (null when the thickness is not recorded). */
export function theoryPredictions(material: MaterialConstantsSI, thicknessNm: number | null): TheoryPredictions {
  const { msAPerM: ms, aJPerM: a } = material
  const k = Math.abs(material.kJPerM3)
  const notes: string[] = []
  if (material.kJPerM3 < 0) notes.push('K is negative (cubic K1 < 0): the wall formulas use |K|, as METHODS §7.3 does.')
  const hasK = k > 0
  if (!hasK) notes.push('K = 0: no Bloch wall width, wall energy or Kittel width — walls and domains are set by shape and induced anisotropy.')
  const q = hasK ? qualityFactor(k, ms) : null
  const sigma = hasK ? wallEnergy(a, k) : null
  let kittel: number | null = null
  if (sigma !== null && thicknessNm !== null && thicknessNm > 0) {
    kittel = kittelStripeWidth({ wallEnergy: sigma, thickness: thicknessNm / NM, Ms: ms })
    if (q !== null && q < 1) notes.push(`Q = ${q.toPrecision(2)} < 1: the Kittel model assumes Q ≫ 1 (magnetization normal to the film); read its width as indicative only.`)
  } else if (hasK && thicknessNm === null) {
    notes.push('The sample has no thickness recorded, so there is no Kittel width; add it on the project page.')
  }
  return {
    blochParameterNm: hasK ? blochWallParameter(a, k) * NM : null,
    blochWallWidthNm: hasK ? blochWallWidth(a, k) * NM : null,
    wallEnergyMJPerM2: sigma === null ? null : sigma * MJ,
    cubicWallEnergyMJPerM2: hasK && material.anisotropy === 'cubic' && material.kJPerM3 > 0 ? wallEnergy(a, k, 'cubic') * MJ : null,
    exchangeLengthNm: exchangeLength(a, ms) * NM,
    exchangeLengthSqrtANm: exchangeLength(a, ms, 'sqrtA') * NM,
    qualityFactor: q,
    kittelWidthNm: kittel === null ? null : kittel * NM,
    kittelPeriodNm: kittel === null ? null : 2 * kittel * NM,
    notes,
  }
}

/**
 * σ_w inferred from a measured stripe width D through the Kittel model, mJ/m² (METHODS §7.2, inverse form):
 * null when the width, thickness or Ms is missing.
 */
export function inferredWallEnergyMJPerM2(widthNm: number | null, thicknessNm: number | null, msAPerM: number): number | null {
  if (widthNm === null || thicknessNm === null || !(widthNm > 0) || !(thicknessNm > 0)) return null
  return wallEnergyFromStripeWidth(widthNm / NM, thicknessNm / NM, msAPerM) * MJ
}
