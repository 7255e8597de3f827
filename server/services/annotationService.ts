/**
 * Masks and their measurements. A save tells this story: check access → decode and check the mask → store it in the
 * object store → under a row lock on the frame, compare the client's base version with the latest: equal → a new
 * version; different → a conflict copy (409, nothing lost) → recompute the measurements from the saved mask in a worker
 * thread → store them as a draft analysis.
 */
import { randomUUID } from 'node:crypto'
import { Op, type Sequelize, type Transaction } from 'sequelize'
import { decodeMask, encodeMask, MaskEncodingError } from '../../shared/imageio/maskEncoding'
import { normalizeRecipe, type AnalysisRecipe } from '../../shared/analysis/recipe'
import { ENGINE_VERSION } from '../../shared/analysis/engineVersion'
import type { BinaryMask, GrayImage } from '../../shared/analysis/types'
import type { AnalysisDto, AnnotationDto, AnnotationShape, AnnotationVersionDto, QueueFrameDto, SaveAnnotationResponse } from '../../shared/types/annotation'
import type { FrameDistributions, FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, notFound } from '../errors'
import { Analysis, Annotation, Frame, Image, Project, User } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import type { MaskMeasurer } from '../analysis/maskMeasurer'
import { frameObjectKey } from './imageService'
import { recordAudit } from './auditService'

export class VersionConflictError extends AppError {
  constructor(
    readonly latestVersion: number,
    readonly conflictCopy: AnnotationVersionDto,
  ) {
    super(409, 'version-conflict', `Someone saved version ${latestVersion} of this mask while you were editing. Your edit is kept as a separate copy: reload the latest version, or save yours as a new version.`)
  }
}

type FrameContext = { frame: Frame; image: Image; labId: number }

function toVersionDto(a: Annotation): AnnotationVersionDto {
  const author = (a as unknown as { author?: User }).author
  return { id: a.id, version: a.version, state: a.state, basedOnVersion: a.basedOnVersion, author: author ? { id: author.id, name: author.name } : null, createdAt: a.createdAt.toISOString() }
}

function toAnalysisDto(a: Analysis, annotationVersion: number | null): AnalysisDto {
  const results = (a.results ?? null) as { measurements?: FrameMeasurements; distributions?: FrameDistributions } | null
  return {
    id: a.id,
    frameId: a.frameId,
    annotationId: a.annotationId,
    annotationVersion,
    recipe: a.recipe as unknown as AnalysisRecipe,
    engineVersion: a.engineVersion,
    status: a.status,
    measurements: results?.measurements ?? null,
    distributions: results?.distributions ?? null,
    error: a.error,
    createdAt: a.createdAt.toISOString(),
  }
}

