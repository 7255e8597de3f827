/**
 * The per-frame sidecar CSV that goes with an uploaded stack: which field, temperature, pulse or time each frame has.
 *
 * Accepted headers (case-insensitive; `frame` first or anywhere; one quantity group per file):
 *   field:        frame,field_mT | frame,field_Oe | frame,field_A_per_m (also field_A/m)
 *   temperature:  frame,temperature_K | frame,temperature_C (converted: T/K = t/°C + 273.15, exact by definition of the
 *                 Celsius scale [R: SI Brochure, 9th ed., §2.3.1])
 *   motion:       frame,pulse_field_mT|_Oe|_A_per_m,pulse_duration_ns|_us|_µs|_ms|_s (durations stored in seconds)
 *   time:         frame,time_s (or time_ms)
 * Other columns are ignored with a note. Delimiter: comma, semicolon or tab (taken from the header line); with
 * semicolon or tab a decimal comma is accepted. Blank lines and lines starting with # are skipped.
 * Field values stay in the file's unit (`fieldUnit`), with μ0H in mT alongside (`fieldMT`, `pulseFieldMT`) through
 * convertField (1 Oe ↔ 0.1 mT, METHODS §9.3).
 * Frame numbers: 0-based like the reader's frames. A file whose numbers are all in 1..N with no 0 is read as 1-based
 * and shifted down by one (with a note); anything else must be 0..N−1. Every frame needs exactly one row.
 */
import { convertField, type FieldUnit } from '../units/magneticUnits'

export type FramesCsvKind = 'field' | 'temperature' | 'motion' | 'time'

export interface FramesCsvRow {
  /** Frame index as written in the file (0- or 1-based until validateFramesCsv; 0-based after). */
  frame: number
  /** 1-based line in the file, for messages. */
  line: number
  /** Applied field in `fieldUnit`. */
  field?: number
  /** Applied field as μ0H in mT. */
  fieldMT?: number
  temperatureK?: number
  /** Pulse amplitude in `fieldUnit`. */
  pulseField?: number
  /** Pulse amplitude as μ0H in mT. */
  pulseFieldMT?: number
  pulseDurationS?: number
  timeS?: number
}

export interface FramesCsv {
  kind: FramesCsvKind
  fieldUnit?: FieldUnit
  rows: FramesCsvRow[]
  /** What the reader ignored or converted, for the user to see. */
  notes: string[]
}

/** A validated table: one row per frame, 0-based, sorted by frame. */
export interface ValidatedFramesCsv extends FramesCsv {
  /** How the file numbered its frames. */
  frameBase: 0 | 1
}

/** Bad sidecar CSV; the message names the line (or the missing frames). */
export class FramesCsvError extends Error {
  readonly code = 'invalid-frames-csv'
  readonly status = 400
  /** 1-based line of the problem, when there is one. */
  readonly line: number | null

  constructor(message: string, line: number | null = null) {
    super(message)
    this.name = 'FramesCsvError'
    this.line = line
  }
}

/** More rows than any accepted stack has frames (DecodeLimits.maxFrames is 2000); bounds the work on hostile input. */
const MAX_ROWS = 100_000

type Quantity = 'field' | 'temperature' | 'pulseField' | 'pulseDuration' | 'time'

interface ColumnSpec {
  quantity: Quantity
  /** Multiply the value by this, then add `offset`, to get the stored unit (K, s); fields stay in their unit. */
  scale: number
  offset: number
  fieldUnit?: FieldUnit
}

const FIELD_SUFFIX: Record<string, FieldUnit> = { mt: 'mT', oe: 'Oe', a_per_m: 'A/m', 'a/m': 'A/m' }
const SECONDS_PER: Record<string, number> = { ns: 1e-9, us: 1e-6, 'µs': 1e-6, 'μs': 1e-6, ms: 1e-3, s: 1 }

function columnSpec(name: string): ColumnSpec | null {
  let match = /^field_(mt|oe|a_per_m|a\/m)$/.exec(name)
  if (match) return { quantity: 'field', scale: 1, offset: 0, fieldUnit: FIELD_SUFFIX[match[1]] }
  match = /^pulse_field_(mt|oe|a_per_m|a\/m)$/.exec(name)
  if (match) return { quantity: 'pulseField', scale: 1, offset: 0, fieldUnit: FIELD_SUFFIX[match[1]] }
  match = /^pulse_duration_(ns|us|µs|μs|ms|s)$/.exec(name)
  if (match) return { quantity: 'pulseDuration', scale: SECONDS_PER[match[1]], offset: 0 }
  if (name === 'temperature_k') return { quantity: 'temperature', scale: 1, offset: 0 }
  if (name === 'temperature_c') return { quantity: 'temperature', scale: 1, offset: 273.15 }
  if (name === 'time_s') return { quantity: 'time', scale: 1, offset: 0 }
  if (name === 'time_ms') return { quantity: 'time', scale: 1e-3, offset: 0 }
  return null
}

