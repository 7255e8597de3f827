import { describe, expect, it } from 'vitest'
import { ISING_2D_CRITICAL_AMPLITUDE, ISING_2D_TC, onsagerMagnetization } from '@shared/analysis/isingExact'

describe('2-D Ising exact solution', () => {
  it('When J = k = 1, then kTc/J = 2/ln(1 + √2) = 2.269185314', () => {
    // METHODS.md check #40 [R]: Onsager 1944.
    expect(Math.abs(ISING_2D_TC - 2.269185314)).toBeLessThan(1e-9)
    // At Tc, sinh(2J/kTc) = 1 [D].
    expect(Math.sinh(2 / ISING_2D_TC)).toBeCloseTo(1, 14)
  })

  it.each([
    [2.0, 0.911319],
    [2.2, 0.784755],
    [1.5, 0.9865],
  ])('When T = %f, then M = %f (Onsager–Yang)', (t, m) => {
    // METHODS.md check #41 [R (formula) + D]: M = [1 − sinh(2/T)⁻⁴]^(1/8).
    expect(Math.abs(onsagerMagnetization(t) - m)).toBeLessThan(1e-6)
  })

  it('When T → Tc from below, then M/(1 − T/Tc)^(1/8) → 1.2224', () => {
    // METHODS.md check #42 [D]: amplitude (8√2·K_c)^(1/8).
    for (const t of [1e-5, 1e-6, 1e-7]) {
      const ratio = onsagerMagnetization(ISING_2D_TC * (1 - t)) / Math.pow(t, 1 / 8)
      expect(Math.abs(ratio - 1.2224)).toBeLessThan(1e-3)
    }
    expect(Math.abs(ISING_2D_CRITICAL_AMPLITUDE - 1.2224)).toBeLessThan(1e-3)
  })

  it('When J is scaled, then Tc and the curve scale with it', () => {
    expect(onsagerMagnetization(4.0, 2)).toBeCloseTo(onsagerMagnetization(2.0), 14)
  })

  it('When T is at or above Tc, zero, negative or J ≤ 0, then M is 0 or 1, never NaN', () => {
    expect(onsagerMagnetization(ISING_2D_TC)).toBe(0)
    expect(onsagerMagnetization(3)).toBe(0)
    expect(onsagerMagnetization(0)).toBe(1)
    expect(onsagerMagnetization(-1)).toBe(1)
    expect(onsagerMagnetization(1, 0)).toBe(0)
    expect(onsagerMagnetization(Number.NaN)).toBe(0)
    // M decreases monotonically with T below Tc.
    expect(onsagerMagnetization(1.9)).toBeGreaterThan(onsagerMagnetization(2.1))
  })
})
