import type { AnalysisRecipe } from '@shared/analysis/recipe'

const CLEANUP_TEXT: Record<AnalysisRecipe['cleanup'], string> = { none: 'no clean-up', open: 'open', close: 'close', 'open-close': 'open + close' }

/**
 * A recipe in one line for people, leaving out the steps that are off:
 * "Otsu · flat-field σ 40 px · smoothing σ 1 px · open + close · domains ≥ 9 px".
 */
export function recipeSummary(recipe: AnalysisRecipe): string {
  const parts = [recipe.method === 'kmeans' ? `k-means (${recipe.kmeansClasses} classes)` : 'Otsu']
  if (recipe.background === 'flatten') parts.push(`flat-field σ ${recipe.flattenSigma} px`)
  if (recipe.background === 'reference') parts.push(`reference frame ${recipe.referenceFrame}`)
  if (recipe.denoise !== 'none') parts.push(recipe.denoise === 'median3' ? 'median 3 × 3' : 'median 5 × 5')
  if (recipe.smoothingSigma > 0) parts.push(`smoothing σ ${recipe.smoothingSigma} px`)
  parts.push(CLEANUP_TEXT[recipe.cleanup])
  if (recipe.fillHoles) parts.push('holes filled')
  if (recipe.minDomainArea > 1) parts.push(`domains ≥ ${recipe.minDomainArea} px`)
  if (recipe.registerFrames) parts.push('frames aligned')
  return parts.join(' · ')
}
