/**
 * Image ingest and reading. The story of an upload: check access → check the bytes (magic number, headers, limits)
 * → checksum and duplicate check → store the original unchanged and the per-frame derivatives in the object store →
 * write the image and frame rows in one transaction. Nothing half-written: a failure before the rows are committed
 * removes every object this upload stored.
 * Memory stays bounded whatever the file size: the upload is read from multer's temporary file range by range (headers
 * for the checks, one page at a time for the derivatives), and hashed and stored through one reused buffer each.
 * The request thread only moves bytes and awaits: decoding a frame and rendering its preview and thumbnail run in the
 * server's analysis threads, a few frames at a time (one more than the threads, so none idles while a finished frame
 * is being stored), each frame stored as soon as it is rendered.
 */
import { randomUUID, createHash } from 'node:crypto'
import { open, readFile } from 'node:fs/promises'
import { QueryTypes, type Includeable } from 'sequelize'
import type { Sequelize } from 'sequelize'
import { probeImage, ImageDecodeError, type ImageHeader } from '../../shared/imageio/decodeImage'
import { parseFramesCsv, validateFramesCsv, FramesCsvError } from '../../shared/imageio/framesCsv'
import type { Technique } from '../../shared/types/lab'
import type { FrameAnnotationStatus, ImageDetailDto, ImageSummaryDto, UploadedImageDto } from '../../shared/types/image'
import type { Page } from '../../shared/types/api'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, ServiceUnavailableError, notFound } from '../errors'
import { Frame, Image, Project, Sample, User } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import { withFileByteSource } from '../storage/fileByteSource'
import { AnalysisWorkerError, type AnalysisPool, type SharedFile } from '../analysis/analysisPool'
import type { LazyAnalysisPool } from '../analysis/lazyAnalysisPool'
import { recordAudit } from './auditService'

export interface UploadedFile {
  originalName: string
  path: string
  size: number
}

export interface UploadOptions {
  sampleId?: number | null
  technique: Technique
  pixelSizeNm?: number | null
  notes?: string
  acquiredAt?: Date | null
}

const HASH_BUFFER_BYTES = 1024 * 1024

export const frameObjectKey = (image: { objectKey: string }, index: number, kind: 'preview.png' | 'thumbnail.png' | 'pixels.bin') =>
  `${image.objectKey.replace(/\/original[^/]*$/, '')}/frames/${index}/${kind}`

/** Hash with one reused buffer: a stream would allocate a new chunk for every 64 KiB of a file of up to gigabytes. */
async function sha256OfFile(path: string): Promise<string> {
  const hash = createHash('sha256')
  const buffer = Buffer.allocUnsafe(HASH_BUFFER_BYTES)
  const handle = await open(path, 'r')
  try {
    for (;;) {
      const { bytesRead } = await handle.read(buffer, 0, buffer.length, null)
      if (bytesRead === 0) break
      hash.update(buffer.subarray(0, bytesRead))
    }
  } finally {
    await handle.close()
  }
  return hash.digest('hex')
}

function decodeErrorToAppError(err: unknown, fileName: string): AppError {
  if (err instanceof ImageDecodeError) return new AppError(err.status, err.code, err.message, { file: fileName })
  if (err instanceof FramesCsvError) return new AppError(400, err.code, err.message, { file: fileName })
  // A decode error raised in an analysis thread keeps its code and HTTP status across the thread boundary.
  if (err instanceof AnalysisWorkerError && err.code !== undefined && err.status !== undefined) return new AppError(err.status, err.code, err.message, { file: fileName })
  return new AppError(400, 'corrupt-image', `${fileName}: the file could not be read as an image (${(err as Error).message}).`, { file: fileName })
}

/**
 * Run `work` for the indices 0 … count − 1, at most `limit` at a time. After a failure no further index starts, and the
 * first error is thrown only once the running ones have settled, so nothing is still being stored during clean-up.
 */
