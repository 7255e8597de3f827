/**
 * Numbers with their unit for people: a fixed number of significant digits, no digit grouping (so values copy into a
 * notebook or spreadsheet unchanged), the unit after a space, and "—" for a value that is not known.
 */
const formats = new Map<number, Intl.NumberFormat>()
const SUPERSCRIPT: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' }

/** "10⁻⁴", "10⁶": a power of ten written with superscripts. */
const powerOfTen = (exponent: number) => `10${[...String(exponent)].map((c) => SUPERSCRIPT[c] ?? c).join('')}`

function formatWith(significantDigits: number): Intl.NumberFormat {
  let format = formats.get(significantDigits)
  if (!format) {
    format = new Intl.NumberFormat('en-US', { maximumSignificantDigits: significantDigits, useGrouping: false })
    formats.set(significantDigits, format)
  }
  return format
}

/** "65.71", "−22.5" (with a true minus sign), "—" for null or a non-finite value. */
export function formatNumber(value: number | null | undefined, significantDigits = 4): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—'
  // Powers of ten for values a fixed-point form would show as a long row of zeros (4.1×10⁶ erg/cm³, 2.1×10⁻⁶ erg/cm).
  const magnitude = Math.abs(value)
  if (magnitude !== 0 && (magnitude < 1e-3 || magnitude >= 1e6)) {
    const [mantissa, exponent] = value.toExponential(significantDigits - 1).split('e')
    const trimmed = mantissa.includes('.') ? mantissa.replace(/\.?0+$/, '') : mantissa
    return `${trimmed.replace(/^-/, '−')}×${powerOfTen(Number(exponent))}`
  }
  return formatWith(significantDigits).format(value).replace(/^-/, '−')
}

/** "65.71 nm"; "—" alone when the value is not known. */
export function formatQuantity(value: number | null | undefined, unit: string, significantDigits = 4): string {
  const number = formatNumber(value, significantDigits)
  return number === '—' || unit === '' ? number : `${number} ${unit}`
}

/**
 * A value with its standard error, both rounded at the error's second significant digit ("12.44 ± 0.32",
 * "124 ± 32") but never beyond the value's fourth significant digit, so a tiny error reads "6.592 ± 0.000" [P]. Where
 * the larger of the two would need a power of ten in `formatNumber` (below 10⁻³, from 10⁶), both share it:
 * "(4.934 ± 0.097)×10⁻⁴ m/s" [P]. Without a usable error the value reads as `formatNumber` writes it; "—" when the
 * value is not known. A negative value has a true minus sign.
 */
export function formatWithStdErr(value: number | null | undefined, stdErr: number | null | undefined, unit = ''): string {
  const withUnit = (text: string) => (unit === '' || text === '—' ? text : `${text} ${unit}`)
  if (value === null || value === undefined || !Number.isFinite(value)) return '—'
  if (stdErr === null || stdErr === undefined || !(stdErr > 0) || !Number.isFinite(stdErr)) return withUnit(formatNumber(value))
  const largest = Math.max(Math.abs(value), stdErr)
  const exponent = largest < 1e-3 || largest >= 1e6 ? Math.floor(Math.log10(largest)) : 0
  const [scaledValue, scaledError] = [value / 10 ** exponent, stdErr / 10 ** exponent]
  const fromError = 1 - Math.floor(Math.log10(scaledError))
  const fromValue = scaledValue === 0 ? fromError : 3 - Math.floor(Math.log10(Math.abs(scaledValue)))
  const decimals = Math.min(6, Math.max(0, Math.min(fromError, fromValue)))
  const pair = `${scaledValue.toFixed(decimals).replace(/^-/, '−')} ± ${scaledError.toFixed(decimals)}`
  return withUnit(exponent === 0 ? pair : `(${pair})×${powerOfTen(exponent)}`)
}
