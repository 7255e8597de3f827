import { describe, expect, it } from 'vitest'
import { nextTick, ref } from 'vue'
import { useTabScrollMemory } from '@/composables/useTabScrollMemory'

describe('useTabScrollMemory', () => {
  it('When tabs share one scrolling container, then each opens where it was left, and at the top the first time', async () => {
    const container = document.createElement('div')
    const tab = ref('recipe')
    useTabScrollMemory(tab, () => container)

    container.scrollTop = 420
    tab.value = 'results'
    await nextTick()
    await nextTick()
    expect(container.scrollTop).toBe(0)

    container.scrollTop = 130
    tab.value = 'recipe'
    await nextTick()
    await nextTick()
    expect(container.scrollTop).toBe(420)

    tab.value = 'results'
    await nextTick()
    await nextTick()
    expect(container.scrollTop).toBe(130)
  })

  it('When the container is not there (yet), then nothing breaks', async () => {
    const tab = ref('recipe')
    useTabScrollMemory(tab, () => null)
    tab.value = 'results'
    await nextTick()
    await nextTick()
    expect(tab.value).toBe('results')
  })
})