async function forEachIndexBounded(count: number, limit: number, work: (index: number) => Promise<void>): Promise<void> {
  let next = 0
  let failure = null as { error: unknown } | null
  const lane = async () => {
    while (failure === null && next < count) {
      const index = next++
      await work(index).catch((error: unknown) => {
        failure ??= { error }
      })
    }
  }
  await Promise.all(Array.from({ length: Math.min(limit, count) }, lane))
  if (failure !== null) throw failure.error
}

export interface ImageServiceDeps {
  sequelize: Sequelize
  store: ObjectStore
  analysisPool: LazyAnalysisPool
}

export function createImageService(deps: ImageServiceDeps) {
  const { store, sequelize, analysisPool } = deps

  async function loadProjectFor(user: SessionUser, projectId: number, action: Parameters<typeof assertLabAction>[2]) {
    const project = await Project.findOne({ where: { id: projectId, deletedAt: null } })
    if (!project) throw notFound('project')
    assertLabAction(user, project.labId, action, 'project')
    return project
  }

  /** Validate one file without storing anything: magic bytes, headers, limits (a TIFF's directories only are read). */
  async function inspect(file: UploadedFile): Promise<{ header: ImageHeader }> {
    if (file.size === 0) throw new AppError(400, 'empty-file', `${file.originalName}: the file is empty.`, { file: file.originalName })
    return withFileByteSource(file.path, async (source) => {
      try {
        return { header: await probeImage(source, file.originalName) }
      } catch (err) {
        throw decodeErrorToAppError(err, file.originalName)
      }
    })
  }

  async function upload(user: SessionUser, projectId: number, files: UploadedFile[], framesCsv: UploadedFile | undefined, options: UploadOptions): Promise<UploadedImageDto[]> {
    const project = await loadProjectFor(user, projectId, 'image.upload')
    if (files.length === 0) throw new AppError(400, 'no-files', 'Choose at least one image file to upload.')
    if (options.sampleId != null) {
      const sample = await Sample.findOne({ where: { id: options.sampleId, projectId } })
      if (!sample) throw new AppError(400, 'sample-not-in-project', 'The chosen sample does not belong to this project.')
    }
    // Everything is checked before anything is stored, so a bad file in a batch stores nothing.
    const inspected = []
    for (const file of files) inspected.push({ file, ...(await inspect(file)) })
    const csvText = framesCsv ? await readFile(framesCsv.path, 'utf8') : null
    const frameTable = csvText != null ? parseCsvFor(csvText, framesCsv!.originalName, inspected) : null

    const results: UploadedImageDto[] = []
    for (const item of inspected) results.push(await storeOne(user, project, item, frameTable, options))
    return results
  }

  function parseCsvFor(text: string, name: string, inspected: { header: ImageHeader; file: UploadedFile }[]) {
    if (inspected.length !== 1) throw new AppError(400, 'invalid-frames-csv', `${name}: a frames CSV goes with exactly one image or stack per upload.`, { file: name })
    try {
      const parsed = parseFramesCsv(text)
      return checkMotionTimes(validateFramesCsv(parsed, inspected[0].header.frameCount))
    } catch (err) {
      throw decodeErrorToAppError(err, name)
    }
  }

  async function storeOne(
    user: SessionUser,
    project: Project,
    item: { file: UploadedFile; header: ImageHeader },
    frameTable: ReturnType<typeof validateFramesCsv> | null,
    options: UploadOptions,
  ): Promise<UploadedImageDto> {
    const { file, header } = item
    const sha256 = await sha256OfFile(file.path)
    const existing = await Image.findOne({ where: { projectId: project.id, sha256, deletedAt: null } })
    if (existing) {
      return { ...toUploadedDto(existing), duplicateOf: existing.id }
    }
    const extension = header.format === 'tiff' ? '.tif' : header.format === 'png' ? '.png' : '.jpg'
    const objectKey = `labs/${project.labId}/images/${randomUUID()}/original${extension}`
    const stored: string[] = []
    /** Listed before it is stored, so a put that fails after the store kept the object is cleaned up too. */
    const put = async (key: string, body: Buffer | { path: string }, type: string) => {
      stored.push(key)
      await (Buffer.isBuffer(body) ? store.put(key, body, type) : store.putFile(key, body.path, type)).catch(() => {
        throw new ServiceUnavailableError('storage', `${file.originalName}: the image store is not reachable right now; nothing was saved. Try again in a moment.`)
      })
    }
    const pool = analysisPool.get()
    const shared = pool.openFile(file.path, file.originalName)
    try {
      await put(objectKey, { path: file.path }, header.mediaType)
      const patterns = new Float64Array(header.frameCount)
      await forEachIndexBounded(header.frameCount, pool.size + 1, async (index) => {
        patterns[index] = await storeFrameDerivatives(pool, shared, { objectKey, index }, put)
      })
      const pixelSizeNm = options.pixelSizeNm ?? header.pixelSizeNm
      const pixelSizeSource = options.pixelSizeNm != null ? 'typed' : header.pixelSizeNm != null ? header.pixelSizeSource : null
      return await sequelize.transaction(async (transaction) => {
        const image = await Image.create(
          {
            projectId: project.id,
            sampleId: options.sampleId ?? null,
            uploadedById: user.id,
            name: file.originalName,
            technique: options.technique,
            objectKey,
            sha256,
            byteSize: file.size,
            mediaType: header.mediaType,
            width: header.width,
            height: header.height,
            bitDepth: header.bitDepth,
            frameCount: header.frameCount,
            coverFrameIndex: indexOfLargest(patterns),
            pixelSizeNm,
            pixelSizeSource,
            notes: options.notes ?? '',
            acquiredAt: options.acquiredAt ?? null,
            deletedAt: null,
          },
          { transaction },
        )
        const rows = Array.from({ length: header.frameCount }, (_, index) => {
          const row = frameTable?.rows.find((r) => r.frame === index)
          return {
            imageId: image.id,
            index,
            field: row?.field ?? null,
            // The unit goes with the field, or with the pulse amplitude of a motion series.
            fieldUnit: row?.field != null || row?.pulseField != null ? (frameTable?.fieldUnit ?? null) : null,
            temperatureK: row?.temperatureK ?? null,
            pulseField: row?.pulseField ?? null,
            pulseDurationS: row?.pulseDurationS ?? null,
            timeS: row?.timeS ?? null,
            assigneeId: null,
          }
        })
        await Frame.bulkCreate(rows, { transaction })
        await recordAudit({ labId: project.labId, actorId: user.id, action: 'image.upload', entityType: 'image', entityId: image.id, after: { name: image.name, sha256, frameCount: header.frameCount } }, transaction)
        return toUploadedDto(image)
      })
    } catch (err) {
      await Promise.allSettled(stored.map((key) => store.remove(key)))
      throw err
    } finally {
      pool.releaseFile(shared)
    }
  }

  /** Decode and render one frame in an analysis thread, then store its preview, thumbnail and raw pixels; returns its domain pattern (patternAboveBackground). */
  async function storeFrameDerivatives(pool: AnalysisPool, file: SharedFile, frame: { objectKey: string; index: number }, put: (key: string, body: Buffer, type: string) => Promise<void>): Promise<number> {
    const rendered = await pool.renderFrame(file, frame.index).catch((err: unknown) => {
      // Errors of the pool itself (closed, a thread gone) are the server's, not the file's.
      throw err instanceof AnalysisWorkerError ? decodeErrorToAppError(err, file.fileName) : err
    })
    for (const [kind, bytes, type] of [
      ['preview.png', rendered.preview, 'image/png'],
      ['thumbnail.png', rendered.thumbnail, 'image/png'],
      // Raw little-endian pixels: what the viewer reads for the pixel readout and the workspace for masks.
      ['pixels.bin', rendered.pixels, 'application/octet-stream'],
    ] as const) {
      await put(frameObjectKey(frame, frame.index, kind), Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength), type)
    }
    return rendered.pattern
  }

  /** @param withSample also load the image's sample (as `Sample`) in the same query. */
  async function findImageFor(user: SessionUser, imageId: number, action: Parameters<typeof assertLabAction>[2] = 'lab.read', withSample = false) {
    const include: Includeable[] = [{ model: Project, attributes: ['id', 'labId'], where: { deletedAt: null } }]
    if (withSample) include.push({ model: Sample, attributes: ['id', 'name', 'annealTemperatureC'], required: false })
    const image = await Image.findOne({ where: { id: imageId, deletedAt: null }, include })
    if (!image) throw notFound('image')
    const labId = (image as unknown as { Project: Project }).Project.labId
    assertLabAction(user, labId, action, 'image')
    return { image, labId }
  }

  async function getDetail(user: SessionUser, imageId: number): Promise<ImageDetailDto> {
    const { image } = await findImageFor(user, imageId, 'lab.read', true)
    const frames = await Frame.findAll({ where: { imageId }, order: [['index', 'ASC']], include: [{ model: User, as: 'assignee', attributes: ['id', 'name'] }] })
    const sample = (image as unknown as { Sample: Sample | null }).Sample
    return {
      ...toSummaryDto(image, imageAnnotationStatus(frames.map((f) => f.annotationStatus)), await approvedFrameCount(image.id)),
      notes: image.notes,
      pixelSizeSource: image.pixelSizeSource,
      mediaType: image.mediaType,
      byteSize: image.byteSize,
      sample: sample ? { id: sample.id, name: sample.name, annealTemperatureC: sample.annealTemperatureC } : null,
      frames: frames.map((f) => ({
        id: f.id,
        index: f.index,
        field: f.field,
        fieldUnit: f.fieldUnit,
        temperatureK: f.temperatureK,
        pulseField: f.pulseField,
        pulseDurationS: f.pulseDurationS,
        timeS: f.timeS,
        annotationStatus: f.annotationStatus,
        assignee: (f as unknown as { assignee?: User }).assignee ? { id: (f as unknown as { assignee: User }).assignee.id, name: (f as unknown as { assignee: User }).assignee.name } : null,
      })),
    }
  }

  async function readFrameObject(user: SessionUser, imageId: number, index: number, kind: 'preview.png' | 'thumbnail.png' | 'pixels.bin') {
    const { image } = await findImageFor(user, imageId)
    if (!Number.isInteger(index) || index < 0 || index >= image.frameCount) throw notFound('frame')
    return { body: await store.get(frameObjectKey(image, index, kind)), image }
  }

  async function list(user: SessionUser, query: ImageListQuery): Promise<Page<ImageSummaryDto>> {
    const labIds = user.memberships.map((m) => m.labId)
    if (query.projectId && !(await Project.findOne({ attributes: ['id'], where: { id: query.projectId, labId: labIds, deletedAt: null } }))) throw notFound('project')
    const { sql, replacements } = imageListQuery(labIds, query)
    const rows = await sequelize.query<ImageListRow>(sql, { replacements, type: QueryTypes.SELECT })
    // A page past the end has no row to carry the total: count on its own then.
    const total = rows.length > 0 || query.page === 1 ? Number(rows[0]?.totalCount ?? 0) : await countImages(labIds, query)
    return { items: rows.map((row) => toSummaryDto(row, row.annotationStatus, Number(row.approvedFrameCount))), total, page: query.page, pageSize: query.pageSize }
  }

  async function approvedFrameCount(imageId: number): Promise<number> {
    const [row] = await sequelize.query<{ n: string }>(`SELECT ${APPROVED_FRAMES_SQL} AS n FROM images AS "Image" WHERE "Image".id = :imageId`, { replacements: { imageId }, type: QueryTypes.SELECT })
    return Number(row?.n ?? 0)
  }

  async function countImages(labIds: number[], query: ImageListQuery): Promise<number> {
    const { where, replacements } = imageListWhere(labIds, query)
    const [row] = await sequelize.query<{ n: string }>(`SELECT count(*) AS n FROM images AS "Image" WHERE ${where}`, { replacements, type: QueryTypes.SELECT })
    return Number(row.n)
  }

  async function updateMetadata(user: SessionUser, imageId: number, patch: { name?: string; technique?: Technique; sampleId?: number | null; pixelSizeNm?: number | null; pixelSizeSource?: string; notes?: string; acquiredAt?: Date | null }) {
    const { image, labId } = await findImageFor(user, imageId, 'image.editMetadata')
    if (patch.sampleId != null && !(await Sample.findOne({ where: { id: patch.sampleId, projectId: image.projectId } }))) {
      throw new AppError(400, 'sample-not-in-project', 'The chosen sample does not belong to this project.')
    }
    const before = { name: image.name, technique: image.technique, sampleId: image.sampleId, pixelSizeNm: image.pixelSizeNm, pixelSizeSource: image.pixelSizeSource, notes: image.notes, acquiredAt: image.acquiredAt }
    const changes = { ...patch, ...(patch.pixelSizeNm !== undefined && !patch.pixelSizeSource ? { pixelSizeSource: patch.pixelSizeNm == null ? null : 'typed' } : {}) }
    await sequelize.transaction(async (transaction) => {
      await image.update(changes, { transaction })
      await recordAudit({ labId, actorId: user.id, action: 'image.update', entityType: 'image', entityId: image.id, before, after: changes }, transaction)
    })
    return getDetail(user, imageId)
  }

  async function updateFrames(user: SessionUser, imageId: number, rows: { index: number; field: number | null; fieldUnit: string | null; temperatureK: number | null }[]) {
    const { image, labId } = await findImageFor(user, imageId, 'image.editMetadata')
    for (const row of rows) if (row.index < 0 || row.index >= image.frameCount) throw new AppError(400, 'invalid-frame-index', `Frame ${row.index} does not exist (the image has ${image.frameCount}).`)
    await sequelize.transaction(async (transaction) => {
      const frames = await Frame.findAll({ where: { imageId }, transaction })
      const before = frames.map((f) => ({ index: f.index, field: f.field, fieldUnit: f.fieldUnit, temperatureK: f.temperatureK }))
      for (const row of rows) {
        const frame = frames.find((f) => f.index === row.index)!
        // A motion frame's unit also belongs to its pulse amplitude, which this edit does not touch.
        const unit = row.field == null ? (frame.pulseField != null ? frame.fieldUnit : null) : row.fieldUnit
        await frame.update({ field: row.field, fieldUnit: unit, temperatureK: row.temperatureK }, { transaction })
      }
      await recordAudit({ labId, actorId: user.id, action: 'frames.update', entityType: 'image', entityId: imageId, before: { frames: before }, after: { frames: rows } }, transaction)
    })
    return getDetail(user, imageId)
  }

  async function assignFrames(user: SessionUser, imageIds: number[], assigneeId: number | null) {
    const images = await Image.findAll({ where: { id: imageIds, deletedAt: null }, include: [{ model: Project, attributes: ['labId'], where: { deletedAt: null } }] })
    if (images.length !== new Set(imageIds).size) throw notFound('image')
    const labIds = new Set(images.map((i) => (i as unknown as { Project: Project }).Project.labId))
    for (const labId of labIds) assertLabAction(user, labId, 'image.assign', 'image')
    if (assigneeId != null) {
      const member = await sequelize.models.Membership.findOne({ where: { userId: assigneeId, labId: [...labIds], active: true } })
      if (!member || labIds.size !== 1) throw new AppError(400, 'assignee-not-in-lab', 'The assignee must be an active member of the images\u2019 lab.')
    }
    await sequelize.transaction(async (transaction) => {
      await Frame.update({ assigneeId }, { where: { imageId: imageIds }, transaction })
      await recordAudit({ labId: [...labIds][0], actorId: user.id, action: 'frames.assign', entityType: 'image', entityId: null, after: { imageIds, assigneeId } }, transaction)
    })
    return { updatedImages: images.length }
  }

  return { upload, getDetail, readFrameObject, list, updateMetadata, updateFrames, assignFrames, findImageFor }
}

