import { describe, expect, it } from 'vitest'
import {
  formatLength,
  parseLength,
  pixelSizeFromScaleBar,
  pixelSizeFromTiffResolution,
} from '@shared/units/lengthUnits'

describe('parseLength', () => {
  it.each([
    ['12.5nm', 12.5],
    ['0.8um', 800],
    ['0.8µm', 800],
    ['0.8 μm', 800],
    ['1.2 mm', 1.2e6],
    ['3e-3mm', 3000],
    ['  10 µm ', 10_000],
    ['.5 NM', 0.5],
    ['2 cm', 2e7],
    ['250 pm', 0.25],
  ])('When "%s" is parsed, then it is %f nm', (text, nm) => {
    expect(parseLength(text)).toBeCloseTo(nm, 9)
  })

  it.each([
    ['', /empty/],
    ['12.5', /no unit/],
    ['12.5 parsec', /Unknown length unit "parsec"/],
    ['nm', /Cannot read a number/],
    ['-3 nm', /positive/],
    ['0 um', /positive/],
    ['1e999 nm', /positive/],
  ])('When "%s" is parsed, then a RangeError explains the problem', (text, message) => {
    expect(() => parseLength(text)).toThrow(RangeError)
    expect(() => parseLength(text)).toThrow(message)
  })
})

describe('formatLength', () => {
  it.each([
    [12.5, '12.5 nm'],
    [800, '800 nm'],
    [999.96, '1 µm'],
    [80, '80 nm'],
    [352_777.78, '352.8 µm'],
    [1.2e6, '1.2 mm'],
    [25.4e6, '25.4 mm'],
  ])('When %f nm is formatted, then it reads "%s"', (nm, text) => {
    expect(formatLength(nm)).toBe(text)
  })

  it('When the length is not finite, then "unknown" is shown instead of a number', () => {
    expect(formatLength(Number.NaN)).toBe('unknown')
    expect(formatLength(Infinity)).toBe('unknown')
  })

  it('When a formatted length is parsed again, then the value survives to the shown digits', () => {
    expect(parseLength(formatLength(76.58))).toBeCloseTo(76.58, 9)
    expect(parseLength(formatLength(12_345.6, 6))).toBeCloseTo(12_345.6, 6)
  })
})

describe('pixelSizeFromTiffResolution', () => {
  it('When XResolution is 10000/1 per centimetre, then the pixel is 1.000 µm and plausible', () => {
    // METHODS.md check #56 [D; tag semantics R, TIFF 6.0]: 10 mm / 10000 = 1 µm.
    const result = pixelSizeFromTiffResolution([10000, 1], 3)
    expect(result.pixelSizeNm).toBe(1000)
    expect(result.plausible).toBe(true)
    expect(result.reason).toBeUndefined()
  })

  it('When XResolution is 72/1 per inch, then 352.78 µm is returned and flagged as a placeholder', () => {
    // METHODS.md check #57 [D]: 25.4 mm / 72 = 352.78 µm, flagged as not physical.
    const result = pixelSizeFromTiffResolution([72, 1], 2)
    expect(result.pixelSizeNm! / 1000).toBeCloseTo(352.78, 2)
    expect(result.plausible).toBe(false)
    expect(result.reason).toMatch(/72 dpi/)
  })

  it.each([96, 300])('When the resolution is the %i dpi default, then it is flagged', (dpi) => {
    // METHODS.md §9.1 [P]: 72/96/300 dpi are placeholders of generic software.
    expect(pixelSizeFromTiffResolution([dpi, 1]).plausible).toBe(false)
  })

  it('When ResolutionUnit is 1, then there is no pixel size', () => {
    // METHODS.md §9.1 [R]: unit 1 = no absolute unit.
    const result = pixelSizeFromTiffResolution([10000, 1], 1)
    expect(result.pixelSizeNm).toBeNull()
    expect(result.plausible).toBe(false)
    expect(result.reason).toMatch(/no absolute unit/)
  })

  it('When the rational has a zero denominator or a zero numerator, then the size is null, not Infinity', () => {
    expect(pixelSizeFromTiffResolution([10000, 0], 3).pixelSizeNm).toBeNull()
    expect(pixelSizeFromTiffResolution([0, 1], 3).pixelSizeNm).toBeNull()
  })

  it('When XResolution and YResolution differ, then both pitches are given and the result is flagged', () => {
    const result = pixelSizeFromTiffResolution([20000, 1], 3, [10000, 1])
    expect(result.pixelSizeNm).toBe(500)
    expect(result.pixelSizeYNm).toBe(1000)
    expect(result.plausible).toBe(false)
    expect(pixelSizeFromTiffResolution([20000, 1], 3, [40000, 2]).plausible).toBe(true)
  })

  it('When the pitch is outside microscope scales, then it is flagged', () => {
    // 1 px per cm = 10 mm per pixel.
    expect(pixelSizeFromTiffResolution([1, 1], 3).plausible).toBe(false)
  })
})

describe('pixelSizeFromScaleBar', () => {
  it('When a 10 µm bar spans columns 200…324, then the pixel is 0.0800 µm', () => {
    // METHODS.md check #58 [D]: N = 324 − 200 + 1 = 125 px; 10 µm / 125 = 0.0800 µm; uncertainty ≈ 1/N.
    const result = pixelSizeFromScaleBar(parseLength('10 µm'), 324 - 200 + 1)
    expect(result.pixelSizeNm).toBe(80)
    expect(result.relativeUncertainty).toBeCloseTo(0.008, 12)
  })

  it('When the bar has zero pixels or a negative length, then nulls and a reason are returned', () => {
    expect(pixelSizeFromScaleBar(10_000, 0)).toMatchObject({ pixelSizeNm: null, relativeUncertainty: null })
    expect(pixelSizeFromScaleBar(-1, 100).reason).toMatch(/positive/)
  })
})
