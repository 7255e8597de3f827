/**
 * Lengths typed by users, pixel sizes from TIFF resolution tags and from scale bars; everything in nanometres.
 *
 * Sources: TIFF 6.0 XResolution (tag 282, RATIONAL, pixels per ResolutionUnit), YResolution (283) and ResolutionUnit
 * (296: 1 = no absolute unit, 2 = inch, the default, 3 = centimetre) [R: TIFF tag reference restating TIFF 6.0,
 * METHODS §9.1]; scale bar a = L_bar / N_bar with relative uncertainty ≈ 1/N_bar (METHODS §9.2 [P]).
 * Checked against: METHODS checks #56 (10000/1 per cm → 1.000 µm/px), #57 (72 dpi → 352.78 µm/px, flagged) and #58
 * (10 µm over 125 px → 0.0800 µm/px) [D].
 * Units accepted by parseLength: pm, nm, µm (also "um", Greek "μm", "micron"), mm, cm, m; case-insensitive.
 * Output: nanometres.
 */

const NM_PER_UNIT: Record<string, number> = {
  pm: 1e-3,
  nm: 1,
  um: 1e3,
  'µm': 1e3,
  'μm': 1e3,
  micron: 1e3,
  microns: 1e3,
  mm: 1e6,
  cm: 1e7,
  m: 1e9,
}

const LENGTH_PATTERN = /^([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:e[+-]?\d+)?)\s*(\S*)$/i

/**
 * Parse a length with its unit into nanometres.
 * @throws RangeError with a message fit to show the user when the text is empty, has no number or no unit, names an
 *   unknown unit, or the length is not a positive finite number.
 * @example parseLength('0.8 µm') // 800
 * @example parseLength('3e-3mm') // 3000
 */
export function parseLength(text: string): number {
  const trimmed = text.trim()
  if (trimmed === '') throw new RangeError('The length is empty; write e.g. "12.5 nm", "0.8 µm" or "1.2 mm".')
  const match = LENGTH_PATTERN.exec(trimmed)
  if (!match) throw new RangeError(`Cannot read a number followed by a unit in "${trimmed}" (e.g. "0.8 µm").`)
  const [, numberText, unitText] = match
  if (unitText === '') {
    throw new RangeError(`"${trimmed}" has no unit; write e.g. "${numberText} nm" or "${numberText} µm".`)
  }
  const factor = NM_PER_UNIT[unitText.toLowerCase()]
  if (factor === undefined) {
    throw new RangeError(`Unknown length unit "${unitText}" in "${trimmed}"; use nm, µm (or um), mm, cm or m.`)
  }
  const value = Number(numberText) * factor
  if (!(value > 0) || !Number.isFinite(value)) {
    throw new RangeError(`A length must be a positive number; got "${trimmed}".`)
  }
  return value
}

/**
 * Format nanometres with the unit that keeps the number between 1 and 1000 where possible (nm, µm, mm).
 * @param significantDigits digits kept (default 4), trailing zeros dropped.
 * @returns e.g. "12.5 nm", "352.8 µm", "1.2 mm"; "unknown" for a non-finite input, because a missing calibration
 *   must not read as a length.
 */
export function formatLength(nm: number, significantDigits = 4): string {
  if (!Number.isFinite(nm)) return 'unknown'
  const digits = Math.min(21, Math.max(1, Math.round(significantDigits)))
  const units: [string, number][] = [
    ['nm', 1],
    ['µm', 1e3],
    ['mm', 1e6],
  ]
  let index = 0
  while (index < units.length - 1 && Math.abs(nm) >= units[index + 1][1]) index++
  let rounded = Number((nm / units[index][1]).toPrecision(digits))
  // Rounding can carry into the next unit (999.96 nm → 1000 nm); show that as 1 µm instead.
  if (Math.abs(rounded) >= 1000 && index < units.length - 1) {
    index++
    rounded = Number((nm / units[index][1]).toPrecision(digits))
  }
  return `${rounded} ${units[index][0]}`
}

/** Pixel size read from TIFF resolution tags, with a plausibility verdict for the user to confirm. */
export interface TiffPixelSize {
  /** Pixel pitch along x in nm, or null when the tags carry no physical length. */
  pixelSizeNm: number | null
  /** Pixel pitch along y in nm when YResolution was given. */
  pixelSizeYNm?: number | null
  /** False for placeholders, unit 1, non-square pixels or pitches outside 0.1 nm … 50 µm. */
  plausible: boolean
  /** Why the value is not plausible (absent when plausible). */
  reason?: string
}

/** Resolutions (dots per inch) that generic software writes by default; not microscope calibrations [P]. */
const PLACEHOLDER_DPI = [72, 96, 150, 300, 600]

