const formats = new Map<number, Intl.NumberFormat>()

/** A number for people with at most `digits` significant digits ("12.3", "0.0456", "1,230"); "—" when not finite. */
export function formatSignificant(value: number, digits = 3): string {
  if (!Number.isFinite(value)) return '—'
  let format = formats.get(digits)
  if (!format) {
    format = new Intl.NumberFormat('en', { maximumSignificantDigits: digits })
    formats.set(digits, format)
  }
  return format.format(value)
}

/**
 * A value with its standard error, both rounded at the error's second significant digit ("12.44 ± 0.32",
 * "124 ± 32") but never beyond the value's fourth significant digit, so a tiny error reads "6.592 ± 0.000" [P].
 * Without a usable error the value keeps 3 significant digits.
 */
export function formatWithStdErr(value: number, stdErr: number | null): string {
  if (stdErr === null || !(stdErr > 0) || !Number.isFinite(stdErr) || !Number.isFinite(value)) return formatSignificant(value)
  const fromError = 1 - Math.floor(Math.log10(stdErr))
  const fromValue = value === 0 ? fromError : 3 - Math.floor(Math.log10(Math.abs(value)))
  const decimals = Math.min(6, Math.max(0, Math.min(fromError, fromValue)))
  return `${value.toFixed(decimals)} ± ${stdErr.toFixed(decimals)}`
}
