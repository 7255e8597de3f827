import { describe, expect, it } from 'vitest'
import { formatScaledLength, lengthScale } from '@/lengthScale'

describe('lengthScale', () => {
  it('When the image is not calibrated, then lengths stay in px (never a guessed nm)', () => {
    expect(lengthScale(null, 5000)).toEqual({ unit: 'px', perPx: 1 })
  })

  it('When the largest length reaches 1000 nm, then the unit is µm, below it nm', () => {
    expect(lengthScale(120, 8)).toEqual({ unit: 'nm', perPx: 120 })
    expect(lengthScale(120, 9)).toEqual({ unit: 'µm', perPx: 0.12 })
    // 12.44 px × 0.12 µm/px = 1.4928 µm, its error 0.32 × 0.12 = 0.0384 µm.
    expect(formatScaledLength(12.44, 0.32, lengthScale(120, 12.44))).toBe('1.493 ± 0.038 µm')
  })
})
