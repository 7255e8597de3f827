/**
 * Deleting images and projects, softly first (issue #9, data safety).
 *
 * A delete tells this story: check access (a microscopist only images they uploaded) → refuse without an explicit
 * confirmation when approved analyses would go with it → set `deletedAt` → audit. A project's images get the
 * project's very `deletedAt`, which is how a restore of the project tells them from images deleted on their own before.
 * Nothing is moved or rewritten, so a restore (clearing `deletedAt` within the retention period) gives back the image
 * byte for byte, with its masks, analyses and reviews.
 *
 * A purge — by a lab manager on demand, or by the retention sweep once `purgeAfter` has passed — removes the image row
 * (frames, masks, analyses, reviews, comments and stack runs follow by ON DELETE CASCADE) and every stored object of
 * the image: the original, the per-frame preview, thumbnail and pixels, the mask of every annotation version and
 * stack-run frame, and anything else left in the image's folder. Each purge is audited with who (null for the sweep),
 * what, when and the SHA-256 of the original.
 */
import { Op, QueryTypes, type Sequelize, type Transaction } from 'sequelize'
import { roleAllows, type LabAction } from '../../shared/auth/permissions'
import type { DeletedItemDto, DeletedItemKind, DeletedItemsDto, DeletionPolicyDto, DeletionReceiptDto, PurgeReceiptDto } from '../../shared/types/deletion'
import type { AppConfig } from '../config'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, forbidden, notFound } from '../errors'
import { Annotation, AuditEvent, Frame, Image, Project, StackFrameResult, StackRun, User } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import { frameObjectKey } from './imageService'
import { recordAudit } from './auditService'

const DAY_MS = 86_400_000
const FRAME_OBJECT_KINDS = ['preview.png', 'thumbnail.png', 'pixels.bin'] as const
/** Object removals in flight at once during a purge (a stack has three objects per frame). */
const REMOVAL_CONCURRENCY = 16

export type PurgeReason = 'on-request' | 'retention-expired'

export interface SweepReport {
  purgedProjects: number
  purgedImages: number
  objectsRemoved: number
  failures: { kind: DeletedItemKind; id: number; message: string }[]
}

type ImageWithProject = Image & { Project: Project }

function mayInLab(user: SessionUser, labId: number, action: LabAction): boolean {
  const membership = user.memberships.find((m) => m.labId === labId)
  return membership !== undefined && roleAllows(membership.role, action)
}

const analysesWord = (n: number) => (n === 1 ? '1 approved analysis' : `${n} approved analyses`)

/** The folder every object of an image lives in (`labs/<lab>/images/<uuid>`), with a trailing slash. */
function imageFolder(image: { objectKey: string }): string {
  return `${image.objectKey.replace(/\/original[^/]*$/, '')}/`
}

