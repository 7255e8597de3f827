import { z } from 'zod'
import multer from 'multer'
import { unlink } from 'node:fs/promises'
import type { NextFunction, Request, Response } from 'express'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { AppError } from '../errors'
import { TECHNIQUES } from '../../shared/types/lab'
import type { ImageService } from '../services/imageService'
import type { UploadTempFolder } from '../http/uploadTempFolder'

const MAX_FILES_PER_UPLOAD = 50

const UploadedSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  sha256: z.string(),
  width: z.number().int(),
  height: z.number().int(),
  bitDepth: z.number().int(),
  frameCount: z.number().int(),
  pixelSizeNm: z.number().nullable(),
  duplicateOf: z.number().int().optional(),
})
const SummarySchema = UploadedSchema.extend({
  projectId: z.number().int(),
  sampleId: z.number().int().nullable(),
  uploadedById: z.number().int().nullable(),
  technique: z.enum(TECHNIQUES),
  createdAt: z.string(),
  acquiredAt: z.string().nullable(),
  annotationStatus: z.enum(['new', 'in-progress', 'submitted']),
  approvedFrameCount: z.number().int(),
})
const FrameSchema = z.object({
  id: z.number().int(),
  index: z.number().int(),
  field: z.number().nullable(),
  fieldUnit: z.string().nullable(),
  temperatureK: z.number().nullable(),
  pulseField: z.number().nullable().optional(),
  pulseDurationS: z.number().nullable().optional(),
  timeS: z.number().nullable().optional(),
  annotationStatus: z.string(),
  assignee: z.object({ id: z.number().int(), name: z.string() }).nullable(),
})
const DetailSchema = SummarySchema.extend({
  notes: z.string(),
  pixelSizeSource: z.string().nullable(),
  mediaType: z.string(),
  byteSize: z.number(),
  sample: z.object({ id: z.number().int(), name: z.string(), annealTemperatureC: z.number().nullable() }).nullable(),
  frames: z.array(FrameSchema),
})
const UploadFieldsSchema = z.object({
  sampleId: z.coerce.number().int().positive().optional(),
  technique: z.enum(TECHNIQUES).default('kerr-polar'),
  pixelSizeNm: z.coerce.number().positive().max(1e7).optional(),
  notes: z.string().max(10_000).optional(),
  acquiredAt: z.coerce.date().optional(),
})
const imageIdParams = z.object({ imageId: z.coerce.number().int().positive() })
const frameParams = imageIdParams.extend({ index: z.coerce.number().int().min(0).max(100_000) })

/** Where upload parts go and how large one may be. */
export interface UploadSettings {
  maxBytes: number
  folder: UploadTempFolder
}

/** multer streams each part to a temporary file in the upload folder (bounded memory), within size and count limits. */
function uploadReceiver({ maxBytes, folder }: UploadSettings) {
  const uploadParts = multer({ dest: folder.path, limits: { fileSize: maxBytes, files: MAX_FILES_PER_UPLOAD + 1, fields: 20 } }).fields([
    { name: 'files', maxCount: MAX_FILES_PER_UPLOAD },
    { name: 'frames', maxCount: 1 },
  ])
  const limitText = maxBytes >= 1024 * 1024 ? `${Math.round(maxBytes / 1024 / 1024)} MB` : `${maxBytes} bytes`
  return (req: Request, res: Response, next: NextFunction) =>
    uploadParts(req, res, (err: unknown) => {
      if (!err) return next()
      void removeTemporaryFiles(req)
      const e = err as { code?: string; field?: string; message?: string }
      if (e.code === 'LIMIT_FILE_SIZE') return next(new AppError(413, 'file-too-large', `A file is larger than the limit of ${limitText}.`))
      if (e.code === 'LIMIT_FILE_COUNT' || e.code === 'LIMIT_UNEXPECTED_FILE') {
        return next(new AppError(400, 'too-many-files', `Upload at most ${MAX_FILES_PER_UPLOAD} images and one frames CSV per request, in the fields "files" and "frames".`))
      }
      next(new AppError(400, 'invalid-upload', `The upload could not be read: ${e.message ?? 'malformed multipart body'}.`))
    })
}