export function createAnnotationService(deps: { sequelize: Sequelize; store: ObjectStore; measurer: MaskMeasurer }) {
  const { sequelize, store, measurer } = deps

  async function frameFor(user: SessionUser, frameId: number, action: Parameters<typeof assertLabAction>[2]): Promise<FrameContext> {
    // Frame, live image and live project in one query: every frame request starts here.
    const frame = await Frame.findByPk(frameId, {
      include: [{ model: Image, required: true, where: { deletedAt: null }, include: [{ model: Project, required: true, attributes: ['id', 'labId'], where: { deletedAt: null } }] }],
    })
    if (!frame) throw notFound('frame')
    const image = (frame as unknown as { Image: Image & { Project: Project } }).Image
    const labId = image.Project.labId
    assertLabAction(user, labId, 'lab.read', 'frame')
    assertLabAction(user, labId, action, 'frame')
    return { frame, image, labId }
  }

  async function rawFrame(image: Image, index: number): Promise<GrayImage> {
    const bytes = await store.get(frameObjectKey(image, index, 'pixels.bin'))
    const copy = new Uint8Array(bytes).buffer
    const data = image.bitDepth === 8 ? new Uint8Array(copy) : image.bitDepth === 16 ? new Uint16Array(copy) : new Float32Array(copy)
    return { width: image.width, height: image.height, data }
  }

  async function latestSaved(frameId: number, transaction?: Transaction) {
    return Annotation.findOne({ where: { frameId, state: 'saved' }, order: [['version', 'DESC']], transaction })
  }

  async function measureAndStore(ctx: FrameContext, annotation: Annotation, mask: BinaryMask, recipe: AnalysisRecipe, user: SessionUser): Promise<AnalysisDto> {
    let results: { measurements: FrameMeasurements; distributions: FrameDistributions } | null = null
    let error: string | null = null
    try {
      results = await measurer.measure({ mask, frame: await rawFrame(ctx.image, ctx.frame.index), recipe, pixelSizeNm: ctx.image.pixelSizeNm })
    } catch (err) {
      error = `The measurements could not be computed: ${(err as Error).message}`
    }
    const analysis = await Analysis.create({
      frameId: ctx.frame.id,
      annotationId: annotation.id,
      recipe: recipe as unknown as Record<string, unknown>,
      engineVersion: ENGINE_VERSION,
      results: results as unknown as Record<string, unknown> | null,
      createdById: user.id,
      approvedById: null,
      approvedAt: null,
      error,
    })
    return toAnalysisDto(analysis, annotation.version)
  }

  async function save(user: SessionUser, frameId: number, input: { baseVersion: number | null; mask: BinaryMask; shapes: AnnotationShape[]; recipe: Partial<AnalysisRecipe> }): Promise<SaveAnnotationResponse> {
    const ctx = await frameFor(user, frameId, 'mask.edit')
    const { image, frame, labId } = ctx
    if (input.mask.width !== image.width || input.mask.height !== image.height) {
      throw new AppError(400, 'mask-size-mismatch', `The mask is ${input.mask.width} × ${input.mask.height} but the frame is ${image.width} × ${image.height}.`)
    }
    let recipe: AnalysisRecipe
    try {
      recipe = normalizeRecipe(input.recipe)
    } catch (err) {
      throw new AppError(400, 'invalid-recipe', (err as Error).message)
    }
    const maskKey = frameObjectKey(image, frame.index, 'pixels.bin').replace(/pixels\.bin$/, `masks/${randomUUID()}.rmsk`)
    await store.put(maskKey, Buffer.from(encodeMask(input.mask)), 'application/octet-stream')
    let annotation: Annotation
    try {
      annotation = await sequelize.transaction(async (transaction) => {
        // The row lock serialises concurrent saves of one frame: exactly one of two saves of the same version wins.
        await Frame.findByPk(frame.id, { transaction, lock: transaction.LOCK.UPDATE })
        const latest = await latestSaved(frame.id, transaction)
        const latestVersion = latest?.version ?? null
        if (latestVersion !== input.baseVersion) {
          const copy = await Annotation.create({ frameId: frame.id, version: null, state: 'conflict', basedOnVersion: input.baseVersion, maskKey, maskEncoding: 'rmsk-1', shapes: input.shapes, authorId: user.id }, { transaction })
          await recordAudit({ labId, actorId: user.id, action: 'mask.conflict', entityType: 'frame', entityId: frame.id, after: { basedOnVersion: input.baseVersion, latestVersion, copyId: copy.id } }, transaction)
          return copy
        }
        const created = await Annotation.create(
          { frameId: frame.id, version: (latestVersion ?? 0) + 1, state: 'saved', basedOnVersion: input.baseVersion, maskKey, maskEncoding: 'rmsk-1', shapes: input.shapes, authorId: user.id },
          { transaction },
        )
        // A new version (also after a submission or approval) is work in progress until it is submitted again.
        if (frame.annotationStatus !== 'in-progress') await Frame.update({ annotationStatus: 'in-progress' }, { where: { id: frame.id }, transaction })
        await recordAudit({ labId, actorId: user.id, action: 'mask.save', entityType: 'frame', entityId: frame.id, after: { version: created.version } }, transaction)
        return created
      })
    } catch (err) {
      await store.remove(maskKey).catch(() => {})
      throw err
    }
    if (annotation.state === 'conflict') {
      const latest = await latestSaved(frame.id)
      throw new VersionConflictError(latest?.version ?? 0, { ...toVersionDto(annotation), author: { id: user.id, name: user.name } })
    }
    const analysis = await measureAndStore(ctx, annotation, input.mask, recipe, user)
    return { annotation: { ...toVersionDto(annotation), author: { id: user.id, name: user.name } }, analysis }
  }

  async function versions(user: SessionUser, frameId: number): Promise<AnnotationVersionDto[]> {
    await frameFor(user, frameId, 'lab.read')
    const rows = await Annotation.findAll({ where: { frameId }, include: [{ model: User, as: 'author', attributes: ['id', 'name'] }], order: [['createdAt', 'DESC'], ['id', 'DESC']] })
    return rows.map(toVersionDto)
  }

  /** One saved version (by number) or a conflict copy (by annotation id, `copy:<id>`), with its mask. */
  async function read(user: SessionUser, frameId: number, which: { version?: number; id?: number } | 'latest'): Promise<AnnotationDto> {
    await frameFor(user, frameId, 'lab.read')
    const row =
      which === 'latest'
        ? await Annotation.findOne({ where: { frameId, state: 'saved' }, order: [['version', 'DESC']], include: [{ model: User, as: 'author', attributes: ['id', 'name'] }] })
        : await Annotation.findOne({ where: { frameId, ...(which.id ? { id: which.id } : { version: which.version, state: 'saved' }) }, include: [{ model: User, as: 'author', attributes: ['id', 'name'] }] })
    if (!row) throw notFound('annotation')
    const bytes = await store.get(row.maskKey)
    // Re-decode to validate what comes out of the store before handing it on.
    decodeMask(new Uint8Array(bytes))
    return { ...toVersionDto(row), frameId, mask: bytes.toString('base64'), shapes: row.shapes as AnnotationShape[] }
  }

  async function restore(user: SessionUser, frameId: number, version: number, baseVersion: number | null): Promise<SaveAnnotationResponse> {
    const old = await read(user, frameId, { version })
    const analysis = await Analysis.findOne({ where: { annotationId: old.id }, order: [['id', 'DESC']] })
    const mask = decodeMask(new Uint8Array(Buffer.from(old.mask, 'base64')))
    return save(user, frameId, { baseVersion, mask, shapes: old.shapes, recipe: (analysis?.recipe ?? {}) as Partial<AnalysisRecipe> })
  }

  async function latestAnalysis(user: SessionUser, frameId: number): Promise<AnalysisDto | null> {
    await frameFor(user, frameId, 'lab.read')
    const analysis = await Analysis.findOne({ where: { frameId }, order: [['id', 'DESC']], include: [{ model: Annotation, attributes: ['version'], required: false }] })
    if (!analysis) return null
    return toAnalysisDto(analysis, (analysis as unknown as { Annotation: Annotation | null }).Annotation?.version ?? null)
  }

  async function queue(user: SessionUser, scope: { assigneeId?: number; projectId?: number }): Promise<QueueFrameDto[]> {
    const labIds = user.memberships.map((m) => m.labId)
    const projects = await Project.findAll({ where: { labId: labIds, deletedAt: null, ...(scope.projectId ? { id: scope.projectId } : {}) } })
    if (scope.projectId && projects.length === 0) throw notFound('project')
    const images = await Image.findAll({ where: { projectId: projects.map((p) => p.id), deletedAt: null } })
    const frames = await Frame.findAll({
      where: { imageId: images.map((i) => i.id), ...(scope.assigneeId ? { assigneeId: scope.assigneeId } : { assigneeId: { [Op.ne]: null } }) },
      include: [{ model: User, as: 'assignee', attributes: ['id', 'name'] }],
      order: [['imageId', 'ASC'], ['index', 'ASC']],
      limit: 2000,
    })
    const latest = await Annotation.findAll({ attributes: ['frameId', [sequelize.fn('MAX', sequelize.col('version')), 'latest']], where: { frameId: frames.map((f) => f.id), state: 'saved' }, group: ['frameId'], raw: true })
    return frames.map((f) => {
      const image = images.find((i) => i.id === f.imageId)!
      const project = projects.find((p) => p.id === image.projectId)!
      const assignee = (f as unknown as { assignee?: User }).assignee
      const latestVersion = (latest as unknown as { frameId: number; latest: number }[]).find((l) => l.frameId === f.id)?.latest ?? null
      return {
        frameId: f.id,
        imageId: image.id,
        imageName: image.name,
        frameIndex: f.index,
        frameCount: image.frameCount,
        field: f.field,
        fieldUnit: f.fieldUnit,
        temperatureK: f.temperatureK,
        status: f.annotationStatus,
        assignee: assignee ? { id: assignee.id, name: assignee.name } : null,
        projectId: project.id,
        projectName: project.name,
        latestVersion,
        updatedAt: f.updatedAt.toISOString(),
      }
    })
  }

  async function setStatus(user: SessionUser, frameId: number, status: 'new' | 'in-progress' | 'submitted') {
    const { frame, labId } = await frameFor(user, frameId, 'mask.edit')
    const before = frame.annotationStatus
    await sequelize.transaction(async (transaction) => {
      await frame.update({ annotationStatus: status }, { transaction })
      await recordAudit({ labId, actorId: user.id, action: 'frame.status', entityType: 'frame', entityId: frame.id, before: { status: before }, after: { status } }, transaction)
    })
    return { frameId, status }
  }

  return { save, versions, read, restore, latestAnalysis, queue, setStatus }
}

export type AnnotationService = ReturnType<typeof createAnnotationService>
export { MaskEncodingError }
