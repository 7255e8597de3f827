import { describe, expect, it } from 'vitest'
import { areaFractions, magnetizationFromGrey, magnetizationFromMask } from '@shared/analysis/magnetization'

describe('magnetizationFromMask', () => {
  it('When 70 % of the analysed area is up, then M/Ms = 0.40', () => {
    // METHODS.md check #31 [D]: 2·A_A(up) − 1.
    const data = Uint8Array.from({ length: 100 }, (_, i) => (i < 70 ? 1 : 0))
    const mask = { width: 10, height: 10, data }
    expect(areaFractions(mask)).toEqual({ up: 0.7, down: 0.3, analysedPx: 100 })
    expect(magnetizationFromMask(mask)).toBeCloseTo(0.4, 12)
  })

  it('When pixels are ignored, then fractions are per analysed area', () => {
    // METHODS.md §0 [P]: every area fraction is per analysed area. 20 ignored down pixels: 70 up of 80.
    const data = Uint8Array.from({ length: 100 }, (_, i) => (i < 70 ? 1 : 0))
    const ignore = Uint8Array.from({ length: 100 }, (_, i) => (i >= 80 ? 1 : 0))
    const mask = { width: 10, height: 10, data, ignore }
    expect(areaFractions(mask).analysedPx).toBe(80)
    expect(magnetizationFromMask(mask)).toBeCloseTo(2 * (70 / 80) - 1, 12)
  })

  it('When nothing is analysed, then fractions and M/Ms are 0', () => {
    // METHODS.md §0 [P]: defined result, never NaN.
    const empty = { width: 0, height: 0, data: new Uint8Array(0) }
    expect(areaFractions(empty)).toEqual({ up: 0, down: 0, analysedPx: 0 })
    expect(magnetizationFromMask(empty)).toBe(0)
    expect(magnetizationFromMask({ width: 1, height: 1, data: new Uint8Array([1]), ignore: new Uint8Array([1]) })).toBe(0)
  })

  it('When the frame is saturated, then M/Ms = ±1', () => {
    expect(magnetizationFromMask({ width: 3, height: 3, data: new Uint8Array(9).fill(1) })).toBe(1)
    expect(magnetizationFromMask({ width: 3, height: 3, data: new Uint8Array(9) })).toBe(-1)
  })
})

describe('magnetizationFromGrey', () => {
  it('When I+ = 120, I− = 80 and I = 110, then m = 0.50', () => {
    // METHODS.md check #32 [D]: m = (2I − I+ − I−)/(I+ − I−).
    expect(magnetizationFromGrey({ width: 1, height: 1, data: new Float32Array([110]) }, 120, 80)).toBeCloseTo(0.5, 12)
  })

  it('When values lie beyond the references, then m is clipped to [−1, 1] before averaging', () => {
    const image = { width: 2, height: 1, data: new Uint16Array([200, 100]) }
    // 200 → 4 clipped to 1; 100 → 0.
    expect(magnetizationFromGrey(image, 120, 80)).toBeCloseTo(0.5, 12)
  })

  it('When the Kerr contrast is negative (I+ < I−), then the sign still follows the references', () => {
    expect(magnetizationFromGrey({ width: 1, height: 1, data: new Uint8Array([85]) }, 80, 120)).toBeCloseTo(0.75, 12)
  })

  it('When an ignore map is given, then ignored pixels do not count', () => {
    const image = { width: 2, height: 1, data: new Float32Array([120, 0]) }
    expect(magnetizationFromGrey(image, 120, 80, new Uint8Array([0, 1]))).toBe(1)
  })

  it('When the references are equal or nothing is analysed, then m = 0', () => {
    // METHODS.md §0 [P]: no contrast to scale by → defined 0 rather than NaN/Infinity.
    const image = { width: 1, height: 1, data: new Float32Array([110]) }
    expect(magnetizationFromGrey(image, 100, 100)).toBe(0)
    expect(magnetizationFromGrey(image, 120, 80, new Uint8Array([1]))).toBe(0)
  })
})
