/**
 * Deleting and the lab's deleted items: how long a deleted item stays restorable, the list of one lab's deleted
 * images and projects, and delete / restore / remove-for-good. Loads record their failure for the view's Retry;
 * changes throw `ApiError` for the dialog or row that started them (409 `confirmation-needed`, `retention-over`,
 * `project-deleted`, `duplicate-image`).
 */
import { ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { DeletedItemDto, DeletedItemKind, DeletionReceiptDto } from '@shared/types/deletion'
import { deleteItem, getDeletionPolicy, listDeletedItems, purgeDeletedItem, restoreDeletedItem } from '@/api/deletion'
import { asApiError, type ApiError } from '@/api/http'
import type { LoadStatus } from './loadStatus'
import { useProjectsStore } from './projects'
import { useSessionStore } from './session'

export const useDeletedItemsStore = defineStore('deletedItems', () => {
  const retentionDays = ref<number | null>(null)
  const labId = ref<number | null>(null)
  const items = ref<DeletedItemDto[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const projectsStore = useProjectsStore()

  /** Days a deleted item can be restored (asked once; the delete dialogs say it before anything is deleted). */
  async function ensurePolicy(): Promise<number> {
    retentionDays.value ??= (await getDeletionPolicy()).retentionDays
    return retentionDays.value
  }

  async function load(id: number): Promise<void> {
    labId.value = id
    status.value = 'loading'
    error.value = null
    try {
      const answer = await listDeletedItems(id)
      // A slower answer for a lab the person has since switched away from must not overwrite the newer one.
      if (labId.value !== id) return
      retentionDays.value = answer.retentionDays
      items.value = answer.items
      status.value = 'ready'
    } catch (e) {
      if (labId.value !== id) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  /** Project counts change with any delete or restore (and a project disappears or comes back). */
  function refreshProjects(): void {
    if (projectsStore.status !== 'idle') void projectsStore.fetchProjects()
  }

  async function remove(kind: DeletedItemKind, id: number, confirmApproved = false): Promise<DeletionReceiptDto> {
    const receipt = await deleteItem(kind, id, confirmApproved)
    refreshProjects()
    return receipt
  }

  const without = (item: DeletedItemDto) => items.value.filter((i) => !(i.kind === item.kind && i.id === item.id))

  async function restore(item: DeletedItemDto): Promise<void> {
    await restoreDeletedItem(item.kind, item.id)
    items.value = without(item)
    refreshProjects()
    // Images deleted on their own before their project was are listed again once the project is back.
    if (item.kind === 'project' && labId.value !== null) await load(labId.value)
  }

  async function purge(item: DeletedItemDto): Promise<void> {
    await purgeDeletedItem(item.kind, item.id)
    items.value = without(item)
  }

  function reset(): void {
    labId.value = null
    items.value = []
    status.value = 'idle'
    error.value = null
  }

  // Another person signing in must not see the previous person's deleted items.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return { retentionDays, labId, items, status, error, ensurePolicy, load, remove, restore, purge, reset }
})
