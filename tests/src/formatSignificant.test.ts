import { describe, expect, it } from 'vitest'
import { formatSignificant, formatWithStdErr } from '@/formatSignificant'
import { formatScaledLength, lengthScale } from '@/lengthScale'

describe('formatWithStdErr', () => {
  // Rounding at the error's second significant digit, capped at the value's fourth [P].
  it.each([
    [12.437, 0.32, '12.44 ± 0.32'],
    [124.4, 32.1, '124 ± 32'],
    [1.4928, 0.0384, '1.493 ± 0.038'],
    [6.5916, 1e-9, '6.592 ± 0.000'],
    [0, 0.05, '0.000 ± 0.050'],
    [12.437, null, '12.4'],
    [12.437, 0, '12.4'],
  ])('When the value is %s and the error %s, then it reads "%s"', (value, stdErr, text) => {
    expect(formatWithStdErr(value, stdErr)).toBe(text)
  })
})

describe('formatSignificant', () => {
  it.each([
    [0.081234, 3, '0.0812'],
    [1234.5, 3, '1,230'],
    [Number.NaN, 3, '—'],
  ])('When %s is shown with %s digits, then it reads "%s"', (value, digits, text) => {
    expect(formatSignificant(value, digits)).toBe(text)
  })
})

describe('lengthScale', () => {
  it('When the image is not calibrated, then lengths stay in px (never a guessed nm)', () => {
    expect(lengthScale(null, 5000)).toEqual({ unit: 'px', perPx: 1 })
  })

  it('When the largest length reaches 1000 nm, then the unit is µm, below it nm', () => {
    expect(lengthScale(120, 8)).toEqual({ unit: 'nm', perPx: 120 })
    expect(lengthScale(120, 9)).toEqual({ unit: 'µm', perPx: 0.12 })
    expect(formatScaledLength(12.44, 0.32, lengthScale(120, 12.44))).toBe('1.493 ± 0.038 µm')
  })
})
