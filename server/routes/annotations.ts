import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { AppError } from '../errors'
import { maskFromBase64, MaskEncodingError } from '../../shared/imageio/maskEncoding'
import { VersionConflictError, type AnnotationService } from '../services/annotationService'

const frameParams = z.object({ frameId: z.coerce.number().int().positive() })
const VersionSchema = z.object({
  id: z.number().int(),
  version: z.number().int().nullable(),
  state: z.enum(['saved', 'conflict']),
  basedOnVersion: z.number().int().nullable(),
  author: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  createdAt: z.string(),
})
const ShapeSchema = z.object({
  kind: z.enum(['wall-trace', 'polygon', 'calibration-line', 'probe-line']),
  points: z.array(z.number().finite()).max(200_000),
  phase: z.union([z.literal(0), z.literal(1)]).optional(),
  note: z.string().max(2000).optional(),
})
const AnnotationSchema = VersionSchema.extend({ frameId: z.number().int(), mask: z.string(), shapes: z.array(ShapeSchema) })
const AnalysisSchema = z.object({
  id: z.number().int(),
  frameId: z.number().int(),
  annotationId: z.number().int().nullable(),
  annotationVersion: z.number().int().nullable(),
  recipe: z.record(z.string(), z.unknown()),
  engineVersion: z.string(),
  status: z.string(),
  measurements: z.record(z.string(), z.unknown()).nullable(),
  distributions: z.record(z.string(), z.unknown()).nullable(),
  error: z.string().nullable(),
  createdAt: z.string(),
})
const SaveBody = z.object({
  baseVersion: z.number().int().min(0).nullable(),
  /** Base64 of the RMSK run-length mask (shared/imageio/maskEncoding.ts). */
  mask: z.string().min(1).max(40_000_000),
  shapes: z.array(ShapeSchema).max(10_000).default([]),
  recipe: z.record(z.string(), z.unknown()).default({}),
})
const QueueItemSchema = z.object({
  frameId: z.number().int(),
  imageId: z.number().int(),
  imageName: z.string(),
  frameIndex: z.number().int(),
  frameCount: z.number().int(),
  field: z.number().nullable(),
  fieldUnit: z.string().nullable(),
  temperatureK: z.number().nullable(),
  status: z.string(),
  assignee: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  projectId: z.number().int(),
  projectName: z.string(),
  latestVersion: z.number().int().nullable(),
  updatedAt: z.string(),
})

function decodeMaskOr400(text: string) {
  try {
    return maskFromBase64(text)
  } catch (err) {
    if (err instanceof MaskEncodingError) throw new AppError(400, 'invalid-mask', `The mask could not be read: ${err.message}.`)
    throw err
  }
}

