import { onScopeDispose, type Ref } from 'vue'
import type { Phase } from '@/maskRaster'
import { stepBrushSize, WORKSPACE_TOOLS, type WorkspaceTool, type WorkspaceToolId } from '@/workspaceTools'

export interface WorkspaceShortcutTargets {
  tool: Ref<WorkspaceToolId>
  phase: Ref<Phase>
  brushSize: Ref<number>
  overlayVisible: Ref<boolean>
  helpOpen: Ref<boolean>
  /** Whether the person may pick this tool now. */
  mayPick: (tool: WorkspaceTool) => boolean
  /** Keys do nothing while this is true (a dialog is open). */
  paused: () => boolean
  undo: () => void
  redo: () => void
  save: () => void
  zoomBy: (factor: number) => void
  fit: () => void
  actualSize: () => void
}

const TOOL_BY_KEY = new Map(WORKSPACE_TOOLS.map((t) => [t.key, t]))

/**
 * The workspace's keyboard shortcuts on the window (the canvas itself handles Enter, Esc, Backspace, Space and the
 * keyboard cursor, and marks those events handled). Keys typed into a field are left to the field.
 */
export function useWorkspaceShortcuts(targets: WorkspaceShortcutTargets): void {
  function onKey(event: KeyboardEvent): void {
    if (event.defaultPrevented || targets.paused()) return
    if (event.target instanceof HTMLElement && event.target.closest('input, textarea, select, [contenteditable]')) return
    const key = event.key.toLowerCase()
    if (event.ctrlKey || event.metaKey) {
      const action = key === 'z' ? (event.shiftKey ? targets.redo : targets.undo) : key === 'y' ? targets.redo : key === 's' ? targets.save : null
      if (!action) return
      event.preventDefault()
      action()
      return
    }
    if (event.altKey) return
    const picked = TOOL_BY_KEY.get(key)
    if (picked && targets.mayPick(picked)) targets.tool.value = picked.id
    else if (key === 'u' || key === 'd') targets.phase.value = key === 'u' ? 1 : 0
    else if (key === 'x') targets.phase.value = targets.phase.value === 1 ? 0 : 1
    else if (key === '[' || key === ']') targets.brushSize.value = stepBrushSize(targets.brushSize.value, key === ']' ? 1 : -1)
    else if (key === 'm') targets.overlayVisible.value = !targets.overlayVisible.value
    else if (key === '+' || key === '=') targets.zoomBy(1.25)
    else if (key === '-') targets.zoomBy(0.8)
    else if (key === '0') targets.fit()
    else if (key === '1') targets.actualSize()
    else if (key === '?') targets.helpOpen.value = !targets.helpOpen.value
    else return
    event.preventDefault()
  }

  window.addEventListener('keydown', onKey)
  onScopeDispose(() => window.removeEventListener('keydown', onKey))
}