export type ImageService = ReturnType<typeof createImageService>

/**
 * A `frame,time_s` motion series needs increasing times: each step's duration is the time since the previous frame,
 * and a zero or negative one has no velocity (pulse durations ≤ 0 are refused by the CSV reader already).
 */
function checkMotionTimes<T extends { kind: string; rows: { frame: number; line: number; timeS?: number }[] }>(table: T): T {
  if (table.kind !== 'time') return table
  for (let k = 1; k < table.rows.length; k++) {
    const [before, row] = [table.rows[k - 1], table.rows[k]]
    if (!(row.timeS! > before.timeS!)) {
      throw new FramesCsvError(`Line ${row.line}: frame ${row.frame} is at ${row.timeS} s, not after frame ${before.frame} (${before.timeS} s); times must increase.`, row.line)
    }
  }
  return table
}

/** Index of the largest value, the first of equals (so a stack of identical frames keeps frame 0). */
function indexOfLargest(values: Float64Array): number {
  let best = 0
  for (let i = 1; i < values.length; i++) if (values[i] > values[best]) best = i
  return best
}

function toUploadedDto(image: Pick<Image, 'id' | 'name' | 'sha256' | 'width' | 'height' | 'bitDepth' | 'frameCount' | 'pixelSizeNm'>): UploadedImageDto {
  return { id: image.id, name: image.name, sha256: image.sha256, width: image.width, height: image.height, bitDepth: image.bitDepth, frameCount: image.frameCount, pixelSizeNm: image.pixelSizeNm }
}

