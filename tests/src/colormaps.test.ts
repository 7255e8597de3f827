import { describe, expect, it } from 'vitest'
import { COLORMAPS, DEFAULT_DISPLAY, displayLut } from '@/colormaps'

/**
 * CIE 1976 L* of an 8-bit sRGB colour: sRGB decoding (IEC 61966-2-1: c ≤ 0.04045 ? c/12.92 : ((c+0.055)/1.055)^2.4),
 * relative luminance Y = 0.2126 R + 0.7152 G + 0.0722 B (Rec. 709 primaries, D65), L* = 116 f(Y) − 16 with
 * f(t) = t^(1/3) above (6/29)^3 and t/(3·(6/29)^2) + 4/29 below [R: sRGB and CIELAB definitions, from memory].
 */
function lightness(r: number, g: number, b: number): number {
  const linear = (c: number) => {
    const v = c / 255
    return v <= 0.04045 ? v / 12.92 : ((v + 0.055) / 1.055) ** 2.4
  }
  const y = 0.2126 * linear(r) + 0.7152 * linear(g) + 0.0722 * linear(b)
  const delta = 6 / 29
  const f = y > delta ** 3 ? Math.cbrt(y) : y / (3 * delta * delta) + 4 / 29
  return 116 * f - 16
}

function entry(table: Uint8ClampedArray, index: number): number[] {
  return [table[index * 3], table[index * 3 + 1], table[index * 3 + 2]]
}

describe('COLORMAPS.viridis', () => {
  const viridis = COLORMAPS.viridis

  it('When read at its ends and middle, then it gives the published viridis colours', () => {
    expect(viridis).toHaveLength(256 * 3)
    // [R] matplotlib _viridis_data entries 0, 128 and 255 (0.267004, 0.004874, 0.329415),
    // (0.127568, 0.566949, 0.550556), (0.993248, 0.906157, 0.143936) × 255, rounded: #440154, #21918c, #fde725.
    expect(entry(viridis, 0)).toEqual([68, 1, 84])
    expect(entry(viridis, 128)).toEqual([33, 145, 140])
    expect(entry(viridis, 255)).toEqual([253, 231, 37])
  })

  it.each([
    // [R]: matplotlib _viridis_data entries between the anchors (not used to build the table).
    { index: 4, published: [0.272594, 0.025563, 0.353093] },
    { index: 100, published: [0.166617, 0.463708, 0.558119] },
    { index: 196, published: [0.404001, 0.800275, 0.362552] },
    { index: 250, published: [0.945636, 0.899815, 0.112838] },
  ])('When read between anchors at $index, then it is within one 8-bit step of the published entry', ({ index, published }) => {
    const got = entry(viridis, index)
    published.forEach((channel, c) => expect(Math.abs(got[c] - channel * 255)).toBeLessThanOrEqual(1))
  })

  it('When walked from 0 to 255, then its lightness L* rises: over every four entries, and step by step up to rounding', () => {
    const values = Array.from({ length: 256 }, (_, i) => lightness(...(entry(viridis, i) as [number, number, number])))
    // Rounding to 8 bits can lower one channel of a step by a count: the published entries 94 → 95 rounded are
    // (45, 113, 142) → (44, 113, 142) [D], an L* dip of about 0.03. So single steps may dip by less than 0.15.
    for (let i = 1; i < 256; i++) expect(values[i], `L* at ${i - 1} → ${i}`).toBeGreaterThan(values[i - 1] - 0.15)
    for (let i = 4; i < 256; i++) expect(values[i], `L* at ${i - 4} → ${i}`).toBeGreaterThan(values[i - 4])
    // [D] the formula above applied to the published end colours by hand (Python 3): L*(#440154) = 14.90,
    // L*(#fde725) = 90.86.
    expect(values[0]).toBeCloseTo(14.9, 1)
    expect(values[255]).toBeCloseTo(90.86, 1)
  })
})

describe('displayLut', () => {
  it('When the settings are neutral, then grey maps every level to itself, opaque', () => {
    const lut = displayLut(DEFAULT_DISPLAY)
    for (const level of [0, 1, 77, 128, 254, 255]) expect([...lut.slice(level * 4, level * 4 + 4)]).toEqual([level, level, level, 255])
  })

  it.each([
    // [D] t' = clamp((t − ½)·c + ½ + b, 0, 1), out = round(t'^(1/γ)·255), for t = level/255.
    { settings: { brightness: 0, contrast: 3, gamma: 1 }, level: 100, expected: 45 },
    { settings: { brightness: 0, contrast: 3, gamma: 1 }, level: 200, expected: 255 },
    { settings: { brightness: 0.25, contrast: 1, gamma: 1 }, level: 100, expected: 164 },
    { settings: { brightness: 0, contrast: 1, gamma: 2 }, level: 128, expected: 181 },
    { settings: { brightness: -1, contrast: 1, gamma: 1 }, level: 255, expected: 0 },
  ])('When brightness $settings.brightness, contrast $settings.contrast, gamma $settings.gamma, then level $level shows as $expected', ({ settings, level, expected }) => {
    const lut = displayLut({ ...settings, colormap: 'grey' })
    expect(lut[level * 4]).toBe(expected)
  })

  it('When viridis is chosen, then the levels take its colours', () => {
    const lut = displayLut({ ...DEFAULT_DISPLAY, colormap: 'viridis' })
    expect([...lut.slice(0, 4)]).toEqual([68, 1, 84, 255])
    expect([...lut.slice(255 * 4, 256 * 4)]).toEqual([253, 231, 37, 255])
  })
})
