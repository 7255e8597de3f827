import { onScopeDispose } from 'vue'
import { onBeforeRouteLeave } from 'vue-router'
import { ElMessageBox } from 'element-plus'

export interface UnsavedChangesOptions {
  /** There are edits a save would keep (and saving is possible now). */
  pending: () => boolean
  /** Save; resolves true when saved. */
  save: () => Promise<boolean>
  /** The last save failed for want of a connection (retried when the browser is back online). */
  offline: () => boolean
}

/**
 * Keep edits when the person leaves: navigating away inside the app saves first (and asks before leaving when that
 * fails); a tab being hidden saves (it may be closed without notice); closing or reloading with unsaved edits asks
 * the browser's own question; coming back online retries a save that failed offline.
 */
export function useUnsavedChangesGuard(options: UnsavedChangesOptions): void {
  onBeforeRouteLeave(async () => {
    if (!options.pending()) return true
    if (await options.save()) return true
    try {
      await ElMessageBox.confirm('Your latest edits could not be saved. Leave anyway and lose them?', 'Unsaved changes', {
        confirmButtonText: 'Leave without saving',
        cancelButtonText: 'Stay',
        type: 'warning',
      })
      return true
    } catch {
      return false
    }
  })

  function onBeforeUnload(event: BeforeUnloadEvent): void {
    if (!options.pending()) return
    event.preventDefault()
    event.returnValue = ''
  }

  function onVisibility(): void {
    if (document.visibilityState === 'hidden' && options.pending()) void options.save()
  }

  function onOnline(): void {
    if (options.offline()) void options.save()
  }

  window.addEventListener('beforeunload', onBeforeUnload)
  window.addEventListener('online', onOnline)
  document.addEventListener('visibilitychange', onVisibility)
  onScopeDispose(() => {
    window.removeEventListener('beforeunload', onBeforeUnload)
    window.removeEventListener('online', onOnline)
    document.removeEventListener('visibilitychange', onVisibility)
  })
}