/** An image's annotation state from its frames': submitted when all are, new while none was touched. */
function imageAnnotationStatus(frameStatuses: string[]): FrameAnnotationStatus {
  if (frameStatuses.length > 0 && frameStatuses.every((s) => s === 'submitted')) return 'submitted'
  return frameStatuses.some((s) => s !== 'new') ? 'in-progress' : 'new'
}

/**
 * imageAnnotationStatus in SQL, per row of an image list (one aggregate per image instead of every frame row: a page
 * of 25 stacks would otherwise bring back over a thousand frames). bool_and/bool_or over no frames are NULL: 'new'.
 */
const ANNOTATION_STATUS_SQL = `(SELECT CASE WHEN bool_and(f.annotation_status = 'submitted') THEN 'submitted'
  WHEN bool_or(f.annotation_status <> 'new') THEN 'in-progress' ELSE 'new' END
  FROM frames AS f WHERE f.image_id = "Image"."id")`

/**
 * How many of an image's frames have an approved analysis as their newest one (a mask edited after approval makes a
 * newer draft, which needs review again, so that frame no longer counts).
 */
const APPROVED_FRAMES_SQL = `(SELECT count(*) FROM frames AS f WHERE f.image_id = "Image"."id"
  AND (SELECT a.status FROM analyses AS a WHERE a.frame_id = f.id ORDER BY a.id DESC LIMIT 1) = 'approved')`

