/**
 * Exports: the measurements table as CSV or XLSX, a mask as PNG, and the data of a sample's report page.
 *
 * The table has one row per analysed frame (the counted analysis, server/services/measuredFrames.ts), units in the
 * headers, and provenance columns (image SHA-256, recipe, engine version, annotator, mask version, reviewer, approval
 * time). A measurement that does not exist (e.g. a width in nm without a pixel size) is an empty cell, never 0.
 *
 * CSV follows RFC 4180 (CRLF line ends; fields with a comma, quote, CR or LF quoted, quotes doubled), in UTF-8 with a
 * byte-order mark so spreadsheet programs read the µ and ⁻¹ of the headers. Spreadsheet formula injection (OWASP
 * "CSV Injection" [P]): a *text* cell that starts with = + - @, a tab or a carriage return gets a leading apostrophe,
 * so a sample named `=HYPERLINK(…)` is shown as text, not run. Number cells are written as numbers (a negative field
 * stays -5). XLSX cells are typed (exceljs writes strings as strings, never as formulas), so they need no prefix.
 */
import ExcelJS from 'exceljs'
import type { Sequelize } from 'sequelize'
import { ENGINE_VERSION } from '../../shared/analysis/engineVersion'
import { maskFromBase64 } from '../../shared/imageio/maskEncoding'
import { encodeGrayPng } from '../../shared/imageio/encodePng'
import { ANALYSIS_STATUS_LABELS } from '../../shared/types/review'
import type { ReportStackRunDto, SampleReportDto } from '../../shared/types/report'
import type { SessionUser } from '../auth/sessionUser'
import { Analysis, Frame, Project, User } from '../models'
import type { AnnotationService } from './annotationService'
import { recordAudit } from './auditService'
import { toSampleDto } from './projectService'
import { fieldInMilliTesla, resolveMeasurementScope, selectMeasuredFrames, selectStackSummaries, type MeasuredFrame, type MeasurementScope, type StackSummaryRow } from './measuredFrames'

type Cell = string | number | Date | null

interface ExportColumn {
  header: string
  kind: 'text' | 'number' | 'time'
  cell: (row: MeasuredFrame) => Cell
}

const measured = (key: keyof MeasuredFrame['measurements']) => (row: MeasuredFrame): Cell => {
  const value = row.measurements[key]
  return typeof value === 'number' && Number.isFinite(value) ? value : null
}

/** The columns of the measurements table, in order: what was imaged, what was measured, where it came from. */
export const MEASUREMENT_COLUMNS: readonly ExportColumn[] = [
  { header: 'image', kind: 'text', cell: (r) => r.image.name },
  { header: 'frame index', kind: 'number', cell: (r) => r.frame.index },
  { header: 'sample', kind: 'text', cell: (r) => r.sample?.name ?? null },
  { header: 'field (mT)', kind: 'number', cell: (r) => r.frame.fieldMT },
  { header: 'temperature (K)', kind: 'number', cell: (r) => r.frame.temperatureK },
  { header: 'status', kind: 'text', cell: (r) => r.status },
  { header: 'M/Ms', kind: 'number', cell: measured('magnetization') },
  { header: 'up fraction', kind: 'number', cell: measured('upFraction') },
  { header: 'mean width (nm)', kind: 'number', cell: measured('meanWidthNm') },
  { header: 'mean width (px)', kind: 'number', cell: measured('meanWidthPx') },
  { header: 'mean width std. error (px)', kind: 'number', cell: measured('meanWidthStdErrPx') },
  { header: 'period (nm)', kind: 'number', cell: measured('periodNm') },
  { header: 'period (px)', kind: 'number', cell: measured('periodPx') },
  { header: 'wall density (µm⁻¹)', kind: 'number', cell: measured('wallDensityPerUm') },
  { header: 'wall density (px⁻¹)', kind: 'number', cell: measured('wallDensityPerPx') },
  { header: 'domain count', kind: 'number', cell: measured('domainCount') },
  { header: 'mean up-domain diameter (px)', kind: 'number', cell: measured('meanUpDiameterPx') },
  { header: 'stripe orientation (°)', kind: 'number', cell: measured('orientationDeg') },
  { header: 'order parameter', kind: 'number', cell: measured('orderParameter') },
  { header: 'pixel size (nm)', kind: 'number', cell: measured('pixelSizeNm') },
  { header: 'image SHA-256', kind: 'text', cell: (r) => r.image.sha256 },
  { header: 'image id', kind: 'number', cell: (r) => r.image.id },
  { header: 'frame id', kind: 'number', cell: (r) => r.frame.id },
  { header: 'analysis id', kind: 'number', cell: (r) => r.analysisId },
  { header: 'field as recorded', kind: 'number', cell: (r) => r.frame.field },
  { header: 'field unit as recorded', kind: 'text', cell: (r) => r.frame.fieldUnit },
  { header: 'recipe (JSON)', kind: 'text', cell: (r) => JSON.stringify(r.recipe) },
  { header: 'engine version', kind: 'text', cell: (r) => r.engineVersion },
  { header: 'annotator', kind: 'text', cell: (r) => r.annotator?.name ?? null },
  { header: 'mask version', kind: 'number', cell: (r) => r.annotationVersion },
  { header: 'reviewer', kind: 'text', cell: (r) => r.reviewer?.name ?? null },
  { header: 'approval time (UTC)', kind: 'time', cell: (r) => r.approvedAt },
]

