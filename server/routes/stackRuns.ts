import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import type { StackRunService } from '../services/stackRunService'
import type { ObjectStore } from '../storage/objectStore'

const RunSchema = z.object({
  id: z.number().int(),
  imageId: z.number().int(),
  recipe: z.record(z.string(), z.unknown()),
  engineVersion: z.string(),
  status: z.enum(['queued', 'running', 'done', 'done-with-errors', 'failed']),
  framesTotal: z.number().int(),
  framesDone: z.number().int(),
  threshold: z.number().nullable(),
  error: z.string().nullable(),
  createdAt: z.string(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
})
const DetailSchema = RunSchema.extend({
  frames: z.array(z.object({ index: z.number().int(), field: z.number().nullable(), fieldUnit: z.string().nullable(), temperatureK: z.number().nullable(), measurements: z.record(z.string(), z.unknown()).nullable(), error: z.string().nullable() })),
  loop: z.record(z.string(), z.unknown()).nullable(),
  curie: z.record(z.string(), z.unknown()).nullable(),
})

export function registerStackRunRoutes(api: ApiDefinition, runs: StackRunService, store: ObjectStore): void {
  apiRoute(api, {
    method: 'post',
    path: '/images/:imageId/stack-runs',
    summary: 'Process every frame of an image with one recipe in the background (segment, measure, loop, jumps, Curie fit)',
    tags: ['stacks'],
    access: 'signed-in',
    params: z.object({ imageId: z.coerce.number().int().positive() }),
    body: z.object({ recipe: z.record(z.string(), z.unknown()).default({}) }),
    responses: { 202: { description: 'Queued', schema: RunSchema }, 400: { description: 'Invalid recipe' }, 403: { description: 'Role may not run analyses' }, 404: { description: 'No such image' } },
    handler: async (req, res, { params, body }) => res.status(202).json(await runs.start(currentUser(req), params.imageId, body.recipe)),
  })
  apiRoute(api, {
    method: 'get',
    path: '/images/:imageId/stack-runs',
    summary: 'Stack runs of an image, newest first',
    tags: ['stacks'],
    access: 'signed-in',
    params: z.object({ imageId: z.coerce.number().int().positive() }),
    responses: { 200: { description: 'Runs', schema: z.array(RunSchema) }, 404: { description: 'No such image' } },
    handler: (req, _res, { params }) => runs.list(currentUser(req), params.imageId),
  })
  apiRoute(api, {
    method: 'get',
    path: '/stack-runs/:runId',
    summary: 'Progress and results of a stack run: per-frame measurements, the hysteresis loop with jumps, the Curie fit',
    tags: ['stacks'],
    access: 'signed-in',
    params: z.object({ runId: z.coerce.number().int().positive() }),
    responses: { 200: { description: 'The run', schema: DetailSchema }, 404: { description: 'No such run' } },
    handler: (req, _res, { params }) => runs.detail(currentUser(req), params.runId),
  })
  apiRoute(api, {
    method: 'get',
    path: '/stack-runs/:runId/frames/:index/mask',
    summary: 'The mask a stack run made for one frame (base64 of the RMSK run-length encoding)',
    tags: ['stacks'],
    access: 'signed-in',
    params: z.object({ runId: z.coerce.number().int().positive(), index: z.coerce.number().int().min(0) }),
    responses: { 200: { description: 'The mask', schema: z.object({ mask: z.string() }) }, 404: { description: 'No such run or frame' } },
    handler: async (req, _res, { params }) => ({ mask: await runs.frameMask(currentUser(req), params.runId, params.index, store) }),
  })
}
