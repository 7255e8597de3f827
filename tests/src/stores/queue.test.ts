import { beforeEach, describe, expect, it } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import { groupByAssignee, useQueueStore } from '@/stores/queue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { queueFrame } from '../queueFrames'

const PRIYA = { id: 4, name: 'Priya Raman' }
const TOMAS = { id: 7, name: 'Tomás Ortega' }

beforeEach(() => setActivePinia(createPinia()))
describe('useQueueStore, my frames', () => {
  it('When the list is fetched, then it asks for mine=true and counts the frames per status', async () => {
    const requests = stubFetch({
      'GET /api/queue': () =>
        jsonResponse(200, [
          queueFrame({ frameId: 1, status: 'new' }),
          queueFrame({ frameId: 2, status: 'in-progress' }),
          queueFrame({ frameId: 3, status: 'in-progress' }),
          queueFrame({ frameId: 4, status: 'submitted' }),
        ]),
    })
    const queue = useQueueStore()
    await queue.fetchMine()

    expect(requests.map((r) => r.url)).toEqual(['/api/queue?mine=true'])
    expect(queue.status).toBe('ready')
    expect(queue.counts).toEqual({ new: 1, 'in-progress': 2, submitted: 1 })
  })

  it('When a status filter is set, then only frames with that status are listed, and "all" lists every one', async () => {
    stubFetch({ 'GET /api/queue': () => jsonResponse(200, [queueFrame({ frameId: 1, status: 'new' }), queueFrame({ frameId: 2, status: 'submitted' })]) })
    const queue = useQueueStore()
    await queue.fetchMine()

    queue.statusFilter = 'submitted'
    expect(queue.filtered.map((f) => f.frameId)).toEqual([2])
    queue.statusFilter = 'in-progress'
    expect(queue.filtered).toEqual([])
    queue.statusFilter = 'all'
    expect(queue.filtered.map((f) => f.frameId)).toEqual([1, 2])
  })

  it('When the server fails, then the status is error with the server message', async () => {
    stubFetch({ 'GET /api/queue': () => errorResponse(500, 'internal', 'Something went wrong on our side.') })
    const queue = useQueueStore()
    await queue.fetchMine()
    expect(queue.status).toBe('error')
    expect(queue.error?.message).toBe('Something went wrong on our side.')
  })
})

describe('useQueueStore, project progress', () => {
  it("When a project's frames are fetched, then it asks for mine=false with the project and groups them by assignee", async () => {
    const requests = stubFetch({
      'GET /api/queue': () =>
        jsonResponse(200, [
          queueFrame({ frameId: 1, assignee: TOMAS, status: 'submitted' }),
          queueFrame({ frameId: 2, assignee: PRIYA, status: 'new' }),
          queueFrame({ frameId: 3, assignee: TOMAS, status: 'in-progress' }),
          queueFrame({ frameId: 4, assignee: PRIYA, status: 'submitted' }),
          queueFrame({ frameId: 5, assignee: TOMAS, status: 'submitted' }),
        ]),
    })
    const queue = useQueueStore()
    await queue.fetchProject(3)

    expect(requests.map((r) => r.url)).toEqual(['/api/queue?mine=false&projectId=3'])
    const progress = queue.projectProgress(3)
    expect(progress.total).toBe(5)
    expect(progress.counts).toEqual({ new: 1, 'in-progress': 1, submitted: 3 })
    expect(progress.submittedPercent).toBe(60)
    expect(progress.groups.map((g) => [g.assignee?.name, g.frames.map((f) => f.frameId), g.counts, g.submittedPercent])).toEqual([
      ['Priya Raman', [2, 4], { new: 1, 'in-progress': 0, submitted: 1 }, 50],
      ['Tomás Ortega', [1, 3, 5], { new: 0, 'in-progress': 1, submitted: 2 }, 67],
    ])
  })

  it('When a project has no assigned frames, then there are no groups and 0 % is submitted', () => {
    expect(groupByAssignee([])).toEqual([])
    expect(useQueueStore().projectProgress(99)).toEqual({ groups: [], counts: { new: 0, 'in-progress': 0, submitted: 0 }, total: 0, submittedPercent: 0 })
  })

  it('When a project is outside the person’s labs, then that project alone is in error', async () => {
    stubFetch({ 'GET /api/queue': () => errorResponse(404, 'project-not-found', 'No such project.') })
    const queue = useQueueStore()
    await queue.fetchProject(8)
    expect(queue.projectQueue(8)).toMatchObject({ status: 'error', error: { code: 'project-not-found' } })
    expect(queue.status).toBe('idle')
  })
})
