import { describe, expect, it } from 'vitest'
import { FramesCsvError, parseFramesCsv, validateFramesCsv } from '../../../shared/imageio/framesCsv'

/** Run `fn` and return the FramesCsvError it throws (fails the test when it throws nothing or something else). */
function csvError(fn: () => unknown): FramesCsvError {
  try {
    fn()
  } catch (err) {
    expect(err).toBeInstanceOf(FramesCsvError)
    expect((err as FramesCsvError).code).toBe('invalid-frames-csv')
    return err as FramesCsvError
  }
  throw new Error('expected a FramesCsvError')
}

describe('parseFramesCsv: accepted files', () => {
  it('When the header is frame,field_mT, then the rows carry the field in mT', () => {
    const parsed = parseFramesCsv('frame,field_mT\n0,20\n1,-6.5\n2,1e1\n')
    expect(parsed.kind).toBe('field')
    expect(parsed.fieldUnit).toBe('mT')
    expect(parsed.rows.map((r) => [r.frame, r.field, r.fieldMT, r.line])).toEqual([
      [0, 20, 20, 2],
      [1, -6.5, -6.5, 3],
      [2, 10, 10, 4],
    ])
  })

  // METHODS.md §9.3 [R] (IEEE/NBS table): 1 Oe ↔ μ0H = 0.1 mT; 1 Oe = 79.5775 A/m, so 795.775 A/m ↔ 1 mT.
  it.each([
    ['field_Oe', 'Oe', 250, 25],
    ['field_A_per_m', 'A/m', 7957.747154594767, 10],
    ['FIELD_A/M', 'A/m', -795.7747154594767, -1],
  ])('When the header is frame,%s, then the unit is %s and fieldMT is converted', (column, unit, value, mT) => {
    const parsed = parseFramesCsv(`frame,${column}\n0,${value}\n`)
    expect(parsed.fieldUnit).toBe(unit)
    expect(parsed.rows[0].field).toBe(value)
    expect(parsed.rows[0].fieldMT).toBeCloseTo(mT, 9)
  })

  it('When the header is frame,temperature_C, then values are converted to kelvin (+273.15) with a note', () => {
    // SI Brochure §2.3.1 [R]: T/K = t/°C + 273.15.
    const parsed = parseFramesCsv('frame,temperature_C\n0,26.85\n1,-273\n')
    expect(parsed.kind).toBe('temperature')
    expect(parsed.rows[0].temperatureK).toBeCloseTo(300, 9)
    expect(parsed.rows[1].temperatureK).toBeCloseTo(0.15, 9)
    expect(parsed.notes.join(' ')).toContain('°C')
  })

  it('When the header is frame,temperature_K, then temperatures are taken as they are', () => {
    const parsed = parseFramesCsv('frame,temperature_K\n0,300\n1,305\n')
    expect(parsed.rows.map((r) => r.temperatureK)).toEqual([300, 305])
  })

  it.each([
    ['pulse_duration_ns', 20, 20e-9],
    ['pulse_duration_us', 2.5, 2.5e-6],
    ['pulse_duration_µs', 2.5, 2.5e-6],
    ['pulse_duration_ms', 1, 1e-3],
  ])('When the motion form uses %s, then durations are stored in seconds', (column, value, seconds) => {
    const parsed = parseFramesCsv(`frame,pulse_field_Oe,${column}\n0,150,${value}\n`)
    expect(parsed.kind).toBe('motion')
    expect(parsed.fieldUnit).toBe('Oe')
    expect(parsed.rows[0].pulseField).toBe(150)
    expect(parsed.rows[0].pulseFieldMT).toBeCloseTo(15, 12)
    expect(parsed.rows[0].pulseDurationS).toBeCloseTo(seconds, 18)
  })

  it('When the header is frame,time_s, then times are read in seconds', () => {
    const parsed = parseFramesCsv('frame,time_s\n0,0\n1,0.04\n')
    expect(parsed.kind).toBe('time')
    expect(parsed.rows.map((r) => r.timeS)).toEqual([0, 0.04])
  })

  it('When extra columns are present, then they are ignored with a note', () => {
    const parsed = parseFramesCsv('frame,field_mT,exposure_ms,comment\n0,1,50,ok\n')
    expect(parsed.rows[0]).toEqual({ frame: 0, line: 2, field: 1, fieldMT: 1 })
    expect(parsed.notes).toEqual(['column "exposure_ms" ignored', 'column "comment" ignored'])
  })

  it('When the file has a BOM, CRLF line ends, comments and blank lines, then they are skipped', () => {
    const parsed = parseFramesCsv('\uFEFF# sweep of 2024-06-11\r\nframe,field_mT\r\n\r\n0,1\r\n# pause\r\n1,2\r\n')
    expect(parsed.rows.map((r) => [r.frame, r.field, r.line])).toEqual([
      [0, 1, 4],
      [1, 2, 6],
    ])
  })

  it('When the delimiter is a semicolon, then a decimal comma is accepted', () => {
    const parsed = parseFramesCsv('frame;field_mT\n0;-2,5\n1;"3,0"\n')
    expect(parsed.rows.map((r) => r.field)).toEqual([-2.5, 3])
  })
})

