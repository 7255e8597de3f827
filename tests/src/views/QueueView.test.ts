import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LabRole } from '@shared/auth/permissions'
import type { QueueFrameDto } from '@shared/types/annotation'
import { createAppRouter } from '@/router'
import QueueView from '@/views/QueueView.vue'
import { jsonResponse, stubFetch } from '../fakeApi'
import { getButton } from '../domQueries'
import { queueFrame } from '../queueFrames'

let pinia: Pinia
let router: Router

async function mountQueue(frames: QueueFrameDto[], role: LabRole = 'annotator') {
  stubFetch({
    'GET /api/auth/me': () =>
      jsonResponse(200, {
        id: 4,
        email: 'priya.raman@kestrel-lab.example',
        name: 'Priya Raman',
        memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role }],
        csrfToken: 't',
      }),
    'GET /api/queue': () => jsonResponse(200, frames),
  })
  router = createAppRouter(createMemoryHistory())
  await router.push('/queue')
  const wrapper = mount(QueueView, { global: { plugins: [pinia, router, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}

/** The visible text of each table cell, row by row (a cell's lines joined by spaces). */
function rowCells(wrapper: Awaited<ReturnType<typeof mountQueue>>): string[][] {
  return wrapper.findAll('tbody tr').map((row) =>
    row.findAll('td').map((cell) => (cell.element as HTMLElement).innerText ?? cell.text()).map((text) => text.replace(/\s+/g, ' ').trim()),
  )
}

const FRAMES = [
  queueFrame({ frameId: 41, imageName: 'sweep.tif', frameIndex: 3, frameCount: 20, field: -12.5, fieldUnit: 'mT', status: 'in-progress', latestVersion: 2 }),
  queueFrame({ frameId: 42, imageName: 'anneal-300.tif', temperatureK: 300, status: 'new' }),
  queueFrame({ frameId: 43, imageName: 'anneal-350.tif', status: 'submitted', latestVersion: 5 }),
]

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('QueueView', () => {
  it('When frames are assigned, then each shows image, frame, condition, status and latest version', async () => {
    const wrapper = await mountQueue(FRAMES)
    const rows = rowCells(wrapper)
    expect(rows).toHaveLength(3)
    const [image, frame, condition, status, version, , action] = rows[0]
    expect(image).toContain('sweep.tif')
    expect(image).toContain('CoFeB anneal series')
    expect([frame, condition, status, version, action]).toEqual(['3 / 19', '−12.5 mT', 'In progress', 'v2', 'Open'])
    expect(rows[1].slice(1, 5)).toEqual(['single', '300 K', 'Not started', 'none yet'])
  })

  it('When a status filter is picked, then only frames with that status stay listed', async () => {
    const wrapper = await mountQueue(FRAMES)
    const submitted = wrapper.findAll('label').find((l) => l.text() === 'Submitted (1)')
    await submitted!.get('input').setValue(true)
    expect(rowCells(wrapper).map((cells) => cells[3])).toEqual(['Submitted'])
  })

  it('When nothing is assigned, then the page says how frames get assigned', async () => {
    const wrapper = await mountQueue([])
    expect(wrapper.text()).toContain('Nothing assigned to you yet — a PI or microscopist assigns frames from the Images list.')
  })

  it('When "Open" is clicked, then the frame opens in the workspace', async () => {
    const wrapper = await mountQueue(FRAMES)
    // The workspace view itself is not loaded here: the test checks where the button leads.
    const push = vi.spyOn(router, 'push').mockResolvedValue(undefined)
    await getButton(wrapper, 'Open').trigger('click')
    expect(push).toHaveBeenCalledWith({ name: 'workspace', params: { frameId: 41 }, query: { image: 10 } })
    expect(router.resolve({ name: 'workspace', params: { frameId: 41 } }).fullPath).toBe('/frames/41/workspace')
  })

  it('When a reviewer (who may not edit masks) opens My frames, then the page is not allowed', async () => {
    stubFetch({
      'GET /api/auth/me': () =>
        jsonResponse(200, { id: 9, email: 'r@example.org', name: 'R', memberships: [{ labId: 1, labName: 'Lab', role: 'reviewer' }], csrfToken: 't' }),
    })
    router = createAppRouter(createMemoryHistory())
    await router.push('/queue')
    expect(router.currentRoute.value.name).toBe('forbidden')
    expect(router.currentRoute.value.query.action).toBe('mask.edit')
  })
})
