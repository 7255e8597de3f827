import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { DELETED_ITEM_KINDS } from '../../shared/types/deletion'
import type { DeletionService } from '../services/deletionService'

const ReceiptSchema = z.object({
  kind: z.enum(DELETED_ITEM_KINDS),
  id: z.number().int(),
  name: z.string(),
  deletedAt: z.string(),
  purgeAfter: z.string(),
  imageCount: z.number().int(),
})
const DeletedItemSchema = ReceiptSchema.extend({
  project: z.object({ id: z.number().int(), name: z.string() }),
  deletedBy: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  approvedAnalyses: z.number().int(),
})
const PurgeSchema = z.object({ kind: z.enum(DELETED_ITEM_KINDS), id: z.number().int(), imageCount: z.number().int(), objectsRemoved: z.number().int() })
const RestoreSchema = z.object({ kind: z.enum(DELETED_ITEM_KINDS), id: z.number().int(), imageCount: z.number().int().optional() })
const ConfirmQuery = z.object({ confirmApproved: z.enum(['true', 'false']).default('false') })
const imageIdParams = z.object({ imageId: z.coerce.number().int().positive() })
const projectIdParams = z.object({ projectId: z.coerce.number().int().positive() })

export function registerDeletionRoutes(api: ApiDefinition, deletion: DeletionService): void {
  apiRoute(api, {
    method: 'get',
    path: '/deletion-policy',
    summary: 'How many days a deleted image or project can be restored',
    tags: ['deleted items'],
    access: 'signed-in',
    responses: { 200: { description: 'The retention period', schema: z.object({ retentionDays: z.number().int() }) } },
    handler: () => deletion.policy(),
  })

  apiRoute(api, {
    method: 'delete',
    path: '/images/:imageId',
    summary: 'Delete an image (restorable for the retention period; audited). With approved analyses, confirmApproved=true is needed',
    tags: ['deleted items'],
    access: 'signed-in',
    params: imageIdParams,
    query: ConfirmQuery,
    responses: {
      200: { description: 'Deleted', schema: ReceiptSchema },
      403: { description: 'Role may not delete images, or (microscopists) not this person\u2019s upload' },
      404: { description: 'No such image' },
      409: { description: 'confirmation-needed: the image has approved analyses' },
    },
    handler: (req, _res, { params, query }) => deletion.deleteImage(currentUser(req), params.imageId, { confirmApproved: query.confirmApproved === 'true' }),
  })

  apiRoute(api, {
    method: 'delete',
    path: '/projects/:projectId',
    summary: 'Delete a project with its images (restorable for the retention period; audited). With approved analyses, confirmApproved=true is needed',
    tags: ['deleted items'],
    access: 'signed-in',
    params: projectIdParams,
    query: ConfirmQuery,
    responses: {
      200: { description: 'Deleted', schema: ReceiptSchema },
      403: { description: 'Role may not delete projects' },
      404: { description: 'No such project' },
      409: { description: 'confirmation-needed: images of the project have approved analyses' },
    },
    handler: (req, _res, { params, query }) => deletion.deleteProject(currentUser(req), params.projectId, { confirmApproved: query.confirmApproved === 'true' }),
  })

  apiRoute(api, {
    method: 'get',
    path: '/labs/:labId/deleted-items',
    summary: 'The lab\u2019s deleted projects and images, newest first, with when each is removed for good',
    tags: ['deleted items'],
    access: 'signed-in',
    params: z.object({ labId: z.coerce.number().int().positive() }),
    responses: {
      200: { description: 'Deleted items', schema: z.object({ retentionDays: z.number().int(), items: z.array(DeletedItemSchema) }) },
      403: { description: 'Role may not restore deleted items' },
      404: { description: 'No such lab' },
    },
    handler: (req, _res, { params }) => deletion.listDeleted(currentUser(req), params.labId),
  })

  const restoreConflicts = 'not-deleted, retention-over, project-deleted (restore the project first) or duplicate-image'
  apiRoute(api, {
    method: 'post',
    path: '/deleted-items/images/:imageId/restore',
    summary: 'Restore a deleted image (audited)',
    tags: ['deleted items'],
    access: 'signed-in',
    params: imageIdParams,
    responses: { 200: { description: 'Restored', schema: RestoreSchema }, 403: { description: 'Role may not restore' }, 404: { description: 'No such image' }, 409: { description: restoreConflicts } },
    handler: (req, _res, { params }) => deletion.restoreImage(currentUser(req), params.imageId),
  })
  apiRoute(api, {
    method: 'post',
    path: '/deleted-items/projects/:projectId/restore',
    summary: 'Restore a deleted project with the images deleted with it (audited)',
    tags: ['deleted items'],
    access: 'signed-in',
    params: projectIdParams,
    responses: { 200: { description: 'Restored', schema: RestoreSchema }, 403: { description: 'Role may not restore' }, 404: { description: 'No such project' }, 409: { description: restoreConflicts } },
    handler: (req, _res, { params }) => deletion.restoreProject(currentUser(req), params.projectId),
  })

  const purgeResponses = (what: string) => ({
    200: { description: 'Removed for good', schema: PurgeSchema },
    403: { description: 'Role may not remove deleted items' },
    404: { description: `No such ${what}` },
    409: { description: 'not-deleted: only deleted items can be removed for good' },
  })
  apiRoute(api, {
    method: 'delete',
    path: '/deleted-items/images/:imageId',
    summary: 'Remove a deleted image for good: its rows and every stored object (audited with the SHA-256 of the original)',
    tags: ['deleted items'],
    access: 'signed-in',
    params: imageIdParams,
    responses: purgeResponses('image'),
    handler: (req, _res, { params }) => deletion.purgeImage(currentUser(req), params.imageId),
  })
  apiRoute(api, {
    method: 'delete',
    path: '/deleted-items/projects/:projectId',
    summary: 'Remove a deleted project for good with all its images (audited with the SHA-256 of every original)',
    tags: ['deleted items'],
    access: 'signed-in',
    params: projectIdParams,
    responses: purgeResponses('project'),
    handler: (req, _res, { params }) => deletion.purgeProject(currentUser(req), params.projectId),
  })
}
