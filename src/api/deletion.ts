/** Deleting images and projects (restorable for the retention period), the lab's deleted items, restore and purge. */
import type { DeletedItemKind, DeletedItemsDto, DeletionPolicyDto, DeletionReceiptDto, PurgeReceiptDto } from '@shared/types/deletion'
import { http } from './http'

const collection: Record<DeletedItemKind, string> = { image: 'images', project: 'projects' }

export function getDeletionPolicy(): Promise<DeletionPolicyDto> {
  return http.get<DeletionPolicyDto>('/deletion-policy')
}

/**
 * Move an image or project to the lab's deleted items. Throws `ApiError` 409 `confirmation-needed` when approved
 * analyses would go with it and `confirmApproved` is false.
 */
export function deleteItem(kind: DeletedItemKind, id: number, confirmApproved = false): Promise<DeletionReceiptDto> {
  return http.delete<DeletionReceiptDto>(`/${collection[kind]}/${id}${confirmApproved ? '?confirmApproved=true' : ''}`)
}

/** Needs `deleted.restore` in the lab. */
export function listDeletedItems(labId: number): Promise<DeletedItemsDto> {
  return http.get<DeletedItemsDto>(`/labs/${labId}/deleted-items`)
}

/** Needs `deleted.restore`; 409 when the retention period is over or (an image) its project is deleted too. */
export function restoreDeletedItem(kind: DeletedItemKind, id: number): Promise<{ kind: DeletedItemKind; id: number; imageCount?: number }> {
  return http.post(`/deleted-items/${collection[kind]}/${id}/restore`)
}

/** Remove a deleted item for good (rows and stored files); needs `deleted.purge`. */
export function purgeDeletedItem(kind: DeletedItemKind, id: number): Promise<PurgeReceiptDto> {
  return http.delete<PurgeReceiptDto>(`/deleted-items/${collection[kind]}/${id}`)
}