const KIND_OF: Record<Quantity, FramesCsvKind> = {
  field: 'field',
  temperature: 'temperature',
  pulseField: 'motion',
  pulseDuration: 'motion',
  time: 'time',
}

function splitLine(line: string, delimiter: string): string[] {
  return line.split(delimiter).map((cell) => cell.trim().replace(/^"(.*)"$/, '$1').trim())
}

function parseNumber(cell: string, decimalComma: boolean): number {
  const text = decimalComma ? cell.replace(',', '.') : cell
  // Number('') is 0 and Number('0x10') is 16; accept plain decimal notation only. The integer and fraction digits are
  // separate groups split by a required dot: with `\d+\.?\d*` a long digit run that fails to match is retried at
  // every split point, quadratic in its length (a 40 000-digit cell took seconds).
  if (!/^[+-]?(\d+(\.\d*)?|\.\d+)(e[+-]?\d+)?$/i.test(text)) return Number.NaN
  return Number(text)
}

/**
 * Parse the sidecar CSV text.
 * @throws FramesCsvError for an unknown or ambiguous header, missing cells, non-numeric or non-finite values,
 *   non-integer frame numbers, temperatures at or below 0 K and durations ≤ 0 (the message names the line).
 * @example parseFramesCsv('frame,field_Oe\n0,20\n1,-20').rows[1] // { frame: 1, line: 3, field: -20, fieldMT: -2 }
 */
export function parseFramesCsv(text: string): FramesCsv {
  const lines = text.replace(/^\uFEFF/, '').split(/\r\n|\n|\r/)
  const isContent = (line: string) => line.trim() !== '' && !line.trim().startsWith('#')
  const headerIndex = lines.findIndex(isContent)
  if (headerIndex === -1) throw new FramesCsvError('The frames CSV is empty; expected a header such as "frame,field_mT".')
  const headerLine = lines[headerIndex]
  const delimiter = headerLine.includes('\t') ? '\t' : headerLine.includes(';') ? ';' : ','
  const decimalComma = delimiter !== ','
  const names = splitLine(headerLine, delimiter).map((n) => n.toLowerCase())
  const headerAt = headerIndex + 1

  const frameColumn = names.indexOf('frame')
  if (frameColumn === -1) {
    throw new FramesCsvError(`Line ${headerAt}: the header has no "frame" column (found: ${names.join(', ')}).`, headerAt)
  }
  const notes: string[] = []
  const columns: { index: number; name: string; spec: ColumnSpec }[] = []
  names.forEach((name, index) => {
    if (index === frameColumn) return
    const spec = columnSpec(name)
    if (spec === null) notes.push(`column "${name}" ignored`)
    else columns.push({ index, name, spec })
  })
  const kinds = [...new Set(columns.map((c) => KIND_OF[c.spec.quantity]))]
  if (kinds.length === 0) {
    throw new FramesCsvError(
      `Line ${headerAt}: no known quantity column; use one of field_mT, field_Oe, field_A_per_m, temperature_K, ` +
        `temperature_C, pulse_field_mT with pulse_duration_ns (or _us, _ms), or time_s.`,
      headerAt,
    )
  }
  if (kinds.length > 1) {
    throw new FramesCsvError(`Line ${headerAt}: the columns mix ${kinds.join(' and ')}; give one kind of quantity per file.`, headerAt)
  }
  const kind = kinds[0]
  for (const quantity of new Set(columns.map((c) => c.spec.quantity))) {
    const same = columns.filter((c) => c.spec.quantity === quantity)
    if (same.length > 1) {
      throw new FramesCsvError(`Line ${headerAt}: ${same.map((c) => c.name).join(' and ')} give the same quantity twice.`, headerAt)
    }
  }
  if (kind === 'motion' && columns.length !== 2) {
    throw new FramesCsvError(`Line ${headerAt}: pulse files need both a pulse_field_… and a pulse_duration_… column.`, headerAt)
  }
  const fieldUnit = columns.find((c) => c.spec.fieldUnit !== undefined)?.spec.fieldUnit
  if (columns.some((c) => c.spec.quantity === 'temperature' && c.spec.offset !== 0)) {
    notes.push('temperatures converted from °C to K (+273.15)')
  }

  const rows: FramesCsvRow[] = []
  for (let i = headerIndex + 1; i < lines.length; i++) {
    if (!isContent(lines[i])) continue
    const lineNumber = i + 1
    if (rows.length >= MAX_ROWS) throw new FramesCsvError(`Line ${lineNumber}: the file has more than ${MAX_ROWS} rows.`, lineNumber)
    const cells = splitLine(lines[i], delimiter)
    const cellAt = (index: number, name: string): number => {
      const cell = cells[index]
      if (cell === undefined || cell === '') throw new FramesCsvError(`Line ${lineNumber}: the ${name} value is missing.`, lineNumber)
      const value = parseNumber(cell, decimalComma)
      if (!Number.isFinite(value)) throw new FramesCsvError(`Line ${lineNumber}: ${name} "${cell}" is not a number.`, lineNumber)
      return value
    }
    const frame = cellAt(frameColumn, 'frame')
    if (!Number.isInteger(frame) || frame < 0) {
      throw new FramesCsvError(`Line ${lineNumber}: frame "${cells[frameColumn]}" is not a whole number ≥ 0.`, lineNumber)
    }
    const row: FramesCsvRow = { frame, line: lineNumber }
    for (const { index, name, spec } of columns) {
      const value = cellAt(index, name) * spec.scale + spec.offset
      if (spec.quantity === 'field') {
        row.field = value
        row.fieldMT = convertField(value, spec.fieldUnit!, 'mT')
      } else if (spec.quantity === 'pulseField') {
        row.pulseField = value
        row.pulseFieldMT = convertField(value, spec.fieldUnit!, 'mT')
      } else if (spec.quantity === 'temperature') {
        if (!(value > 0)) throw new FramesCsvError(`Line ${lineNumber}: ${name} gives ${value} K, at or below absolute zero.`, lineNumber)
        row.temperatureK = value
      } else if (spec.quantity === 'pulseDuration') {
        if (!(value > 0)) throw new FramesCsvError(`Line ${lineNumber}: ${name} must be greater than 0.`, lineNumber)
        row.pulseDurationS = value
      } else {
        row.timeS = value
      }
    }
    rows.push(row)
  }
  if (rows.length === 0) throw new FramesCsvError('The frames CSV has a header but no data rows.')
  return fieldUnit !== undefined ? { kind, fieldUnit, rows, notes } : { kind, rows, notes }
}

