import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { QueueFrameDto } from '@shared/types/annotation'
import { createAppRouter } from '@/router'
import ProjectProgressView from '@/views/ProjectProgressView.vue'
import { jsonResponse, stubFetch } from '../fakeApi'
import { queueFrame } from '../queueFrames'

let pinia: Pinia

async function mountProgress(frames: QueueFrameDto[]) {
  const requests = stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, { id: 2, email: 'pi@example.org', name: 'Ines Duarte', memberships: [{ labId: 1, labName: 'Lab', role: 'pi' }], csrfToken: 't' }),
    'GET /api/projects': () =>
      jsonResponse(200, [{ id: 3, labId: 1, name: 'CoFeB anneal series', description: '', createdAt: '2026-03-01T00:00:00.000Z', sampleCount: 2, imageCount: 4 }]),
    'GET /api/queue': () => jsonResponse(200, frames),
  })
  const router = createAppRouter(createMemoryHistory())
  await router.push('/projects/3/progress')
  const wrapper = mount(ProjectProgressView, { props: { projectId: 3 }, global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, router, requests }
}

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ProjectProgressView', () => {
  it('When frames are assigned to two people, then each person shows counts per status and the share submitted', async () => {
    const { wrapper, router, requests } = await mountProgress([
      queueFrame({ frameId: 1, assignee: { id: 7, name: 'Tomás Ortega' }, status: 'submitted' }),
      queueFrame({ frameId: 2, assignee: { id: 4, name: 'Priya Raman' }, status: 'new' }),
      queueFrame({ frameId: 3, assignee: { id: 7, name: 'Tomás Ortega' }, status: 'in-progress' }),
    ])
    expect(router.currentRoute.value.name).toBe('project-progress')
    expect(requests.some((r) => r.url === '/api/queue?mine=false&projectId=3')).toBe(true)
    expect(wrapper.text()).toContain('1 of 3 frames submitted')

    const people = wrapper.findAll('[role="button"]').map((header) => header.text().replace(/\s+/g, ' '))
    expect(people[0]).toContain('Priya Raman')
    expect(people[0]).toContain('Not started: 1')
    expect(people[0]).toContain('Submitted: 0')
    expect(people[1]).toContain('Tomás Ortega')
    expect(people[1]).toContain('In progress: 1')
    expect(people[1]).toContain('Submitted: 1')
    expect(wrapper.findAll('[role="progressbar"]').map((bar) => bar.attributes('aria-valuenow'))).toEqual(['33', '0', '50'])
  })

  it('When no frame of the project is assigned, then the page says where assignment happens', async () => {
    const { wrapper } = await mountProgress([])
    expect(wrapper.text()).toContain('No frames of this project are assigned yet.')
  })
})
