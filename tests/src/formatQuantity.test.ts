import { describe, expect, it } from 'vitest'
import { formatNumber, formatQuantity, formatWithStdErr } from '@/formatQuantity'

describe('formatNumber', () => {
  it.each([
    [0.081234, 3, '0.0812'],
    // No digit grouping: values copy into a notebook or spreadsheet unchanged.
    [1234.5, 3, '1230'],
    [1234.5, 6, '1234.5'],
    // True minus sign (U+2212), as typeset.
    [-0.412, 3, '−0.412'],
    // Powers of ten where fixed notation would show a row of zeros.
    [2.1e-6, 3, '2.1×10⁻⁶'],
    [4.1e6, 3, '4.1×10⁶'],
    [0, 3, '0'],
    [Number.NaN, 3, '—'],
    [null, 3, '—'],
  ])('When %s is shown with %s significant digits, then it reads "%s"', (value, digits, text) => {
    expect(formatNumber(value, digits)).toBe(text)
  })
})

describe('formatQuantity', () => {
  it('When a value has a unit, then they are separated by a space; an unknown value is a dash alone', () => {
    expect(formatQuantity(65.7132, 'nm')).toBe('65.71 nm')
    expect(formatQuantity(null, 'nm')).toBe('—')
  })
})

describe('formatWithStdErr', () => {
  // Rounding at the error's second significant digit, capped at the value's fourth [P].
  it.each([
    [12.437, 0.32, '12.44 ± 0.32'],
    [124.4, 32.1, '124 ± 32'],
    [1.4928, 0.0384, '1.493 ± 0.038'],
    [6.5916, 1e-9, '6.592 ± 0.000'],
    [0, 0.05, '0.000 ± 0.050'],
    [-0.4123, 0.021, '−0.412 ± 0.021'],
    [12.437, null, '12.44'],
    [12.437, 0, '12.44'],
    [0.4934, 0.00097, '0.4934 ± 0.0010'],
    // below 10⁻³ and from 10⁶ both share the larger one's power of ten (as formatNumber would write each)
    [4.934e-4, 9.7e-6, '(4.934 ± 0.097)×10⁻⁴'],
    [-2.5e-5, 3.1e-6, '(−2.50 ± 0.31)×10⁻⁵'],
    [4.1e6, 2.04e5, '(4.10 ± 0.20)×10⁶'],
    // an error larger than a tiny value sets the scale: no "(4 ± 200)×10⁻⁴"
    [4e-4, 0.02, '0.000 ± 0.020'],
  ])('When the value is %s and the error %s, then it reads "%s"', (value, stdErr, text) => {
    expect(formatWithStdErr(value, stdErr)).toBe(text)
  })

  it('When a unit is given, then it follows the pair, and an unknown value reads "—" alone', () => {
    expect(formatWithStdErr(0.4934, 0.00097, 'm/s')).toBe('0.4934 ± 0.0010 m/s')
    expect(formatWithStdErr(4.934e-4, 9.7e-6, 'm/s')).toBe('(4.934 ± 0.097)×10⁻⁴ m/s')
    expect(formatWithStdErr(2, null, 'px')).toBe('2 px')
    expect(formatWithStdErr(null, 1, 'm/s')).toBe('—')
    expect(formatWithStdErr(Number.NaN, 1, 'm/s')).toBe('—')
  })
})
