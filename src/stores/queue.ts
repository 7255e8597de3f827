/**
 * Frames assigned for annotation: the signed-in person's own list ("My frames", with a status filter) and, per
 * project, everyone's, grouped by assignee for the progress page.
 */
import { computed, reactive, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { QueueFrameDto } from '@shared/types/annotation'
import type { FrameAnnotationStatus } from '@shared/types/image'
import { asApiError, type ApiError } from '@/api/http'
import { listMyFrames, listProjectFrames } from '@/api/queue'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

export const FRAME_STATUSES: readonly FrameAnnotationStatus[] = ['new', 'in-progress', 'submitted']

export type StatusFilter = FrameAnnotationStatus | 'all'

export type StatusCounts = Record<FrameAnnotationStatus, number>

export interface AssigneeProgress {
  assignee: { id: number; name: string } | null
  frames: QueueFrameDto[]
  counts: StatusCounts
  /** Submitted frames as a whole percentage of this person's frames. */
  submittedPercent: number
}

interface ProjectQueue {
  status: LoadStatus
  items: QueueFrameDto[]
  error: ApiError | null
}

/** Frames per annotation status; a status the client does not know is not counted. */
export function countByStatus(frames: readonly QueueFrameDto[]): StatusCounts {
  const counts: StatusCounts = { new: 0, 'in-progress': 0, submitted: 0 }
  for (const frame of frames) if (Object.hasOwn(counts, frame.status)) counts[frame.status as FrameAnnotationStatus]++
  return counts
}

function percentSubmitted(counts: StatusCounts, total: number): number {
  return total === 0 ? 0 : Math.round((counts.submitted / total) * 100)
}

/** Frames grouped by assignee, people in alphabetical order, in the server's frame order within each. */
export function groupByAssignee(frames: readonly QueueFrameDto[]): AssigneeProgress[] {
  const groups = new Map<number | null, QueueFrameDto[]>()
  for (const frame of frames) {
    const key = frame.assignee?.id ?? null
    const group = groups.get(key)
    if (group) group.push(frame)
    else groups.set(key, [frame])
  }
  return [...groups.values()]
    .map((group) => {
      const counts = countByStatus(group)
      return { assignee: group[0].assignee, frames: group, counts, submittedPercent: percentSubmitted(counts, group.length) }
    })
    .sort((a, b) => (a.assignee?.name ?? '').localeCompare(b.assignee?.name ?? ''))
}

export const useQueueStore = defineStore('queue', () => {
  const mine = ref<QueueFrameDto[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const statusFilter = ref<StatusFilter>('all')
  const projects = reactive(new Map<number, ProjectQueue>())

  const counts = computed(() => countByStatus(mine.value))
  const filtered = computed(() => (statusFilter.value === 'all' ? mine.value : mine.value.filter((f) => f.status === statusFilter.value)))

  /** Always asks the server: statuses change while the person works in the workspace. */
  async function fetchMine(): Promise<void> {
    status.value = 'loading'
    error.value = null
    try {
      mine.value = await listMyFrames()
      status.value = 'ready'
    } catch (e) {
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  function projectQueue(projectId: number): ProjectQueue {
    return projects.get(projectId) ?? { status: 'idle', items: [], error: null }
  }

  async function fetchProject(projectId: number): Promise<void> {
    if (!projects.has(projectId)) projects.set(projectId, { status: 'idle', items: [], error: null })
    const queue = projects.get(projectId)!
    queue.status = 'loading'
    queue.error = null
    try {
      queue.items = await listProjectFrames(projectId)
      queue.status = 'ready'
    } catch (e) {
      queue.error = asApiError(e)
      queue.status = 'error'
    }
  }

  /** The project's frames by assignee, with the project-wide totals. */
  function projectProgress(projectId: number): { groups: AssigneeProgress[]; counts: StatusCounts; total: number; submittedPercent: number } {
    const items = projectQueue(projectId).items
    const totals = countByStatus(items)
    return { groups: groupByAssignee(items), counts: totals, total: items.length, submittedPercent: percentSubmitted(totals, items.length) }
  }

  function reset(): void {
    mine.value = []
    status.value = 'idle'
    error.value = null
    statusFilter.value = 'all'
    projects.clear()
  }

  // Another person signing in must not see the previous person's frames.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return { mine, status, error, statusFilter, counts, filtered, projectQueue, fetchMine, fetchProject, projectProgress, reset }
})
