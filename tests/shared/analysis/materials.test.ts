import { describe, expect, it } from 'vitest'
import { MATERIALS, MATERIAL_IDS } from '@shared/analysis/materials'
import { magnetizationToTesla } from '@shared/units/magneticUnits'

describe('MATERIALS', () => {
  it('When every material is listed, then each constant carries an SI unit and a tagged source', () => {
    for (const id of MATERIAL_IDS) {
      const material = MATERIALS[id]
      expect(material.id).toBe(id)
      for (const constant of [material.Ms, material.K1, material.A, material.Tc]) {
        if (constant === null) continue
        expect(Number.isFinite(constant.value)).toBe(true)
        expect(constant.source).toMatch(/\[(R|M|D)[,:\]]/)
      }
    }
  })

  it('When the table values are read, then they are the METHODS §7.3 inputs', () => {
    // METHODS.md §7.3 table: Ms (MA/m), K1 (kJ/m³), A (pJ/m), Tc (K).
    const expected = {
      fe: [1.71, 48, 21, 1043],
      co: [1.44, 410, 30, 1388],
      ni: [0.49, -4.5, 9, 628],
      nd2fe14b: [1.28, 4300, 7.7, 585],
    } as const
    for (const [id, [ms, k1, a, tc]] of Object.entries(expected)) {
      const m = MATERIALS[id as keyof typeof expected]
      expect(m.Ms.value / 1e6).toBeCloseTo(ms, 12)
      expect(m.K1.value / 1e3).toBeCloseTo(k1, 12)
      expect(m.A.value * 1e12).toBeCloseTo(a, 12)
      expect(m.Tc!.value).toBe(tc)
    }
  })

  it('When μ0Ms is derived, then the §7.3 column (2.149, 1.810, 0.616, 1.608 T) is reproduced', () => {
    // METHODS.md §7.3 [D].
    expect(magnetizationToTesla(MATERIALS.fe.Ms.value)).toBeCloseTo(2.149, 3)
    expect(magnetizationToTesla(MATERIALS.co.Ms.value)).toBeCloseTo(1.81, 3)
    expect(magnetizationToTesla(MATERIALS.ni.Ms.value)).toBeCloseTo(0.616, 3)
    expect(magnetizationToTesla(MATERIALS.nd2fe14b.Ms.value)).toBeCloseTo(1.608, 3)
  })

  it('When the R/M tags of METHODS §7.3 are checked, then they are preserved per constant', () => {
    expect(MATERIALS.fe.Tc!.source).toMatch(/^\[R, secondary table/)
    expect(MATERIALS.fe.A.source).toMatch(/^\[R, secondary/)
    expect(MATERIALS.fe.Ms.source).toMatch(/^\[M: Cullity & Graham/)
    expect(MATERIALS.nd2fe14b.A.source).toBe('[M: Durst & Kronmüller 1986]')
    expect(MATERIALS.permalloy.Ms.source).toMatch(/\[M/)
  })
})
