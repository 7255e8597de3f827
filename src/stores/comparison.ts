/**
 * The comparison page: what is compared (a project, or some of its samples; a measure; an anneal parameter to group
 * by; drafts or not), the computed result, the lab's saved views, and the chart data the result maps to.
 */
import { computed, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import { readStored, writeStored } from '@/browserStorage'
import {
  COMPARISON_MEASURE_INFO,
  type ComparisonCreepFitDto,
  type ComparisonGroupBy,
  type ComparisonMeasure,
  type ComparisonQuery,
  type ComparisonResultDto,
  type ComparisonValueDto,
  type SavedComparisonDto,
} from '@shared/types/comparison'
import { computeComparison, deleteComparison, getComparison, listComparisons, saveComparison } from '@/api/comparisons'
import type { ExportScope } from '@/api/exports'
import { asApiError, type ApiError } from '@/api/http'
import { formatNumber } from '@/formatQuantity'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

/** What the person has chosen; `sampleIds` empty means "every sample of the project". */
export interface ComparisonForm {
  projectId: number | null
  sampleIds: number[]
  measure: ComparisonMeasure
  groupBy: ComparisonGroupBy
  includeDrafts: boolean
}

/** "Mean domain width (nm)"; a dimensionless measure has no parentheses. */
export function measureLabel(measure: ComparisonMeasure): string {
  const { label, unit } = COMPARISON_MEASURE_INFO[measure]
  return unit ? `${label} (${unit})` : label
}

/** "2 series, 4 of 6 steps in the creep fit (4–5.5 mT)": what a creep slope was fitted over. */
export function creepFitText(fit: ComparisonCreepFitDto): string {
  const range = fit.creepFieldRangeMT ? ` (${formatNumber(fit.creepFieldRangeMT[0], 3)}–${formatNumber(fit.creepFieldRangeMT[1], 3)} mT)` : ''
  return `${fit.series.length} series, ${fit.usedSteps} of ${fit.steps} steps in the creep fit${range}`
}

/** The request for a form, or null while no project is chosen. */
export function comparisonQuery(form: ComparisonForm): ComparisonQuery | null {
  const common = { measure: form.measure, groupBy: form.groupBy, includeDrafts: form.includeDrafts }
  if (form.sampleIds.length > 0) return { sampleIds: [...form.sampleIds].sort((a, b) => a - b), ...common }
  return form.projectId === null ? null : { projectId: form.projectId, ...common }
}

/**
 * Horizontal offset of the i-th point of a group, in category widths (±0.18, the first point centred): the
 * fractional parts of i·φ spread points evenly without randomness, so the same data always draws the same picture [P].
 */
export function jitterOffset(i: number): number {
  const golden = 0.6180339887498949
  return (((i * golden + 0.5) % 1) - 0.5) * 0.36
}

/** One drawn value: x is the group's index plus its jitter, y the value; the rest is for the tooltip. */
export interface ChartPoint {
  value: [number, number]
  sample: string
  /** Null for a value of the whole sample (the creep slope). */
  image: string | null
  frameIndex: number | null
  draft: boolean
  creepFit: ComparisonCreepFitDto | null
}

export interface ComparisonChartData {
  categories: string[]
  /** ECharts boxplot rows [min, Q1, median, Q3, max], one per group; null for an empty group. */
  boxes: ([number, number, number, number, number] | null)[]
  approvedPoints: ChartPoint[]
  draftPoints: ChartPoint[]
  /** [group index, mean] per group that has a mean. */
  means: [number, number][]
  /** Error bars of the 95 % CIs: per group a stem and two caps, each a segment between two points. */
  ciSegments: [[number, number], [number, number]][]
}

function toPoint(x: number, value: ComparisonValueDto, i: number): ChartPoint {
  return { value: [x + jitterOffset(i), value.value], sample: value.sample.name, image: value.image?.name ?? null, frameIndex: value.frameIndex, draft: value.draft, creepFit: value.creepFit }
}

/** Half-width of an error bar's caps, in category widths. */
const CAP = 0.07

/** Map a result onto the chart: a box per group from its five-number summary, the values, and mean ± CI. */
export function comparisonChartData(result: ComparisonResultDto): ComparisonChartData {
  const data: ComparisonChartData = { categories: [], boxes: [], approvedPoints: [], draftPoints: [], means: [], ciSegments: [] }
  result.groups.forEach((group, x) => {
    data.categories.push(group.label)
    const f = group.fiveNumber
    data.boxes.push(f ? [f.min, f.q1, f.median, f.q3, f.max] : null)
    group.values.forEach((value, i) => (value.draft ? data.draftPoints : data.approvedPoints).push(toPoint(x, value, i)))
    if (group.mean !== null) data.means.push([x, group.mean])
    const { lower, upper } = group.ci
    if (lower !== null && upper !== null) {
      data.ciSegments.push(
        [
          [x, lower],
          [x, upper],
        ],
        [
          [x - CAP, lower],
          [x + CAP, lower],
        ],
        [
          [x - CAP, upper],
          [x + CAP, upper],
        ],
      )
    }
  })
  return data
}

/** Where this browser remembers the project last compared, to offer it again when the page opens with an empty form. */
export const LAST_COMPARED_PROJECT_KEY = 'remanence.compare-project'

function rememberedProject(): number | null {
  const id = Number(readStored(LAST_COMPARED_PROJECT_KEY))
  return Number.isInteger(id) && id > 0 ? id : null
}

const DEFAULT_FORM: ComparisonForm = { projectId: null, sampleIds: [], measure: 'meanWidth', groupBy: 'annealTemperatureC', includeDrafts: false }

export const useComparisonStore = defineStore('comparison', () => {
  const form = ref<ComparisonForm>({ ...DEFAULT_FORM })
  const result = shallowRef<ComparisonResultDto | null>(null)
  /** The query the result answers (the form may have changed since). */
  const resultQuery = shallowRef<ComparisonQuery | null>(null)
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const saved = ref<SavedComparisonDto[]>([])
  const savedStatus = ref<LoadStatus>('idle')
  const savedError = shallowRef<ApiError | null>(null)
  /** The saved view on screen, when the result came from one. */
  const view = shallowRef<SavedComparisonDto | null>(null)

  const query = computed(() => comparisonQuery(form.value))
  const chart = computed(() => (result.value ? comparisonChartData(result.value) : null))
  const stale = computed(() => result.value !== null && JSON.stringify(query.value) !== JSON.stringify(resultQuery.value))
  /** The export covering what is compared: the one sample, or the whole project. */
  const exportScope = computed<ExportScope | null>(() => {
    if (form.value.sampleIds.length === 1) return { sampleId: form.value.sampleIds[0] }
    return form.value.projectId === null ? null : { projectId: form.value.projectId }
  })

  let sequence = 0

  async function compute(): Promise<void> {
    const asked = query.value
    if (!asked) return
    const mine = ++sequence
    status.value = 'loading'
    error.value = null
    try {
      const answer = await computeComparison(asked)
      if (mine !== sequence) return
      result.value = answer
      resultQuery.value = asked
      view.value = null
      status.value = 'ready'
      if (form.value.projectId !== null) writeStored(LAST_COMPARED_PROJECT_KEY, String(form.value.projectId))
    } catch (e) {
      if (mine !== sequence) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  /**
   * An empty form (no project, no samples) gets a project to start from: the one compared last in this browser if the
   * person still sees it, else the only one they see. `projectIds`: the projects the person sees.
   */
  function preselectProject(projectIds: number[]): void {
    if (form.value.projectId !== null || form.value.sampleIds.length > 0) return
    const last = rememberedProject()
    const choice = last !== null && projectIds.includes(last) ? last : projectIds.length === 1 ? projectIds[0] : null
    if (choice !== null) form.value.projectId = choice
  }

  /** Open a saved view: its query fills the form and its re-computed result is shown. */
  async function openView(comparisonId: number): Promise<void> {
    const mine = ++sequence
    status.value = 'loading'
    error.value = null
    try {
      const { comparison, result: answer } = await getComparison(comparisonId)
      if (mine !== sequence) return
      const q = comparison.query
      form.value = {
        projectId: q.projectId ?? null,
        sampleIds: q.sampleIds ?? [],
        measure: q.measure,
        groupBy: q.groupBy,
        includeDrafts: q.includeDrafts ?? false,
      }
      result.value = answer
      resultQuery.value = query.value
      view.value = comparison
      status.value = 'ready'
    } catch (e) {
      if (mine !== sequence) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  async function fetchSaved(): Promise<void> {
    savedStatus.value = 'loading'
    savedError.value = null
    try {
      saved.value = await listComparisons()
      savedStatus.value = 'ready'
    } catch (e) {
      savedError.value = asApiError(e)
      savedStatus.value = 'error'
    }
  }

  /** Save what the result answers under `name`; it becomes the view on screen. */
  async function save(name: string): Promise<SavedComparisonDto> {
    const asked = resultQuery.value ?? query.value
    if (!asked) throw new Error('Nothing to save: choose a project first.')
    const created = await saveComparison(name, asked)
    saved.value = [created, ...saved.value]
    view.value = created
    return created
  }

  async function removeSaved(comparisonId: number): Promise<void> {
    await deleteComparison(comparisonId)
    saved.value = saved.value.filter((c) => c.id !== comparisonId)
    if (view.value?.id === comparisonId) view.value = null
  }

  function reset(): void {
    sequence++
    form.value = { ...DEFAULT_FORM }
    result.value = null
    resultQuery.value = null
    status.value = 'idle'
    error.value = null
    saved.value = []
    savedStatus.value = 'idle'
    view.value = null
  }

  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return { form, query, result, resultQuery, chart, stale, exportScope, status, error, saved, savedStatus, savedError, view, compute, preselectProject, openView, fetchSaved, save, removeSaved, reset }
})