export interface ImageListQuery {
  projectId?: number
  sampleId?: number
  technique?: Technique
  status?: FrameAnnotationStatus
  from?: Date
  to?: Date
  search?: string
  page: number
  pageSize: number
  sort: string
  order: 'asc' | 'desc'
}

/** Sortable columns of the image list (API name → column); anything else sorts by upload time. */
const LIST_SORT_COLUMNS: Record<string, string> = { name: 'name', createdAt: 'created_at', frameCount: 'frame_count', technique: 'technique' }

/** The list's filters as SQL over `images AS "Image"`: the person's live projects, then the query's own filters. */
function imageListWhere(labIds: number[], query: ImageListQuery): { where: string; replacements: Record<string, unknown> } {
  const conditions = ['"Image".deleted_at IS NULL']
  const replacements: Record<string, unknown> = { labIds: labIds.length > 0 ? labIds : [null] }
  conditions.push('"Image".project_id IN (SELECT id FROM projects WHERE deleted_at IS NULL AND lab_id IN (:labIds))')
  const add = (name: string, value: unknown, condition: string) => {
    if (value === undefined || value === null || value === '') return
    replacements[name] = value
    conditions.push(condition)
  }
  add('projectId', query.projectId, '"Image".project_id = :projectId')
  add('sampleId', query.sampleId, '"Image".sample_id = :sampleId')
  add('technique', query.technique, '"Image".technique = :technique')
  add('search', query.search && `%${query.search.replace(/[%_\\]/g, '\\$&')}%`, '"Image".name ILIKE :search')
  add('from', query.from, '"Image".created_at >= :from')
  add('to', query.to, '"Image".created_at <= :to')
  // The same state the list shows, so filtering by "submitted" keeps exactly the rows marked submitted.
  add('status', query.status, `${ANNOTATION_STATUS_SQL} = :status`)
  return { where: conditions.join(' AND '), replacements }
}