export function createDeletionService(deps: { sequelize: Sequelize; store: ObjectStore; config: Pick<AppConfig, 'deleteRetentionDays'> }) {
  const { sequelize, store } = deps
  const retentionDays = deps.config.deleteRetentionDays
  const purgeAfterOf = (deletedAt: Date) => new Date(deletedAt.getTime() + retentionDays * DAY_MS)

  function policy(): DeletionPolicyDto {
    return { retentionDays }
  }

  /** Approved analyses per image id (images without any are absent). */
  async function approvedAnalysesOf(imageIds: number[]): Promise<Map<number, number>> {
    if (imageIds.length === 0) return new Map()
    const rows = await sequelize.query<{ imageId: number; n: string }>(
      `SELECT f.image_id AS "imageId", COUNT(*) AS n FROM analyses a JOIN frames f ON f.id = a.frame_id
       WHERE f.image_id IN (:imageIds) AND a.status = 'approved' GROUP BY f.image_id`,
      { replacements: { imageIds }, type: QueryTypes.SELECT },
    )
    return new Map(rows.map((r) => [r.imageId, Number(r.n)]))
  }

  function confirmationNeeded(what: string, approved: number): AppError {
    return new AppError(
      409,
      'confirmation-needed',
      `${what} has ${analysesWord(approved)}. Confirm to delete it with them; a PI or lab administrator can restore it for ${retentionDays} days.`,
    )
  }

  async function loadImage(imageId: number): Promise<ImageWithProject | null> {
    return (await Image.findByPk(imageId, { include: [{ model: Project }] })) as ImageWithProject | null
  }

  /** Soft-delete one image. Approved analyses need `confirmApproved`, so reviewed work is not lost by a stray click. */
  async function deleteImage(user: SessionUser, imageId: number, options: { confirmApproved: boolean }): Promise<DeletionReceiptDto> {
    const image = await loadImage(imageId)
    if (!image || image.deletedAt !== null || image.Project.deletedAt !== null) throw notFound('image')
    const { labId } = image.Project
    assertLabAction(user, labId, 'image.delete', 'image')
    if (image.uploadedById !== user.id && !mayInLab(user, labId, 'image.deleteOthers')) {
      throw forbidden('You can delete only images you uploaded; ask a PI or lab administrator to delete this one.')
    }
    const approved = (await approvedAnalysesOf([image.id])).get(image.id) ?? 0
    if (approved > 0 && !options.confirmApproved) throw confirmationNeeded(`"${image.name}"`, approved)
    const deletedAt = new Date()
    await sequelize.transaction(async (transaction) => {
      const [updated] = await Image.update({ deletedAt }, { where: { id: image.id, deletedAt: null }, transaction })
      if (updated === 0) throw notFound('image')
      await recordAudit(
        {
          labId,
          actorId: user.id,
          action: 'image.delete',
          entityType: 'image',
          entityId: image.id,
          before: { name: image.name, projectId: image.projectId, sha256: image.sha256 },
          after: { deletedAt, purgeAfter: purgeAfterOf(deletedAt), approvedAnalyses: approved },
        },
        transaction,
      )
    })
    return { kind: 'image', id: image.id, name: image.name, deletedAt: deletedAt.toISOString(), purgeAfter: purgeAfterOf(deletedAt).toISOString(), imageCount: 1 }
  }

  /** Soft-delete a project and, with the same `deletedAt`, every image of it that is not deleted already. */
  async function deleteProject(user: SessionUser, projectId: number, options: { confirmApproved: boolean }): Promise<DeletionReceiptDto> {
    const project = await Project.findOne({ where: { id: projectId, deletedAt: null } })
    if (!project) throw notFound('project')
    assertLabAction(user, project.labId, 'project.delete', 'project')
    const imageIds = (await Image.findAll({ where: { projectId, deletedAt: null }, attributes: ['id'] })).map((i) => i.id)
    const approved = [...(await approvedAnalysesOf(imageIds)).values()].reduce((sum, n) => sum + n, 0)
    if (approved > 0 && !options.confirmApproved) throw confirmationNeeded(`Project "${project.name}"`, approved)
    const deletedAt = new Date()
    const imageCount = await sequelize.transaction(async (transaction) => {
      const [updated] = await Project.update({ deletedAt }, { where: { id: projectId, deletedAt: null }, transaction })
      if (updated === 0) throw notFound('project')
      const [images] = await Image.update({ deletedAt }, { where: { projectId, deletedAt: null }, transaction })
      await recordAudit(
        {
          labId: project.labId,
          actorId: user.id,
          action: 'project.delete',
          entityType: 'project',
          entityId: projectId,
          before: { name: project.name },
          after: { deletedAt, purgeAfter: purgeAfterOf(deletedAt), images, approvedAnalyses: approved },
        },
        transaction,
      )
      return images
    })
    return { kind: 'project', id: projectId, name: project.name, deletedAt: deletedAt.toISOString(), purgeAfter: purgeAfterOf(deletedAt).toISOString(), imageCount }
  }

  /** Who deleted each item, from the newest delete event in the audit log (an item may be deleted, restored, deleted again). */
  async function deletersOf(imageIds: number[], projectIds: number[]): Promise<Map<string, { id: number; name: string }>> {
    const events = await AuditEvent.findAll({
      where: {
        [Op.or]: [
          { action: 'image.delete', entityType: 'image', entityId: imageIds },
          { action: 'project.delete', entityType: 'project', entityId: projectIds },
        ],
      },
      attributes: ['entityType', 'entityId', 'actorId'],
      order: [['id', 'ASC']],
    })
    const users = await User.findAll({ where: { id: [...new Set(events.map((e) => e.actorId).filter((id): id is number => id !== null))] }, attributes: ['id', 'name'] })
    const result = new Map<string, { id: number; name: string }>()
    for (const event of events) {
      const user = users.find((u) => u.id === event.actorId)
      if (user) result.set(`${event.entityType}:${event.entityId}`, { id: user.id, name: user.name })
    }
    return result
  }

  /**
   * The lab's deleted items, newest first: deleted projects, and images deleted on their own from projects that are
   * not deleted (an image of a deleted project comes back or goes with the project).
   */
  async function listDeleted(user: SessionUser, labId: number): Promise<DeletedItemsDto> {
    assertLabAction(user, labId, 'deleted.restore', 'lab')
    const projects = await Project.findAll({ where: { labId, deletedAt: { [Op.ne]: null } } })
    const images = (await Image.findAll({
      where: { deletedAt: { [Op.ne]: null } },
      include: [{ model: Project, required: true, where: { labId, deletedAt: null } }],
    })) as ImageWithProject[]
    const projectImages = await Image.findAll({ where: { projectId: projects.map((p) => p.id) }, attributes: ['id', 'projectId'] })
    const approved = await approvedAnalysesOf([...images.map((i) => i.id), ...projectImages.map((i) => i.id)])
    const deleters = await deletersOf(
      images.map((i) => i.id),
      projects.map((p) => p.id),
    )
    const items: DeletedItemDto[] = [
      ...projects.map((p) => {
        const ids = projectImages.filter((i) => i.projectId === p.id).map((i) => i.id)
        return {
          kind: 'project' as const,
          id: p.id,
          name: p.name,
          deletedAt: p.deletedAt!.toISOString(),
          purgeAfter: purgeAfterOf(p.deletedAt!).toISOString(),
          imageCount: ids.length,
          project: { id: p.id, name: p.name },
          deletedBy: deleters.get(`project:${p.id}`) ?? null,
          approvedAnalyses: ids.reduce((sum, id) => sum + (approved.get(id) ?? 0), 0),
        }
      }),
      ...images.map((i) => ({
        kind: 'image' as const,
        id: i.id,
        name: i.name,
        deletedAt: i.deletedAt!.toISOString(),
        purgeAfter: purgeAfterOf(i.deletedAt!).toISOString(),
        imageCount: 1,
        project: { id: i.Project.id, name: i.Project.name },
        deletedBy: deleters.get(`image:${i.id}`) ?? null,
        approvedAnalyses: approved.get(i.id) ?? 0,
      })),
    ]
    items.sort((a, b) => b.deletedAt.localeCompare(a.deletedAt) || a.kind.localeCompare(b.kind) || b.id - a.id)
    return { retentionDays, items }
  }

  function assertRestorable(name: string, deletedAt: Date | null): asserts deletedAt is Date {
    if (deletedAt === null) throw new AppError(409, 'not-deleted', `"${name}" is not deleted.`)
    if (purgeAfterOf(deletedAt).getTime() <= Date.now()) {
      throw new AppError(409, 'retention-over', `"${name}" was deleted more than ${retentionDays} days ago and can no longer be restored.`)
    }
  }

  async function restoreImage(user: SessionUser, imageId: number): Promise<{ kind: 'image'; id: number }> {
    const image = await loadImage(imageId)
    if (!image) throw notFound('image')
    const { labId } = image.Project
    assertLabAction(user, labId, 'deleted.restore', 'image')
    assertRestorable(image.name, image.deletedAt)
    if (image.Project.deletedAt !== null) {
      throw new AppError(409, 'project-deleted', `"${image.name}" is in the deleted project "${image.Project.name}": restore the project first.`)
    }
    // The upload's duplicate check looks at live images only, so the same file may have come back meanwhile.
    const twin = await Image.findOne({ where: { projectId: image.projectId, sha256: image.sha256, deletedAt: null } })
    if (twin) throw new AppError(409, 'duplicate-image', `The same file is in the project again as image #${twin.id} "${twin.name}"; delete that one first to restore this one.`)
    const deletedAt = image.deletedAt
    await sequelize.transaction(async (transaction) => {
      const [updated] = await Image.update({ deletedAt: null }, { where: { id: imageId, deletedAt }, transaction })
      if (updated === 0) throw new AppError(409, 'changed-meanwhile', `"${image.name}" was changed by someone else meanwhile; reload the list.`)
      await recordAudit({ labId, actorId: user.id, action: 'image.restore', entityType: 'image', entityId: imageId, before: { deletedAt }, after: { deletedAt: null } }, transaction)
    })
    return { kind: 'image', id: imageId }
  }

  /** Bring back a project and the images deleted with it (images deleted on their own before stay deleted). */
  async function restoreProject(user: SessionUser, projectId: number): Promise<{ kind: 'project'; id: number; imageCount: number }> {
    const project = await Project.findByPk(projectId)
    if (!project) throw notFound('project')
    assertLabAction(user, project.labId, 'deleted.restore', 'project')
    assertRestorable(project.name, project.deletedAt)
    const deletedAt = project.deletedAt
    const imageCount = await sequelize.transaction(async (transaction) => {
      const [updated] = await Project.update({ deletedAt: null }, { where: { id: projectId, deletedAt }, transaction })
      if (updated === 0) throw new AppError(409, 'changed-meanwhile', `"${project.name}" was changed by someone else meanwhile; reload the list.`)
      const [images] = await Image.update({ deletedAt: null }, { where: { projectId, deletedAt }, transaction })
      await recordAudit({ labId: project.labId, actorId: user.id, action: 'project.restore', entityType: 'project', entityId: projectId, before: { deletedAt }, after: { deletedAt: null, images } }, transaction)
      return images
    })
    return { kind: 'project', id: projectId, imageCount }
  }

  /** Every stored object of an image: those its rows name, and whatever else is in its folder (e.g. a mask save that died before its row). */
  async function objectKeysOf(image: Image, transaction: Transaction): Promise<string[]> {
    const keys = new Set<string>([image.objectKey])
    for (let index = 0; index < image.frameCount; index++) for (const kind of FRAME_OBJECT_KINDS) keys.add(frameObjectKey(image, index, kind))
    const annotations = await Annotation.findAll({ attributes: ['maskKey'], include: [{ model: Frame, attributes: [], where: { imageId: image.id } }], transaction })
    for (const a of annotations) keys.add(a.maskKey)
    const runIds = (await StackRun.findAll({ where: { imageId: image.id }, attributes: ['id'], transaction })).map((r) => r.id)
    const results = runIds.length ? await StackFrameResult.findAll({ where: { runId: runIds, maskKey: { [Op.ne]: null } }, attributes: ['maskKey'], transaction }) : []
    for (const r of results) keys.add(r.maskKey!)
    for (const key of await store.list(imageFolder(image))) keys.add(key)
    return [...keys]
  }

  async function removeObjects(keys: string[]): Promise<void> {
    for (let start = 0; start < keys.length; start += REMOVAL_CONCURRENCY) {
      await Promise.all(keys.slice(start, start + REMOVAL_CONCURRENCY).map((key) => store.remove(key)))
    }
  }

  /** Deleted at all, or (for the sweep) deleted no later than `deletedUpTo`: checked again under the row lock. */
  const deletedWhere = (deletedUpTo?: Date) => (deletedUpTo ? { [Op.lte]: deletedUpTo } : { [Op.ne]: null })

  /**
   * Remove a deleted image for good. Returns the number of objects removed, or null when the image is no longer
   * deleted as asked (restored or purged meanwhile: the row lock makes the other party finish first).
   */
  async function purgeImageNow(imageId: number, labId: number, actorId: number | null, reason: PurgeReason, deletedUpTo?: Date): Promise<number | null> {
    return sequelize.transaction(async (transaction) => {
      const image = await Image.findOne({ where: { id: imageId, deletedAt: deletedWhere(deletedUpTo) }, lock: transaction.LOCK.UPDATE, transaction })
      if (!image) return null
      const keys = await objectKeysOf(image, transaction)
      await image.destroy({ transaction })
      await recordAudit(
        {
          labId,
          actorId,
          action: 'image.purge',
          entityType: 'image',
          entityId: image.id,
          before: { name: image.name, projectId: image.projectId, sha256: image.sha256, byteSize: Number(image.byteSize), frameCount: image.frameCount, uploadedById: image.uploadedById, deletedAt: image.deletedAt },
          after: { reason, objectsRemoved: keys.length },
        },
        transaction,
      )
      // The objects go last, still inside the transaction: if the store fails, the rows come back, the image stays
      // deleted and the purge can simply run again (removing an object that is already gone is not an error).
      await removeObjects(keys)
      return keys.length
    })
  }

  /** Remove a deleted project for good: each of its images (one transaction each, so a retry resumes), then the project. */
  async function purgeProjectNow(projectId: number, actorId: number | null, reason: PurgeReason, deletedUpTo?: Date): Promise<{ imageCount: number; objectsRemoved: number } | null> {
    const project = await sequelize.transaction(async (transaction) => {
      const locked = await Project.findOne({ where: { id: projectId, deletedAt: deletedWhere(deletedUpTo) }, lock: transaction.LOCK.UPDATE, transaction })
      // An upload that raced the project's delete left a live image in it; it is unreachable, so it goes too.
      if (locked) await Image.update({ deletedAt: locked.deletedAt }, { where: { projectId, deletedAt: null }, transaction })
      return locked
    })
    if (!project) return null
    const images = await Image.findAll({ where: { projectId }, attributes: ['id', 'name', 'sha256'], order: [['id', 'ASC']] })
    let objectsRemoved = 0
    for (const image of images) objectsRemoved += (await purgeImageNow(image.id, project.labId, actorId, reason)) ?? 0
    return sequelize.transaction(async (transaction) => {
      const locked = await Project.findOne({ where: { id: projectId, deletedAt: deletedWhere(deletedUpTo) }, lock: transaction.LOCK.UPDATE, transaction })
      if (!locked || (await Image.count({ where: { projectId }, transaction })) > 0) return null
      await locked.destroy({ transaction })
      await recordAudit(
        {
          labId: project.labId,
          actorId,
          action: 'project.purge',
          entityType: 'project',
          entityId: projectId,
          before: { name: project.name, deletedAt: project.deletedAt, images: images.map((i) => ({ id: i.id, name: i.name, sha256: i.sha256 })) },
          after: { reason, objectsRemoved },
        },
        transaction,
      )
      return { imageCount: images.length, objectsRemoved }
    })
  }

  async function purgeImage(user: SessionUser, imageId: number): Promise<PurgeReceiptDto> {
    const image = await loadImage(imageId)
    if (!image) throw notFound('image')
    assertLabAction(user, image.Project.labId, 'deleted.purge', 'image')
    if (image.deletedAt === null) throw new AppError(409, 'not-deleted', `"${image.name}" is not deleted; only deleted items can be removed for good.`)
    const objectsRemoved = await purgeImageNow(image.id, image.Project.labId, user.id, 'on-request')
    if (objectsRemoved === null) throw new AppError(409, 'changed-meanwhile', `"${image.name}" was restored or removed by someone else meanwhile; reload the list.`)
    return { kind: 'image', id: imageId, imageCount: 1, objectsRemoved }
  }

  async function purgeProject(user: SessionUser, projectId: number): Promise<PurgeReceiptDto> {
    const project = await Project.findByPk(projectId)
    if (!project) throw notFound('project')
    assertLabAction(user, project.labId, 'deleted.purge', 'project')
    if (project.deletedAt === null) throw new AppError(409, 'not-deleted', `"${project.name}" is not deleted; only deleted items can be removed for good.`)
    const outcome = await purgeProjectNow(projectId, user.id, 'on-request')
    if (outcome === null) throw new AppError(409, 'changed-meanwhile', `"${project.name}" was restored or changed by someone else meanwhile; reload the list.`)
    return { kind: 'project', id: projectId, ...outcome }
  }

  /**
   * The retention sweep: remove for good every project and image deleted at least `retentionDays` before `now`.
   * Safe to run from several workers at once (row locks); one item's failure is reported and the others go on.
   */
  async function purgeExpired(now: Date = new Date()): Promise<SweepReport> {
    const cutoff = new Date(now.getTime() - retentionDays * DAY_MS)
    const report: SweepReport = { purgedProjects: 0, purgedImages: 0, objectsRemoved: 0, failures: [] }
    for (const project of await Project.findAll({ where: { deletedAt: deletedWhere(cutoff) }, attributes: ['id'], order: [['id', 'ASC']] })) {
      try {
        const outcome = await purgeProjectNow(project.id, null, 'retention-expired', cutoff)
        if (!outcome) continue
        report.purgedProjects++
        report.purgedImages += outcome.imageCount
        report.objectsRemoved += outcome.objectsRemoved
      } catch (err) {
        report.failures.push({ kind: 'project', id: project.id, message: (err as Error).message })
      }
    }
    const images = (await Image.findAll({ where: { deletedAt: deletedWhere(cutoff) }, include: [{ model: Project, attributes: ['labId'] }], order: [['id', 'ASC']] })) as ImageWithProject[]
    for (const image of images) {
      try {
        const removed = await purgeImageNow(image.id, image.Project.labId, null, 'retention-expired', cutoff)
        if (removed === null) continue
        report.purgedImages++
        report.objectsRemoved += removed
      } catch (err) {
        report.failures.push({ kind: 'image', id: image.id, message: (err as Error).message })
      }
    }
    return report
  }

  return { policy, deleteImage, deleteProject, listDeleted, restoreImage, restoreProject, purgeImage, purgeProject, purgeExpired }
}

export type DeletionService = ReturnType<typeof createDeletionService>
