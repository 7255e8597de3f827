/**
 * Deleted items: an image or project moved out of sight, restorable until `purgeAfter`, then removed for good by the
 * retention sweep (or earlier by a lab manager).
 */

export const DELETED_ITEM_KINDS = ['image', 'project'] as const
export type DeletedItemKind = (typeof DELETED_ITEM_KINDS)[number]

/** How long deleted items stay restorable (GET /api/deletion-policy). */
export interface DeletionPolicyDto {
  retentionDays: number
}

/** What DELETE /api/images/:imageId and DELETE /api/projects/:projectId answer. */
export interface DeletionReceiptDto {
  kind: DeletedItemKind
  id: number
  name: string
  deletedAt: string
  purgeAfter: string
  /** Images that went with it: 1 for an image, the project's images for a project. */
  imageCount: number
}

export interface DeletedItemDto extends DeletionReceiptDto {
  /** The project the item belongs to (for a project: itself). */
  project: { id: number; name: string }
  deletedBy: { id: number; name: string } | null
  /** Approved analyses that a purge would remove with the item. */
  approvedAnalyses: number
}

export interface DeletedItemsDto {
  retentionDays: number
  items: DeletedItemDto[]
}

/** What a purge removed: the rows of `imageCount` images and `objectsRemoved` stored files. */
export interface PurgeReceiptDto {
  kind: DeletedItemKind
  id: number
  imageCount: number
  objectsRemoved: number
}