/**
 * One page of the image list in one query. The page is chosen on narrow rows (id, sort key, total by a window count)
 * and only its rows are then read whole with their annotation state: the busiest endpoint, and sorting or
 * aggregating every visible image's full row cost the database 1.5–2× more than the page itself.
 */
function imageListQuery(labIds: number[], query: ImageListQuery): { sql: string; replacements: Record<string, unknown> } {
  const { where, replacements } = imageListWhere(labIds, query)
  const column = LIST_SORT_COLUMNS[query.sort] ?? 'created_at'
  const direction = query.order === 'asc' ? 'ASC' : 'DESC'
  const sql = `WITH page AS (
      SELECT "Image".id, "Image".${column} AS sort_key, count(*) OVER () AS total_count
      FROM images AS "Image" WHERE ${where}
      ORDER BY "Image".${column} ${direction}, "Image".id ASC LIMIT :limit OFFSET :offset)
    SELECT "Image".id, "Image".name, "Image".sha256, "Image".width, "Image".height, "Image".bit_depth AS "bitDepth",
      "Image".frame_count AS "frameCount", "Image".cover_frame_index AS "coverFrameIndex", "Image".pixel_size_nm AS "pixelSizeNm", "Image".project_id AS "projectId",
      "Image".sample_id AS "sampleId", "Image".uploaded_by_id AS "uploadedById", "Image".technique,
      "Image".created_at AS "createdAt", "Image".acquired_at AS "acquiredAt", page.total_count AS "totalCount",
      ${ANNOTATION_STATUS_SQL} AS "annotationStatus", ${APPROVED_FRAMES_SQL} AS "approvedFrameCount"
    FROM page JOIN images AS "Image" ON "Image".id = page.id
    ORDER BY page.sort_key ${direction}, page.id ASC`
  return { sql, replacements: { ...replacements, limit: query.pageSize, offset: (query.page - 1) * query.pageSize } }
}

/** The image columns a list row shows: a model instance and a row of `imageListQuery` both have them. */
type ImageSummaryFields = Pick<Image, 'id' | 'name' | 'sha256' | 'width' | 'height' | 'bitDepth' | 'frameCount' | 'coverFrameIndex' | 'pixelSizeNm' | 'projectId' | 'sampleId' | 'uploadedById' | 'technique' | 'createdAt' | 'acquiredAt'>

type ImageListRow = ImageSummaryFields & { totalCount: string; annotationStatus: FrameAnnotationStatus; approvedFrameCount: string }

function toSummaryDto(image: ImageSummaryFields, annotationStatus: FrameAnnotationStatus, approvedFrameCount: number): ImageSummaryDto {
  return {
    ...toUploadedDto(image),
    coverFrameIndex: image.coverFrameIndex,
    projectId: image.projectId,
    sampleId: image.sampleId,
    uploadedById: image.uploadedById ?? null,
    technique: image.technique,
    createdAt: image.createdAt.toISOString(),
    acquiredAt: image.acquiredAt ? image.acquiredAt.toISOString() : null,
    annotationStatus,
    approvedFrameCount,
  }
}
