import { describe, expect, it } from 'vitest'
import { frameConditionLabel } from '@/frameConditionLabel'

describe('frameConditionLabel', () => {
  it('When a frame has a negative field, then it reads with a true minus sign in the unit it was recorded in', () => {
    expect(frameConditionLabel({ field: -20, fieldUnit: 'Oe', temperatureK: null })).toBe('−20 Oe')
    expect(frameConditionLabel({ field: -6, fieldUnit: 'mT', temperatureK: null })).toBe('−6 mT')
  })

  it('When a frame has a field and a temperature, then both are given, with a decimal point and no digit grouping', () => {
    expect(frameConditionLabel({ field: 12.5, fieldUnit: 'mT', temperatureK: 300 })).toBe('12.5 mT · 300 K')
    expect(frameConditionLabel({ field: 15915.5, fieldUnit: 'A/m', temperatureK: null })).toBe('15915.5 A/m')
  })

  it('When the field has no unit recorded, then the number stands alone; with neither condition, there is no label', () => {
    expect(frameConditionLabel({ field: 4, fieldUnit: null, temperatureK: null })).toBe('4')
    expect(frameConditionLabel({ field: null, fieldUnit: null, temperatureK: 412.35 })).toBe('412.35 K')
    expect(frameConditionLabel({ field: null, fieldUnit: null, temperatureK: null })).toBeNull()
  })
})