const FORMULA_START = /^[=+\-@\t\r]/

/** One CSV field per RFC 4180, with the formula-injection guard for text (see the file header). */
export function csvField(cell: Cell): string {
  if (cell === null) return ''
  if (typeof cell === 'number') return Number.isFinite(cell) ? String(cell) : ''
  let text = cell instanceof Date ? cell.toISOString() : cell
  if (typeof cell === 'string' && FORMULA_START.test(text)) text = `'${text}`
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text
}

/** Rows of cells → RFC 4180 text (CRLF after every record), with a UTF-8 byte-order mark. */
export function toCsv(rows: readonly (readonly Cell[])[]): string {
  return '\uFEFF' + rows.map((row) => row.map(csvField).join(',') + '\r\n').join('')
}

export interface ExportQuery {
  scope: MeasurementScope
  includeDrafts: boolean
}

function scopeName(scope: MeasurementScope): { kind: string; id: number } {
  if ('imageId' in scope) return { kind: 'image', id: scope.imageId }
  if ('sampleId' in scope) return { kind: 'sample', id: scope.sampleId }
  if ('projectId' in scope) return { kind: 'project', id: scope.projectId }
  return { kind: 'samples', id: scope.sampleIds[0] }
}

export function createExportService(deps: { sequelize: Sequelize; annotations: AnnotationService }) {
  const { sequelize, annotations } = deps

  async function table(user: SessionUser, query: ExportQuery, format: 'csv' | 'xlsx') {
    const scope = await resolveMeasurementScope(user, query.scope, 'export.tables')
    const rows = await selectMeasuredFrames(sequelize, scope.images, scope.samples, query.includeDrafts)
    const { kind, id } = scopeName(query.scope)
    await recordAudit({ labId: scope.labId, actorId: user.id, action: 'export.measurements', entityType: kind === 'samples' ? 'sample' : kind, entityId: id, after: { format, includeDrafts: query.includeDrafts, rows: rows.length } })
    const date = new Date().toISOString().slice(0, 10)
    return { scope, rows, fileStem: `remanence-measurements-${kind}-${id}-${date}` }
  }

  /** The measurements table as RFC 4180 CSV. */
  async function measurementsCsv(user: SessionUser, query: ExportQuery): Promise<{ body: string; fileName: string }> {
    const { rows, fileStem } = await table(user, query, 'csv')
    const body = toCsv([MEASUREMENT_COLUMNS.map((c) => c.header), ...rows.map((r) => MEASUREMENT_COLUMNS.map((c) => c.cell(r)))])
    return { body, fileName: `${fileStem}.csv` }
  }

  /** The measurements table as an XLSX workbook: a Measurements sheet and an About sheet with the provenance. */
  async function measurementsXlsx(user: SessionUser, query: ExportQuery): Promise<{ body: Buffer; fileName: string }> {
    const { scope, rows, fileStem } = await table(user, query, 'xlsx')
    const now = new Date()
    const workbook = new ExcelJS.Workbook()
    workbook.creator = 'Remanence'
    workbook.created = now
    const sheet = workbook.addWorksheet('Measurements', { views: [{ state: 'frozen', ySplit: 1 }] })
    sheet.columns = MEASUREMENT_COLUMNS.map((c) => ({ header: c.header, width: c.kind === 'text' ? 24 : c.kind === 'time' ? 22 : 14 }))
    sheet.getRow(1).font = { bold: true }
    for (const row of rows) sheet.addRow(MEASUREMENT_COLUMNS.map((c) => c.cell(row)))
    MEASUREMENT_COLUMNS.forEach((c, i) => {
      if (c.kind === 'time') sheet.getColumn(i + 1).numFmt = 'yyyy-mm-dd hh:mm:ss'
    })
    const about = workbook.addWorksheet('About')
    about.columns = [{ width: 28 }, { width: 80 }]
    const engineVersions = [...new Set(rows.map((r) => r.engineVersion))].sort()
    about.addRows([
      ['Exported from', 'Remanence'],
      ['Export time (UTC)', now.toISOString()],
      ['Exported by', `${user.name} <${user.email}>`],
      ['Lab', scope.lab.name],
      ['Scope', scope.description],
      ['Drafts included', query.includeDrafts ? 'yes (the status column tells which rows are approved)' : 'no: approved analyses only'],
      ['Rows', rows.length],
      ['Engine version of this server', ENGINE_VERSION],
      ['Engine versions of the rows', engineVersions.join(', ') || '(no rows)'],
      ['Units', 'In the column headers. field (mT) is μ0H converted from the recorded unit (kept in "field as recorded").'],
      ['Empty cells', 'The measurement does not exist for that frame (e.g. no pixel size for nm values); never a zero.'],
      ['Times', 'UTC.'],
    ])
    about.getColumn(1).font = { bold: true }
    const body = Buffer.from(await workbook.xlsx.writeBuffer())
    return { body, fileName: `${fileStem}.xlsx` }
  }

  /** The latest saved mask of a frame as an 8-bit greyscale PNG: up = 255, down = 0, same size as the image. */
  async function maskPng(user: SessionUser, frameId: number): Promise<Buffer> {
    const latest = await annotations.read(user, frameId, 'latest')
    const mask = maskFromBase64(latest.mask)
    const pixels = new Uint8Array(mask.data.length)
    for (let i = 0; i < pixels.length; i++) pixels[i] = mask.data[i] ? 255 : 0
    return Buffer.from(await encodeGrayPng({ width: mask.width, height: mask.height, data: pixels }))
  }

  function toRunDto(run: StackSummaryRow): ReportStackRunDto {
    return {
      id: run.runId,
      status: run.status,
      engineVersion: run.engineVersion,
      recipe: run.recipe,
      finishedAt: run.finishedAt ? new Date(run.finishedAt).toISOString() : null,
      loop: run.loop
        ? { fieldUnit: run.loop.fieldUnit, coerciveField: run.loop.coerciveField, exchangeBias: run.loop.exchangeBias, remanence: run.loop.remanence, squareness: run.loop.squareness, saturated: run.loop.saturated }
        : null,
      curie: run.curie ? { tc: run.curie.tc, tcStdErr: run.curie.tcStdErr, beta: run.curie.beta, betaStdErr: run.curie.betaStdErr, converged: run.curie.converged } : null,
    }
  }

  /** Everything a printed report of one sample shows: its images, per-frame measurements, stack summaries, approvals. */
  async function sampleReport(user: SessionUser, sampleId: number, includeDrafts: boolean): Promise<SampleReportDto> {
    const scope = await resolveMeasurementScope(user, { sampleId }, 'export.tables')
    const sample = scope.samples[0]
    const imageIds = scope.images.map((i) => i.id)
    const [project, rows, runs, frames] = await Promise.all([
      Project.findByPk(sample.projectId),
      selectMeasuredFrames(sequelize, scope.images, scope.samples, includeDrafts),
      selectStackSummaries(sequelize, scope.images, includeDrafts),
      Frame.findAll({ where: { imageId: imageIds }, order: [['imageId', 'ASC'], ['index', 'ASC']] }),
    ])
    const frameIds = frames.map((f) => f.id)
    const [approved, newest] = await Promise.all([
      Analysis.findAll({ where: { frameId: frameIds, status: 'approved' }, order: [['approvedAt', 'ASC']] }),
      Analysis.findAll({ attributes: ['frameId', [sequelize.fn('MAX', sequelize.col('id')), 'maxId']], where: { frameId: frameIds }, group: ['frameId'], raw: true }),
    ])
    const reviewers = await User.findAll({ where: { id: approved.map((a) => a.approvedById).filter((id): id is number => id != null) }, attributes: ['id', 'name'] })
    return {
      generatedAt: new Date().toISOString(),
      generatedBy: { id: user.id, name: user.name },
      includeDrafts,
      engineVersion: ENGINE_VERSION,
      lab: { id: scope.lab.id, name: scope.lab.name },
      project: { id: project!.id, name: project!.name },
      sample: toSampleDto(sample),
      images: scope.images.map((image) => {
        const run = runs.find((r) => r.imageId === image.id)
        return {
          id: image.id,
          name: image.name,
          sha256: image.sha256,
          technique: image.technique,
          width: image.width,
          height: image.height,
          frameCount: image.frameCount,
          coverFrameIndex: image.coverFrameIndex,
          pixelSizeNm: image.pixelSizeNm,
          acquiredAt: image.acquiredAt?.toISOString() ?? null,
          frames: frames
            .filter((f) => f.imageId === image.id)
            .map((f) => {
              const row = rows.find((r) => r.frame.id === f.id)
              return {
                frameId: f.id,
                index: f.index,
                field: f.field,
                fieldUnit: f.fieldUnit,
                fieldMT: fieldInMilliTesla(f.field, f.fieldUnit),
                temperatureK: f.temperatureK,
                analysis: row
                  ? {
                      id: row.analysisId,
                      status: row.status,
                      statusLabel: ANALYSIS_STATUS_LABELS[row.status],
                      engineVersion: row.engineVersion,
                      recipe: row.recipe,
                      annotationVersion: row.annotationVersion,
                      annotator: row.annotator,
                      reviewer: row.reviewer,
                      approvedAt: row.approvedAt ? new Date(row.approvedAt).toISOString() : null,
                      measurements: row.measurements,
                    }
                  : null,
              }
            }),
          stackRun: run ? toRunDto(run) : null,
        }
      }),
      approvals: approved.map((a) => {
        const frame = frames.find((f) => f.id === a.frameId)!
        const image = scope.images.find((i) => i.id === frame.imageId)!
        const reviewer = reviewers.find((u) => u.id === a.approvedById)
        const maxId = (newest as unknown as { frameId: number; maxId: number }[]).find((n) => n.frameId === a.frameId)?.maxId ?? a.id
        return { analysisId: a.id, imageId: image.id, imageName: image.name, frameIndex: frame.index, reviewer: reviewer ? { id: reviewer.id, name: reviewer.name } : null, approvedAt: a.approvedAt?.toISOString() ?? null, current: maxId === a.id }
      }),
    }
  }

  return { measurementsCsv, measurementsXlsx, maskPng, sampleReport }
}

export type ExportService = ReturnType<typeof createExportService>