export function registerAnnotationRoutes(api: ApiDefinition, annotations: AnnotationService): void {
  apiRoute(api, {
    method: 'post',
    path: '/frames/:frameId/annotations',
    summary: 'Save a mask as a new version (optimistic: 409 with a kept conflict copy when baseVersion is out of date); recomputes the measurements',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams,
    body: SaveBody,
    responses: {
      201: { description: 'Saved, with the new draft analysis', schema: z.object({ annotation: VersionSchema, analysis: AnalysisSchema }) },
      400: { description: 'Invalid mask, size mismatch or recipe' },
      403: { description: 'Role may not edit masks' },
      404: { description: 'No such frame' },
      409: { description: 'Out-of-date base version; the edit is kept as a conflict copy', schema: z.object({ error: z.object({ code: z.string(), message: z.string() }), latestVersion: z.number().int(), conflictCopy: VersionSchema }) },
    },
    handler: async (req, res, { params, body }) => {
      try {
        const result = await annotations.save(currentUser(req), params.frameId, { baseVersion: body.baseVersion, mask: decodeMaskOr400(body.mask), shapes: body.shapes, recipe: body.recipe })
        res.status(201).json(result)
      } catch (err) {
        if (!(err instanceof VersionConflictError)) throw err
        res.status(409).json({ error: { code: err.code, message: err.message }, latestVersion: err.latestVersion, conflictCopy: err.conflictCopy })
      }
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/frames/:frameId/annotations',
    summary: 'Version history of a frame\u2019s mask (saved versions and conflict copies), newest first',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams,
    responses: { 200: { description: 'Versions', schema: z.array(VersionSchema) }, 404: { description: 'No such frame' } },
    handler: (req, _res, { params }) => annotations.versions(currentUser(req), params.frameId),
  })

  apiRoute(api, {
    method: 'get',
    path: '/frames/:frameId/annotations/latest',
    summary: 'The latest saved mask of a frame',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams,
    responses: { 200: { description: 'The mask', schema: AnnotationSchema }, 404: { description: 'No saved mask yet' } },
    handler: (req, _res, { params }) => annotations.read(currentUser(req), params.frameId, 'latest'),
  })

  apiRoute(api, {
    method: 'get',
    path: '/frames/:frameId/annotations/:version',
    summary: 'One saved version of the mask (or a conflict copy with ?copy=<id>)',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams.extend({ version: z.coerce.number().int().min(0) }),
    query: z.object({ copy: z.coerce.number().int().positive().optional() }),
    responses: { 200: { description: 'The mask', schema: AnnotationSchema }, 404: { description: 'No such version' } },
    handler: (req, _res, { params, query }) => annotations.read(currentUser(req), params.frameId, query.copy ? { id: query.copy } : { version: params.version }),
  })

  apiRoute(api, {
    method: 'post',
    path: '/frames/:frameId/annotations/:version/restore',
    summary: 'Restore an older version by saving it again as the newest version',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams.extend({ version: z.coerce.number().int().min(1) }),
    body: z.object({ baseVersion: z.number().int().min(0).nullable() }),
    responses: { 201: { description: 'Restored as a new version', schema: z.object({ annotation: VersionSchema, analysis: AnalysisSchema }) }, 409: { description: 'Out-of-date base version' } },
    handler: async (req, res, { params, body }) => {
      try {
        res.status(201).json(await annotations.restore(currentUser(req), params.frameId, params.version, body.baseVersion))
      } catch (err) {
        if (!(err instanceof VersionConflictError)) throw err
        res.status(409).json({ error: { code: err.code, message: err.message }, latestVersion: err.latestVersion, conflictCopy: err.conflictCopy })
      }
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/frames/:frameId/analysis',
    summary: 'The latest analysis of a frame: recipe, engine version, measurements with units and distributions',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams,
    responses: { 200: { description: 'The analysis, or null when the frame has none', schema: AnalysisSchema.nullable() }, 404: { description: 'No such frame' } },
    handler: (req, _res, { params }) => annotations.latestAnalysis(currentUser(req), params.frameId),
  })

  apiRoute(api, {
    method: 'put',
    path: '/frames/:frameId/status',
    summary: 'Set a frame\u2019s annotation status (new, in progress, submitted)',
    tags: ['annotations'],
    access: 'signed-in',
    params: frameParams,
    body: z.object({ status: z.enum(['new', 'in-progress', 'submitted']) }),
    responses: { 200: { description: 'Updated', schema: z.object({ frameId: z.number().int(), status: z.string() }) }, 403: { description: 'Role may not edit masks' } },
    handler: (req, _res, { params, body }) => annotations.setStatus(currentUser(req), params.frameId, body.status),
  })

  apiRoute(api, {
    method: 'get',
    path: '/queue',
    summary: 'Frames to annotate: the signed-in person\u2019s (mine=true) or every assigned frame of a project, with status',
    tags: ['annotations'],
    access: 'signed-in',
    query: z.object({ mine: z.enum(['true', 'false']).default('true'), projectId: z.coerce.number().int().positive().optional() }),
    responses: { 200: { description: 'Queue', schema: z.array(QueueItemSchema) } },
    handler: (req, _res, { query }) => annotations.queue(currentUser(req), { assigneeId: query.mine === 'true' ? currentUser(req).id : undefined, projectId: query.projectId }),
  })
}
