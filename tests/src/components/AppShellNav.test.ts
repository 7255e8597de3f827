import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { createAppRouter } from '@/router'
import AppShellNav from '@/components/AppShellNav.vue'
import { useSessionStore } from '@/stores/session'
import { jsonResponse, stubFetch } from '../fakeApi'

let pinia: Pinia

async function mountNav(folded: boolean) {
  stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 7, email: 'jonas.adeyemi@kestrel-lab.example', name: 'Jonas Adeyemi', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'reviewer' }], csrfToken: 't' }),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/review')
  await useSessionStore().restore()
  const wrapper = mount(AppShellNav, { props: { folded }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('AppShellNav', () => {
  it('When wide, then every entry shows its label and the width button offers "Icons only"', async () => {
    const wrapper = await mountNav(false)
    const labels = wrapper.findAll('[role="menuitem"]').map((item) => item.text())
    expect(labels).toContain('Review')
    expect(labels).toContain('Images')
    expect(wrapper.find('.el-menu--collapse').exists()).toBe(false)
    expect(wrapper.find('[data-testid="menu-width"]').text()).toBe('Icons only')
    expect(wrapper.find('.app-shell-nav__brand').text()).toBe('Remanence')
  })

  it('When folded, then entries show icons named for screen readers, the brand keeps its name, and the button offers the labels back', async () => {
    const wrapper = await mountNav(true)
    expect(wrapper.find('.el-menu--collapse').exists()).toBe(true)
    const names = wrapper.findAll('[role="menuitem"]').map((item) => item.attributes('aria-label'))
    expect(names).toContain('Review')
    expect(names).toContain('Images')
    expect(wrapper.find('.app-shell-nav__brand').attributes('aria-label')).toBe('Remanence, overview')
    const button = wrapper.find('[data-testid="menu-width"]')
    expect(button.text()).toBe('Show menu labels')
    expect(button.attributes('title')).toBe('Show menu labels')
  })

  it('When the width button is pressed, then the nav asks the shell to change the width', async () => {
    const wrapper = await mountNav(true)
    await wrapper.find('[data-testid="menu-width"]').trigger('click')
    expect(wrapper.emitted('toggleWidth')).toHaveLength(1)
  })
})
