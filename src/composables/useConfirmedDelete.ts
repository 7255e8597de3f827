import { ElMessage, ElMessageBox } from 'element-plus'
import type { DeletedItemKind, DeletionReceiptDto } from '@shared/types/deletion'
import { isApiError } from '@/api/http'
import { useDeletedItemsStore } from '@/stores/deletedItems'
import { useAsyncAction } from './useAsyncAction'

export interface DeleteTarget {
  kind: DeletedItemKind
  id: number
  name: string
}

export const daysText = (days: number) => (days === 1 ? '1 day' : `${days} days`)

function confirmed(message: string, title: string, confirmButtonText: string): Promise<boolean> {
  return ElMessageBox.confirm(message, title, { confirmButtonText, cancelButtonText: 'Cancel', type: 'warning' }).then(
    () => true,
    () => false,
  )
}

/**
 * The delete flow of an image or project: say what happens (restorable for N days, and by whom) → delete → when the
 * server answers 409 `confirmation-needed` (approved analyses would go with it), ask once more with its message, so
 * nobody loses reviewed work by a stray click. `run` resolves to the receipt, or `null`/`undefined` when cancelled or
 * refused (refusals are reported once, by `useAsyncAction`).
 */
export function useConfirmedDelete() {
  const store = useDeletedItemsStore()

  return useAsyncAction(async (target: DeleteTarget): Promise<DeletionReceiptDto | null> => {
    const days = daysText(await store.ensurePolicy())
    const what = target.kind === 'image' ? `“${target.name}”` : `Project “${target.name}” with all its images`
    const title = target.kind === 'image' ? 'Delete this image?' : 'Delete this project?'
    if (!(await confirmed(`${what} moves to Deleted items. A PI or lab administrator can restore it for ${days}; after that it is removed for good.`, title, 'Delete'))) {
      return null
    }
    let receipt: DeletionReceiptDto
    try {
      receipt = await store.remove(target.kind, target.id)
    } catch (e) {
      if (!isApiError(e) || e.code !== 'confirmation-needed') throw e
      if (!(await confirmed(e.message, 'Approved work goes with it', 'Delete with approved analyses'))) return null
      receipt = await store.remove(target.kind, target.id, true)
    }
    ElMessage.success({ message: `“${target.name}” deleted; it stays restorable for ${days}.`, grouping: true })
    return receipt
  })
}