/** Pitch range that microscope images can have (sub-Å to coarse macro-Kerr overviews) [P]. */
const MIN_PLAUSIBLE_NM = 0.1
const MAX_PLAUSIBLE_NM = 50_000

function resolutionToPixelNm(resolution: readonly [number, number], unit: 2 | 3): number | null {
  const [numerator, denominator] = resolution
  const pixelsPerUnit = numerator / denominator
  if (!(pixelsPerUnit > 0) || !Number.isFinite(pixelsPerUnit)) return null
  return (unit === 2 ? 25.4e6 : 1e7) / pixelsPerUnit
}

/**
 * Pixel size from TIFF XResolution (and optionally YResolution) and ResolutionUnit.
 * @param xResolution the RATIONAL tag as [numerator, denominator], pixels per unit.
 * @param unit ResolutionUnit: 1 = none, 2 = inch (TIFF default when the tag is absent), 3 = centimetre.
 * @param yResolution optional YResolution; a different value marks the result as not plausible (non-square pixels).
 * @returns the pitch in nm (null for unit 1 or an invalid rational) and whether it looks like a real calibration.
 * @example pixelSizeFromTiffResolution([10000, 1], 3) // { pixelSizeNm: 1000, plausible: true }
 */
export function pixelSizeFromTiffResolution(
  xResolution: readonly [number, number],
  unit: 1 | 2 | 3 = 2,
  yResolution?: readonly [number, number],
): TiffPixelSize {
  if (unit === 1) {
    return {
      pixelSizeNm: null,
      plausible: false,
      reason: 'ResolutionUnit is 1 (no absolute unit): the resolution gives no physical pixel size.',
    }
  }
  if (unit !== 2 && unit !== 3) {
    return { pixelSizeNm: null, plausible: false, reason: `ResolutionUnit ${String(unit)} is not defined by TIFF 6.0.` }
  }
  const pixelSizeNm = resolutionToPixelNm(xResolution, unit)
  if (pixelSizeNm === null) {
    return { pixelSizeNm: null, plausible: false, reason: 'XResolution is zero, negative or not a number.' }
  }
  const pixelSizeYNm = yResolution ? resolutionToPixelNm(yResolution, unit) : undefined
  const result: TiffPixelSize = pixelSizeYNm === undefined ? { pixelSizeNm, plausible: true } : { pixelSizeNm, pixelSizeYNm, plausible: true }

  const dpi = unit === 2 ? xResolution[0] / xResolution[1] : null
  if (dpi !== null && PLACEHOLDER_DPI.some((p) => Math.abs(dpi - p) < 1e-9)) {
    return { ...result, plausible: false, reason: `${dpi} dpi is a default written by generic software, not a calibration.` }
  }
  if (pixelSizeYNm !== undefined && !(pixelSizeYNm !== null && Math.abs(pixelSizeYNm / pixelSizeNm - 1) < 1e-9)) {
    return { ...result, plausible: false, reason: 'XResolution and YResolution differ (non-square or inconsistent tags).' }
  }
  if (pixelSizeNm < MIN_PLAUSIBLE_NM || pixelSizeNm > MAX_PLAUSIBLE_NM) {
    return { ...result, plausible: false, reason: `A pixel of ${formatLength(pixelSizeNm)} is outside the range of microscope images.` }
  }
  return result
}

/** Pixel size from a scale bar, with its relative uncertainty. */
export interface ScaleBarPixelSize {
  /** L_bar / N_bar in nm per pixel; null for a non-positive length or pixel count. */
  pixelSizeNm: number | null
  /** ≈ 1/N_bar (one pixel of the bar's end-to-end length, METHODS §9.2 [P]); null with pixelSizeNm. */
  relativeUncertainty: number | null
  /** Why no value could be computed. */
  reason?: string
}

/**
 * Pixel size from a scale bar of known length.
 * @param lengthNm the bar's physical length in nm (e.g. from parseLength('10 µm')).
 * @param pixels the bar's length in pixels, end to end (last − first + 1) or the FWHM of an anti-aliased bar's profile.
 * @example pixelSizeFromScaleBar(10_000, 125).pixelSizeNm // 80
 */
export function pixelSizeFromScaleBar(lengthNm: number, pixels: number): ScaleBarPixelSize {
  // Zero, negative or non-finite inputs have no meaningful quotient: return nulls with the reason instead of NaN.
  if (!(lengthNm > 0) || !Number.isFinite(lengthNm)) {
    return { pixelSizeNm: null, relativeUncertainty: null, reason: 'The scale-bar length must be a positive number.' }
  }
  if (!(pixels > 0) || !Number.isFinite(pixels)) {
    return { pixelSizeNm: null, relativeUncertainty: null, reason: 'The scale bar must span a positive number of pixels.' }
  }
  return { pixelSizeNm: lengthNm / pixels, relativeUncertainty: 1 / pixels }
}