function temporaryFiles(req: Request): Express.Multer.File[] {
  return Object.values((req.files ?? {}) as Record<string, Express.Multer.File[]>).flat()
}

/** Temporary files are removed whatever happens to the request. */
async function removeTemporaryFiles(req: Request) {
  await Promise.allSettled(temporaryFiles(req).map((f) => unlink(f.path)))
}

export function registerImageRoutes(api: ApiDefinition, images: ImageService, uploads: UploadSettings): void {
  apiRoute(api, {
    method: 'post',
    path: '/projects/:projectId/images',
    summary: 'Upload images or stacks (multipart: files[], optional frames CSV, sampleId, technique, pixelSizeNm)',
    tags: ['images'],
    access: 'signed-in',
    params: z.object({ projectId: z.coerce.number().int().positive() }),
    requestContentType: 'multipart/form-data',
    before: [uploadReceiver(uploads)],
    responses: {
      201: { description: 'Stored (or recognised as a duplicate: duplicateOf)', schema: z.array(UploadedSchema) },
      403: { description: 'Role may not upload' },
      404: { description: 'No such project' },
      413: { description: 'File or image dimensions too large' },
      415: { description: 'Not a PNG, JPEG or TIFF' },
    },
    handler: async (req, res, { params }) => {
      // However long ingest takes, the sweep of the upload folder leaves this request's parts alone.
      const release = uploads.folder.hold(temporaryFiles(req).map((f) => f.path))
      try {
        const fields = UploadFieldsSchema.safeParse(req.body ?? {})
        if (!fields.success) throw new AppError(400, 'invalid-input', `Invalid upload fields — ${fields.error.issues[0].path.join('.')}: ${fields.error.issues[0].message}`)
        const groups = (req.files ?? {}) as Record<string, Express.Multer.File[]>
        const toUploaded = (f: Express.Multer.File) => ({ originalName: Buffer.from(f.originalname, 'latin1').toString('utf8'), path: f.path, size: f.size })
        const result = await images.upload(currentUser(req), params.projectId, (groups.files ?? []).map(toUploaded), groups.frames?.[0] ? toUploaded(groups.frames[0]) : undefined, {
          sampleId: fields.data.sampleId ?? null,
          technique: fields.data.technique,
          pixelSizeNm: fields.data.pixelSizeNm ?? null,
          notes: fields.data.notes,
          acquiredAt: fields.data.acquiredAt ?? null,
        })
        res.status(201).json(result)
      } finally {
        await removeTemporaryFiles(req)
        release()
      }
    },
  })

  apiRoute(api, {
    method: 'get',
    path: '/images',
    summary: 'Images of the signed-in person\u2019s labs, paginated, sorted and filtered on the server',
    tags: ['images'],
    access: 'signed-in',
    query: z.object({
      projectId: z.coerce.number().int().positive().optional(),
      sampleId: z.coerce.number().int().positive().optional(),
      technique: z.enum(TECHNIQUES).optional(),
      status: z.enum(['new', 'in-progress', 'submitted']).optional(),
      from: z.coerce.date().optional(),
      to: z.coerce.date().optional(),
      search: z.string().max(200).optional(),
      page: z.coerce.number().int().min(1).max(10_000).default(1),
      pageSize: z.coerce.number().int().min(1).max(200).default(25),
      sort: z.enum(['name', 'createdAt', 'frameCount', 'technique']).default('createdAt'),
      order: z.enum(['asc', 'desc']).default('desc'),
    }),
    responses: { 200: { description: 'A page of images', schema: z.object({ items: z.array(SummarySchema), total: z.number().int(), page: z.number().int(), pageSize: z.number().int() }) } },
    handler: (req, _res, { query }) => images.list(currentUser(req), query),
  })

  apiRoute(api, {
    method: 'get',
    path: '/images/:imageId',
    summary: 'One image with its frames and sample',
    tags: ['images'],
    access: 'signed-in',
    params: imageIdParams,
    responses: { 200: { description: 'The image', schema: DetailSchema }, 404: { description: 'No such image (or not in your labs)' } },
    handler: (req, _res, { params }) => images.getDetail(currentUser(req), params.imageId),
  })

  apiRoute(api, {
    method: 'patch',
    path: '/images/:imageId',
    summary: 'Edit image metadata (audited)',
    tags: ['images'],
    access: 'signed-in',
    params: imageIdParams,
    body: z
      .object({
        name: z.string().trim().min(1).max(300),
        technique: z.enum(TECHNIQUES),
        sampleId: z.number().int().positive().nullable(),
        pixelSizeNm: z.number().positive().max(1e7).nullable(),
        pixelSizeSource: z.enum(['typed', 'scale-bar', 'tiff-resolution', 'tiff-description']),
        notes: z.string().max(10_000),
        acquiredAt: z.coerce.date().nullable(),
      })
      .partial(),
    responses: { 200: { description: 'Updated image', schema: DetailSchema }, 403: { description: 'Role may not edit metadata' }, 404: { description: 'No such image' } },
    handler: (req, _res, { params, body }) => images.updateMetadata(currentUser(req), params.imageId, body),
  })

  apiRoute(api, {
    method: 'put',
    path: '/images/:imageId/frames',
    summary: 'Set per-frame applied field and temperature (audited)',
    tags: ['images'],
    access: 'signed-in',
    params: imageIdParams,
    body: z.object({
      frames: z
        .array(z.object({ index: z.number().int().min(0), field: z.number().finite().nullable(), fieldUnit: z.enum(['mT', 'Oe', 'A/m']).nullable(), temperatureK: z.number().min(0).max(5000).nullable() }))
        .max(100_000),
    }),
    responses: { 200: { description: 'Updated image', schema: DetailSchema }, 403: { description: 'Role may not edit metadata' }, 404: { description: 'No such image' } },
    handler: (req, _res, { params, body }) => images.updateFrames(currentUser(req), params.imageId, body.frames),
  })

  apiRoute(api, {
    method: 'post',
    path: '/images/assign',
    summary: 'Assign every frame of the given images to an annotator (null unassigns)',
    tags: ['images'],
    access: 'signed-in',
    body: z.object({ imageIds: z.array(z.number().int().positive()).min(1).max(500), assigneeId: z.number().int().positive().nullable() }),
    responses: { 200: { description: 'Assigned', schema: z.object({ updatedImages: z.number().int() }) }, 403: { description: 'Role may not assign' } },
    handler: (req, _res, { body }) => images.assignFrames(currentUser(req), body.imageIds, body.assigneeId),
  })

  for (const kind of ['preview.png', 'thumbnail.png', 'pixels.bin'] as const) {
    apiRoute(api, {
      method: 'get',
      path: `/images/:imageId/frames/:index/${kind}`,
      summary:
        kind === 'pixels.bin'
          ? 'Raw pixels of one frame, little-endian (headers X-Width, X-Height, X-Bit-Depth, X-Sample-Format)'
          : kind === 'preview.png'
            ? 'Display rendering of one frame (8-bit, stretched between the 0.5th and 99.5th percentiles)'
            : 'Thumbnail of one frame',
      tags: ['images'],
      access: 'signed-in',
      params: frameParams,
      responses: { 200: { description: 'The bytes', schema: z.string(), contentType: kind === 'pixels.bin' ? 'application/octet-stream' : 'image/png' }, 404: { description: 'No such image or frame' } },
      handler: async (req, res, { params }) => {
        const { body, image } = await images.readFrameObject(currentUser(req), params.imageId, params.index, kind)
        const etag = `"${image.sha256.slice(0, 16)}-${params.index}-${kind}"`
        res.set({ 'Cache-Control': 'private, max-age=86400', ETag: etag })
        if (req.get('if-none-match') === etag) return void res.status(304).end()
        if (kind === 'pixels.bin') res.set({ 'X-Width': String(image.width), 'X-Height': String(image.height), 'X-Bit-Depth': String(image.bitDepth), 'Access-Control-Expose-Headers': 'X-Width, X-Height, X-Bit-Depth' })
        res.type(kind === 'pixels.bin' ? 'application/octet-stream' : 'image/png').send(body)
      },
    })
  }
}
