/**
 * The segmentation recipe: every parameter that turns a frame into a domain mask. It is saved with each analysis so
 * anyone can reproduce the mask (same image + same recipe + same ENGINE_VERSION → same numbers).
 */

export const SEGMENTATION_METHODS = ['otsu', 'kmeans'] as const
export type SegmentationMethod = (typeof SEGMENTATION_METHODS)[number]

export const BACKGROUND_MODES = ['none', 'flatten', 'reference'] as const
export type BackgroundMode = (typeof BACKGROUND_MODES)[number]

export const DENOISE_MODES = ['none', 'median3', 'median5'] as const
export type DenoiseMode = (typeof DENOISE_MODES)[number]

export const CLEANUP_MODES = ['none', 'open', 'close', 'open-close'] as const
export type CleanupMode = (typeof CLEANUP_MODES)[number]

export interface AnalysisRecipe {
  /** Otsu (1979) on the intensity histogram, or k-means (Lloyd 1982) on intensity, local mean and local spread. */
  method: SegmentationMethod
  /** Classes for k-means; with 3, the brightest class is "up" and the other two "down". */
  kmeansClasses: 2 | 3
  /** Difference imaging against a reference frame, or subtraction of a large-scale Gaussian (flat-field). */
  background: BackgroundMode
  /** σ of the large-scale Gaussian for 'flatten', px. */
  flattenSigma: number
  /** Frame index of the domain-free reference for 'reference' (stacks; e.g. a saturated frame). */
  referenceFrame: number | null
  denoise: DenoiseMode
  /** Gaussian smoothing σ before thresholding, px (0 = none). */
  smoothingSigma: number
  /** Frame-to-frame drift correction by phase correlation against the first frame (stacks only). */
  registerFrames: boolean
  /** Morphological clean-up with a 3×3 square, applied to both phases alike. */
  cleanup: CleanupMode
  /** Down-phase holes not touching the border become up. */
  fillHoles: boolean
  /** Domains (of either phase) smaller than this many pixels are given to the surrounding phase. */
  minDomainArea: number
  /**
   * One threshold for the whole stack from the pooled histogram (right for field sweeps, whose saturated frames are
   * a single domain), or one per frame.
   */
  stackThreshold: 'stack-wide' | 'per-frame'
}

export const DEFAULT_RECIPE: AnalysisRecipe = {
  method: 'otsu',
  kmeansClasses: 2,
  // Kerr frames nearly always carry an illumination gradient; a flat-field is the safe default.
  background: 'flatten',
  flattenSigma: 40,
  referenceFrame: null,
  denoise: 'none',
  smoothingSigma: 1,
  registerFrames: false,
  cleanup: 'open-close',
  fillHoles: false,
  minDomainArea: 9,
  stackThreshold: 'stack-wide',
}

/** Fill in defaults and check ranges; throws a RangeError naming the bad parameter. */
export function normalizeRecipe(input: Partial<AnalysisRecipe> = {}): AnalysisRecipe {
  const recipe = { ...DEFAULT_RECIPE, ...Object.fromEntries(Object.entries(input).filter(([, v]) => v !== undefined)) } as AnalysisRecipe
  const fail = (name: string, why: string) => {
    throw new RangeError(`recipe.${name} ${why}`)
  }
  if (!SEGMENTATION_METHODS.includes(recipe.method)) fail('method', `must be one of ${SEGMENTATION_METHODS.join(', ')}`)
  if (recipe.kmeansClasses !== 2 && recipe.kmeansClasses !== 3) fail('kmeansClasses', 'must be 2 or 3')
  if (!BACKGROUND_MODES.includes(recipe.background)) fail('background', `must be one of ${BACKGROUND_MODES.join(', ')}`)
  if (!DENOISE_MODES.includes(recipe.denoise)) fail('denoise', `must be one of ${DENOISE_MODES.join(', ')}`)
  if (!CLEANUP_MODES.includes(recipe.cleanup)) fail('cleanup', `must be one of ${CLEANUP_MODES.join(', ')}`)
  if (!(recipe.smoothingSigma >= 0 && recipe.smoothingSigma <= 20)) fail('smoothingSigma', 'must be between 0 and 20 px')
  if (!(recipe.flattenSigma >= 2 && recipe.flattenSigma <= 500)) fail('flattenSigma', 'must be between 2 and 500 px')
  if (!(Number.isInteger(recipe.minDomainArea) && recipe.minDomainArea >= 0 && recipe.minDomainArea <= 1e6)) fail('minDomainArea', 'must be a whole number of pixels between 0 and 1,000,000')
  if (recipe.background === 'reference' && !(Number.isInteger(recipe.referenceFrame) && (recipe.referenceFrame as number) >= 0)) {
    fail('referenceFrame', "must be a frame index when background is 'reference'")
  }
  if (recipe.stackThreshold !== 'stack-wide' && recipe.stackThreshold !== 'per-frame') fail('stackThreshold', "must be 'stack-wide' or 'per-frame'")
  return recipe
}
