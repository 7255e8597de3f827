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
    [12.437, null, '12.4'],
    [12.437, 0, '12.4'],
  ])('When the value is %s and the error %s, then it reads "%s"', (value, stdErr, text) => {
    expect(formatWithStdErr(value, stdErr)).toBe(text)
  })
})
