import { z } from 'zod'
import type { Sequelize } from 'sequelize'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { sampleMeasurements } from '../services/sampleMeasurementService'

const nullableNumber = z.number().nullable()
const FrameSchema = z.object({
  analysisId: z.number().int(),
  imageId: z.number().int(),
  imageName: z.string(),
  frameIndex: z.number().int(),
  field: nullableNumber,
  fieldUnit: z.string().nullable(),
  temperatureK: nullableNumber,
  status: z.string(),
  createdAt: z.string(),
  pixelSizeNm: nullableNumber,
  magnetization: nullableNumber,
  meanWidthPx: nullableNumber,
  meanWidthNm: nullableNumber,
  periodPx: nullableNumber,
  periodNm: nullableNumber,
})
const RunSchema = z.object({
  runId: z.number().int(),
  imageId: z.number().int(),
  imageName: z.string(),
  status: z.enum(['queued', 'running', 'done', 'done-with-errors', 'failed']),
  framesTotal: z.number().int(),
  framesDone: z.number().int(),
  createdAt: z.string(),
  finishedAt: z.string().nullable(),
  pixelSizeNm: nullableNumber,
  framesMeasured: z.number().int(),
  nearZeroFrame: z
    .object({ index: z.number().int(), magnetization: z.number(), meanWidthPx: nullableNumber, meanWidthNm: nullableNumber, periodPx: nullableNumber, periodNm: nullableNumber })
    .nullable(),
  medianWidthPx: nullableNumber,
  medianWidthNm: nullableNumber,
  medianPeriodPx: nullableNumber,
  medianPeriodNm: nullableNumber,
  coerciveField: nullableNumber,
  fieldUnit: z.string().nullable(),
  tcK: nullableNumber,
  beta: nullableNumber,
})
const ResponseSchema = z.object({
  sample: z.record(z.string(), z.unknown()),
  labId: z.number().int(),
  projectName: z.string(),
  frames: z.array(FrameSchema),
  stackRuns: z.array(RunSchema),
})

export function registerSampleMeasurementRoutes(api: ApiDefinition, sequelize: Sequelize): void {
  apiRoute(api, {
    method: 'get',
    path: '/samples/:sampleId/measurements',
    summary: "A sample with the latest measurements of its images' frames and its stack-run summaries (for theory comparison)",
    tags: ['samples', 'theory'],
    access: 'signed-in',
    params: z.object({ sampleId: z.coerce.number().int().positive() }),
    responses: { 200: { description: 'The sample and its measurements', schema: ResponseSchema }, 404: { description: 'No such sample' } },
    handler: (req, _res, { params }) => sampleMeasurements(sequelize, currentUser(req), params.sampleId),
  })
}