/**
 * Check the parsed table against the stack's frame count and return it 0-based and sorted.
 * Rules: numbers finite, durations > 0, temperatures > 0 K; frame numbers unique; 0..N−1, or 1..N when no row says 0;
 * every frame has a row.
 * @throws FramesCsvError naming the line of the first problem (or the frames without a row).
 */
export function validateFramesCsv(parsed: FramesCsv, frameCount: number): ValidatedFramesCsv {
  const { rows } = parsed
  for (const row of rows) {
    const values = [row.frame, row.field, row.temperatureK, row.pulseField, row.pulseDurationS, row.timeS]
    if (values.some((v) => v !== undefined && !Number.isFinite(v))) {
      throw new FramesCsvError(`Line ${row.line}: a value is not a finite number.`, row.line)
    }
    if (row.pulseDurationS !== undefined && !(row.pulseDurationS > 0)) {
      throw new FramesCsvError(`Line ${row.line}: the pulse duration must be greater than 0.`, row.line)
    }
    if (row.temperatureK !== undefined && !(row.temperatureK > 0)) {
      throw new FramesCsvError(`Line ${row.line}: the temperature must be above 0 K.`, row.line)
    }
  }
  const seen = new Map<number, number>()
  for (const row of rows) {
    const earlier = seen.get(row.frame)
    if (earlier !== undefined) {
      throw new FramesCsvError(`Line ${row.line}: frame ${row.frame} already has a row (line ${earlier}).`, row.line)
    }
    seen.set(row.frame, row.line)
  }
  const frames = rows.map((r) => r.frame)
  const oneBased = frames.length > 0 && !seen.has(0) && frames.every((f) => f >= 1 && f <= frameCount)
  const base: 0 | 1 = oneBased ? 1 : 0
  for (const row of rows) {
    if (!Number.isInteger(row.frame) || row.frame - base < 0 || row.frame - base >= frameCount) {
      throw new FramesCsvError(
        `Line ${row.line}: frame ${row.frame} is outside the stack, which has ${frameCount} frame(s) numbered 0 to ${frameCount - 1}.`,
        row.line,
      )
    }
  }
  if (rows.length !== frameCount) {
    const missing: number[] = []
    for (let f = base; f < frameCount + base && missing.length < 10; f++) if (!seen.has(f)) missing.push(f)
    throw new FramesCsvError(
      `The frames CSV has ${rows.length} row(s) but the stack has ${frameCount} frame(s); no row for frame(s) ${missing.join(', ')}` +
        `${rows.length + missing.length < frameCount ? ', …' : ''}.`,
    )
  }
  const notes = [...parsed.notes]
  if (oneBased) notes.push(`frames numbered from 1 in the file; frame 1 is the first page (index 0)`)
  const shifted = rows.map((row) => ({ ...row, frame: row.frame - base })).sort((a, b) => a.frame - b.frame)
  return { ...parsed, rows: shifted, notes, frameBase: base }
}
