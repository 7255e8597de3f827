/**
 * Projects of the person's labs and the samples of each project. Loads record their failure in `error` for the view
 * to show with a Retry button; creates and edits throw, for the form that started them.
 */
import { computed, reactive, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { ProjectDto, SampleDto, SampleSummaryDto } from '@shared/types/lab'
import { asApiError, type ApiError } from '@/api/http'
import { createProject as postProject, listProjects, type ProjectInput } from '@/api/projects'
import { createSample, listSamples, updateSample, type SampleInput, type SamplePatch } from '@/api/samples'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

interface SampleList {
  status: LoadStatus
  items: SampleSummaryDto[]
  error: ApiError | null
}

/** The server's order: anneal temperature ascending (unannealed last, as PostgreSQL sorts NULL), then name. */
function bySampleOrder(a: SampleDto, b: SampleDto): number {
  const ta = a.annealTemperatureC ?? Number.POSITIVE_INFINITY
  const tb = b.annealTemperatureC ?? Number.POSITIVE_INFINITY
  return ta === tb ? a.name.localeCompare(b.name) : ta - tb
}

export const useProjectsStore = defineStore('projects', () => {
  const projects = ref<ProjectDto[]>([])
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  /** Samples keyed by project id; a project is absent until its samples are first asked for. */
  const samples = reactive(new Map<number, SampleList>())

  const totals = computed(() => ({
    projects: projects.value.length,
    samples: projects.value.reduce((sum, p) => sum + p.sampleCount, 0),
    images: projects.value.reduce((sum, p) => sum + p.imageCount, 0),
  }))

  function projectById(projectId: number): ProjectDto | undefined {
    return projects.value.find((p) => p.id === projectId)
  }

  function samplesOf(projectId: number): SampleList {
    return samples.get(projectId) ?? { status: 'idle', items: [], error: null }
  }

  async function fetchProjects(): Promise<void> {
    status.value = 'loading'
    error.value = null
    try {
      projects.value = await listProjects()
      status.value = 'ready'
    } catch (e) {
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  /** Load projects once; later calls reuse what is there (views call this on mount). */
  async function ensureProjects(): Promise<void> {
    if (status.value === 'idle') await fetchProjects()
  }

  async function fetchSamples(projectId: number): Promise<void> {
    if (!samples.has(projectId)) samples.set(projectId, { status: 'idle', items: [], error: null })
    const list = samples.get(projectId)!
    list.status = 'loading'
    list.error = null
    try {
      list.items = await listSamples(projectId)
      list.status = 'ready'
    } catch (e) {
      list.error = asApiError(e)
      list.status = 'error'
    }
  }

  /** Samples of every loaded project, in parallel (the Samples page). */
  async function fetchAllSamples(): Promise<void> {
    await Promise.all(projects.value.map((p) => fetchSamples(p.id)))
  }

  async function createProject(input: ProjectInput): Promise<ProjectDto> {
    const project = await postProject(input)
    projects.value = [...projects.value, project].sort((a, b) => a.name.localeCompare(b.name))
    return project
  }

  async function addSample(projectId: number, input: SampleInput): Promise<SampleDto> {
    const sample = await createSample(projectId, input)
    const list = samples.get(projectId)
    if (list) list.items = [...list.items, { ...sample, imageCount: 0 }].sort(bySampleOrder)
    const project = projectById(projectId)
    if (project) project.sampleCount += 1
    return sample
  }

  async function editSample(sampleId: number, patch: SamplePatch): Promise<SampleDto> {
    const sample = await updateSample(sampleId, patch)
    const list = samples.get(sample.projectId)
    if (list) list.items = list.items.map((s) => (s.id === sample.id ? { ...sample, imageCount: s.imageCount } : s)).sort(bySampleOrder)
    return sample
  }

  function reset(): void {
    projects.value = []
    status.value = 'idle'
    error.value = null
    samples.clear()
  }

  // Another person signing in (or the session ending) must not see the previous person's data.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return {
    projects,
    status,
    error,
    totals,
    projectById,
    samplesOf,
    fetchProjects,
    ensureProjects,
    fetchSamples,
    fetchAllSamples,
    createProject,
    addSample,
    editSample,
    reset,
  }
})
