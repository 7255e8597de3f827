import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { defineComponent, h, nextTick } from 'vue'
import { mount } from '@vue/test-utils'
import { MENU_WIDTH_STORAGE_KEY, NARROW_SCREEN_PX, useMenuWidth } from '@/composables/useMenuWidth'

/** A media query list whose `matches` the test sets, telling listeners like a browser when the window is resized. */
function stubScreen(widthPx: number) {
  const listeners = new Set<(event: MediaQueryListEvent) => void>()
  let width = widthPx
  const maxWidth = (query: string) => Number(/max-width:\s*(\d+)px/.exec(query)?.[1])
  const queries: string[] = []
  vi.stubGlobal('matchMedia', (query: string) => {
    queries.push(query)
    return {
      get matches() {
        return width <= maxWidth(query)
      },
      addEventListener: (_: string, listener: (event: MediaQueryListEvent) => void) => listeners.add(listener),
      removeEventListener: (_: string, listener: (event: MediaQueryListEvent) => void) => listeners.delete(listener),
    }
  })
  return {
    queries,
    listeners,
    resize(to: number) {
      width = to
      for (const listener of listeners) listener({ matches: width <= maxWidth(queries[0]) } as MediaQueryListEvent)
    },
  }
}

function mountMenu() {
  let menu!: ReturnType<typeof useMenuWidth>
  const Host = defineComponent({
    setup() {
      menu = useMenuWidth()
      return () => h('span', menu.folded.value ? 'folded' : 'wide')
    },
  })
  const wrapper = mount(Host)
  return { wrapper, menu }
}

beforeEach(() => window.localStorage.clear())
afterEach(() => {
  window.localStorage.clear()
})

describe('useMenuWidth', () => {
  it('When the screen is narrower than the threshold, then the menu starts folded; wide screens start wide', () => {
    stubScreen(1280)
    expect(mountMenu().menu.folded.value).toBe(true)
    stubScreen(1440)
    expect(mountMenu().menu.folded.value).toBe(false)
    stubScreen(NARROW_SCREEN_PX)
    expect(mountMenu().menu.folded.value).toBe(false)
  })

  it('When the window is resized across the threshold, then the menu follows it, and stops listening when unmounted', async () => {
    const screen = stubScreen(1440)
    const { wrapper, menu } = mountMenu()
    screen.resize(1200)
    await nextTick()
    expect(menu.folded.value).toBe(true)
    expect(wrapper.text()).toBe('folded')
    wrapper.unmount()
    expect(screen.listeners.size).toBe(0)
  })

  it('When the person chooses a width, then it wins over the screen and is remembered in this browser', () => {
    const screen = stubScreen(1280)
    const first = mountMenu()
    first.menu.toggle()
    expect(first.menu.folded.value).toBe(false)
    expect(window.localStorage.getItem(MENU_WIDTH_STORAGE_KEY)).toBe('wide')
    screen.resize(1100)
    expect(first.menu.folded.value).toBe(false)
    // A later visit on the same narrow screen keeps the choice.
    expect(mountMenu().menu.folded.value).toBe(false)
    const second = mountMenu()
    second.menu.toggle()
    expect(window.localStorage.getItem(MENU_WIDTH_STORAGE_KEY)).toBe('narrow')
  })

  it('When storage is switched off, then the screen decides and a choice still works for the visit', () => {
    stubScreen(1280)
    vi.spyOn(Storage.prototype, 'getItem').mockImplementation(() => {
      throw new DOMException('blocked', 'SecurityError')
    })
    vi.spyOn(Storage.prototype, 'setItem').mockImplementation(() => {
      throw new DOMException('blocked', 'SecurityError')
    })
    const { menu } = mountMenu()
    expect(menu.folded.value).toBe(true)
    menu.toggle()
    expect(menu.folded.value).toBe(false)
    vi.restoreAllMocks()
  })
})