describe('parseFramesCsv: rejected files', () => {
  it.each([
    ['an empty file', '', null],
    ['no frame column', 'index,field_mT\n0,1\n', 1],
    ['no quantity column', 'frame,exposure_ms\n0,1\n', 1],
    ['two kinds of quantity', 'frame,field_mT,temperature_K\n0,1,300\n', 1],
    ['the same quantity twice', 'frame,field_mT,field_Oe\n0,1,10\n', 1],
    ['a pulse field without a duration', 'frame,pulse_field_mT\n0,1\n', 1],
    ['a header and no rows', 'frame,field_mT\n', null],
    ['a non-numeric field', 'frame,field_mT\n0,1\n1,abc\n', 3],
    ['a missing cell', 'frame,field_mT\n0,1\n1,\n', 3],
    ['NaN', 'frame,field_mT\n0,NaN\n', 2],
    ['Infinity', 'frame,field_mT\n0,Infinity\n', 2],
    ['a hexadecimal number', 'frame,field_mT\n0,0x10\n', 2],
    ['a fractional frame number', 'frame,field_mT\n0.5,1\n', 2],
    ['a negative frame number', 'frame,field_mT\n-1,1\n', 2],
    ['a negative duration', 'frame,pulse_field_mT,pulse_duration_ns\n0,5,10\n1,5,-10\n', 3],
    ['a zero duration', 'frame,pulse_field_mT,pulse_duration_ns\n0,5,0\n', 2],
    ['a temperature below 0 K', 'frame,temperature_C\n0,-300\n', 2],
  ])('When the file has %s, then invalid-frames-csv naming line %s', (_, text, line) => {
    const error = csvError(() => parseFramesCsv(text))
    expect(error.line).toBe(line)
    if (line !== null) expect(error.message).toContain(`Line ${line}`)
  })
})

describe('validateFramesCsv', () => {
  it('When rows cover frames 0..N−1 in any order, then they come back sorted and 0-based', () => {
    const result = validateFramesCsv(parseFramesCsv('frame,field_mT\n2,-20\n0,20\n1,0\n'), 3)
    expect(result.frameBase).toBe(0)
    expect(result.rows.map((r) => [r.frame, r.field])).toEqual([
      [0, 20],
      [1, 0],
      [2, -20],
    ])
  })

  it('When rows are numbered 1..N with no 0, then they are read as 1-based and shifted, with a note', () => {
    const result = validateFramesCsv(parseFramesCsv('frame,temperature_K\n1,300\n2,310\n3,320\n'), 3)
    expect(result.frameBase).toBe(1)
    expect(result.rows.map((r) => [r.frame, r.temperatureK])).toEqual([
      [0, 300],
      [1, 310],
      [2, 320],
    ])
    expect(result.notes.join(' ')).toContain('numbered from 1')
  })

  it('When the CSV has fewer rows than the stack has frames, then the error lists the frames without a row', () => {
    const error = csvError(() => validateFramesCsv(parseFramesCsv('frame,field_mT\n0,1\n1,2\n'), 4))
    expect(error.message).toContain('2 row(s)')
    expect(error.message).toContain('4 frame(s)')
    expect(error.message).toContain('frame(s) 2, 3')
  })

  it('When the CSV has more rows than the stack has frames, then the error names the line outside the stack', () => {
    const error = csvError(() => validateFramesCsv(parseFramesCsv('frame,field_mT\n0,1\n1,2\n2,3\n'), 2))
    expect(error.line).toBe(4)
    expect(error.message).toContain('frame 2 is outside the stack')
  })

  it('When a frame appears twice, then the error names both lines', () => {
    const error = csvError(() => validateFramesCsv(parseFramesCsv('frame,field_mT\n0,1\n1,2\n1,3\n'), 3))
    expect(error.line).toBe(4)
    expect(error.message).toContain('line 3')
  })

  it('When 0 and N both appear, then the numbering is 0-based and N is outside the stack', () => {
    const error = csvError(() => validateFramesCsv(parseFramesCsv('frame,field_mT\n0,1\n1,2\n2,3\n3,4\n'), 3))
    expect(error.line).toBe(5)
  })

  it('When rows built elsewhere carry a non-finite value or a non-positive duration, then validation rejects them', () => {
    const notFinite = { kind: 'field' as const, fieldUnit: 'mT' as const, rows: [{ frame: 0, line: 2, field: Number.NaN }], notes: [] }
    expect(() => validateFramesCsv(notFinite, 1)).toThrow(FramesCsvError)
    const zeroPulse = { kind: 'motion' as const, rows: [{ frame: 0, line: 2, pulseField: 1, pulseDurationS: 0 }], notes: [] }
    expect(() => validateFramesCsv(zeroPulse, 1)).toThrow(/greater than 0/)
  })
})
