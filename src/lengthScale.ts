import { formatQuantity, formatWithStdErr } from './formatQuantity'

/**
 * The unit a length measured in pixels is shown in: px while the image is uncalibrated (never a guessed nanometre),
 * otherwise nm, or µm once the largest value shown reaches 1000 nm, so an axis or a value ± error shares one unit.
 */
export interface LengthScale {
  unit: 'px' | 'nm' | 'µm'
  /** Multiply a length in px by this to get it in `unit`. */
  perPx: number
}

/** @param largestPx the largest length that will be shown in this unit, px (e.g. an axis maximum or a mean). */
export function lengthScale(pixelSizeNm: number | null, largestPx: number): LengthScale {
  if (pixelSizeNm === null || !(pixelSizeNm > 0)) return { unit: 'px', perPx: 1 }
  return Math.abs(largestPx * pixelSizeNm) >= 1000 ? { unit: 'µm', perPx: pixelSizeNm / 1000 } : { unit: 'nm', perPx: pixelSizeNm }
}

/** A length in px shown in `scale`'s unit, with its standard error when there is one: "1.49 ± 0.04 µm". */
export function formatScaledLength(px: number, stdErrPx: number | null, scale: LengthScale): string {
  // Without an error, three digits as the pixel value beside it ("25.1 px, 3.01 µm").
  return stdErrPx === null ? formatQuantity(px * scale.perPx, scale.unit, 3) : formatWithStdErr(px * scale.perPx, stdErrPx * scale.perPx, scale.unit)
}
