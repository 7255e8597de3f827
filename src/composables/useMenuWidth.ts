import { computed, onBeforeUnmount, ref } from 'vue'
import { readStored, writeStored } from '@/browserStorage'

/**
 * Below this viewport width the main menu starts as icons only, so tables, plots and the canvas get the width (a
 * 1280 or 1366 px laptop beside the microscope otherwise scrolls most tables sideways).
 */
export const NARROW_SCREEN_PX = 1360

/** Where this browser remembers a person's own choice of menu width. */
export const MENU_WIDTH_STORAGE_KEY = 'remanence.menu-width'

type MenuWidth = 'wide' | 'narrow'

function storedChoice(): MenuWidth | null {
  const value = readStored(MENU_WIDTH_STORAGE_KEY)
  return value === 'wide' || value === 'narrow' ? value : null
}

/**
 * Whether the main menu is folded to icons: the person's own choice when they made one (remembered in this
 * browser), otherwise the screen width. Follows the window as it is resized.
 */
export function useMenuWidth() {
  const query = typeof window.matchMedia === 'function' ? window.matchMedia(`(max-width: ${NARROW_SCREEN_PX - 1}px)`) : null
  const narrowScreen = ref(query?.matches ?? false)
  const followScreen = (event: MediaQueryListEvent) => (narrowScreen.value = event.matches)
  query?.addEventListener('change', followScreen)
  onBeforeUnmount(() => query?.removeEventListener('change', followScreen))

  const choice = ref<MenuWidth | null>(storedChoice())
  const folded = computed(() => (choice.value === null ? narrowScreen.value : choice.value === 'narrow'))

  function toggle(): void {
    choice.value = folded.value ? 'wide' : 'narrow'
    writeStored(MENU_WIDTH_STORAGE_KEY, choice.value)
  }

  return { folded, toggle }
}
