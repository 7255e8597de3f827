/** Exports: measurements as CSV / XLSX, the latest mask as PNG, the data of a sample's report page. */
import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { AppError } from '../errors'
import type { ExportService } from '../services/exportService'
import type { MeasurementScope } from '../services/measuredFrames'

const ScopeQuery = z.object({
  imageId: z.coerce.number().int().positive().optional(),
  sampleId: z.coerce.number().int().positive().optional(),
  projectId: z.coerce.number().int().positive().optional(),
  /** Default false: approved analyses only. */
  includeDrafts: z.enum(['true', 'false']).default('false'),
})

function scopeOf(query: z.infer<typeof ScopeQuery>): MeasurementScope {
  const given = [query.imageId, query.sampleId, query.projectId].filter((v) => v !== undefined).length
  if (given !== 1) throw new AppError(400, 'invalid-input', 'Invalid query — give exactly one of imageId, sampleId, projectId.', { fields: { imageId: ['Give exactly one of imageId, sampleId, projectId.'] } })
  if (query.imageId !== undefined) return { imageId: query.imageId }
  if (query.sampleId !== undefined) return { sampleId: query.sampleId }
  return { projectId: query.projectId! }
}

const TABLE_NOTE =
  'one row per analysed frame, units in the headers, provenance columns (image SHA-256, recipe JSON, engine version, annotator, mask version, reviewer, approval time); missing measurements are empty cells, never 0; scope: exactly one of imageId, sampleId, projectId; includeDrafts=false by default (approved analyses only)'
const PersonSchema = z.object({ id: z.number().int(), name: z.string() }).nullable()
const ReportSchema = z.object({
  generatedAt: z.string(),
  generatedBy: z.object({ id: z.number().int(), name: z.string() }),
  includeDrafts: z.boolean(),
  engineVersion: z.string(),
  lab: z.object({ id: z.number().int(), name: z.string() }),
  project: z.object({ id: z.number().int(), name: z.string() }),
  sample: z.record(z.string(), z.unknown()),
  images: z.array(
    z.object({
      id: z.number().int(),
      name: z.string(),
      sha256: z.string(),
      technique: z.string(),
      width: z.number().int(),
      height: z.number().int(),
      frameCount: z.number().int(),
      pixelSizeNm: z.number().nullable(),
      acquiredAt: z.string().nullable(),
      frames: z.array(
        z.object({
          frameId: z.number().int(),
          index: z.number().int(),
          field: z.number().nullable(),
          fieldUnit: z.string().nullable(),
          fieldMT: z.number().nullable(),
          temperatureK: z.number().nullable(),
          analysis: z
            .object({
              id: z.number().int(),
              status: z.string(),
              statusLabel: z.string(),
              engineVersion: z.string(),
              recipe: z.record(z.string(), z.unknown()),
              annotationVersion: z.number().int().nullable(),
              annotator: PersonSchema,
              reviewer: PersonSchema,
              approvedAt: z.string().nullable(),
              measurements: z.record(z.string(), z.unknown()),
            })
            .nullable(),
        }),
      ),
      stackRun: z
        .object({
          id: z.number().int(),
          status: z.enum(['done', 'done-with-errors']),
          engineVersion: z.string(),
          recipe: z.record(z.string(), z.unknown()),
          finishedAt: z.string().nullable(),
          loop: z.record(z.string(), z.unknown()).nullable(),
          curie: z.record(z.string(), z.unknown()).nullable(),
        })
        .nullable(),
    }),
  ),
  approvals: z.array(
    z.object({ analysisId: z.number().int(), imageId: z.number().int(), imageName: z.string(), frameIndex: z.number().int(), reviewer: PersonSchema, approvedAt: z.string().nullable(), current: z.boolean() }),
  ),
})

export function registerExportRoutes(api: ApiDefinition, exportsService: ExportService): void {
  apiRoute(api, {
    method: 'get',
    path: '/exports/measurements.csv',
    summary: `Measurements as CSV (RFC 4180, UTF-8 with BOM; text cells starting with = + - @ are prefixed with an apostrophe against formula injection): ${TABLE_NOTE}`,
    tags: ['exports'],
    access: 'signed-in',
    query: ScopeQuery,
    responses: { 200: { description: 'The CSV file', schema: z.string(), contentType: 'text/csv' }, 403: { description: 'Role may not export' }, 404: { description: 'No such image, sample or project' } },
    handler: async (req, res, { query }) => {
      const { body, fileName } = await exportsService.measurementsCsv(currentUser(req), { scope: scopeOf(query), includeDrafts: query.includeDrafts === 'true' })
      res.type('text/csv; charset=utf-8').attachment(fileName).send(body)
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/exports/measurements.xlsx',
    summary: `Measurements as an XLSX workbook (sheets "Measurements" and "About" with export time, who exported, engine version): ${TABLE_NOTE}`,
    tags: ['exports'],
    access: 'signed-in',
    query: ScopeQuery,
    responses: {
      200: { description: 'The workbook', schema: z.string(), contentType: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet' },
      403: { description: 'Role may not export' },
      404: { description: 'No such image, sample or project' },
    },
    handler: async (req, res, { query }) => {
      const { body, fileName } = await exportsService.measurementsXlsx(currentUser(req), { scope: scopeOf(query), includeDrafts: query.includeDrafts === 'true' })
      res.type('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet').attachment(fileName).send(body)
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/frames/:frameId/annotations/latest/mask.png',
    summary: 'The latest saved mask of a frame as an 8-bit greyscale PNG the size of the image (up = 255, down = 0)',
    tags: ['exports'],
    access: 'signed-in',
    params: z.object({ frameId: z.coerce.number().int().positive() }),
    responses: { 200: { description: 'PNG', schema: z.string(), contentType: 'image/png' }, 404: { description: 'No such frame, or no saved mask' } },
    handler: async (req, res, { params }) => {
      const png = await exportsService.maskPng(currentUser(req), params.frameId)
      res.type('image/png').attachment(`mask-frame-${params.frameId}.png`).send(png)
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/samples/:sampleId/report',
    summary: 'Data of a sample\u2019s printable report: sample, images, per-frame measurements with provenance, stack-run summaries, approvals (includeDrafts=false by default)',
    tags: ['exports'],
    access: 'signed-in',
    params: z.object({ sampleId: z.coerce.number().int().positive() }),
    query: z.object({ includeDrafts: z.enum(['true', 'false']).default('false') }),
    responses: { 200: { description: 'The report', schema: ReportSchema }, 403: { description: 'Role may not export' }, 404: { description: 'No such sample' } },
    handler: (req, _res, { params, query }) => exportsService.sampleReport(currentUser(req), params.sampleId, query.includeDrafts === 'true'),
  })
}
