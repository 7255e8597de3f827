import { nextTick, watch, type Ref } from 'vue'

/**
 * Tabs that share one scrolling container (Element Plus scrolls `.el-tabs__content`, not each pane) would otherwise
 * open a tab at the depth the last one was left at: the results after a preview, say, scrolled down to where the
 * recipe's Preview button was. Each tab keeps its own scroll position here, and opens at the top the first time.
 */
export function useTabScrollMemory(tab: Ref<string>, container: () => HTMLElement | null | undefined): void {
  const positions = new Map<string, number>()
  watch(tab, async (next, previous) => {
    const before = container()
    if (before) positions.set(previous, before.scrollTop)
    await nextTick()
    const after = container()
    if (after) after.scrollTop = positions.get(next) ?? 0
  })
}
