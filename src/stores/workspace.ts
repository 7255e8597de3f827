/**
 * The annotation workspace of one frame: the mask being edited (in place, by the canvas tools) with its undo history,
 * the version it was based on, saving with optimistic versions (a 409 becomes a conflict the person resolves, never
 * a lost edit), autosave 20 s after the last edit, the version history with read-only viewing and restore, and the
 * frame's measurements from the server (after each save) and from a local preview.
 */
import { computed, markRaw, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import { DEFAULT_RECIPE, normalizeRecipe, type AnalysisRecipe } from '@shared/analysis/recipe'
import type { BinaryMask } from '@shared/analysis/types'
import { maskFromBase64, maskToBase64 } from '@shared/imageio/maskEncoding'
import type { AnalysisDto, AnnotationDto, AnnotationShape, AnnotationVersionDto } from '@shared/types/annotation'
import { getAnnotation, getFrameAnalysis, listVersions, restoreVersion, saveAnnotation, type SaveOutcome } from '@/api/annotations'
import { reviewStep } from '@/api/reviews'
import { asApiError, type ApiError } from '@/api/http'
import { useMaskHistory } from '@/composables/useMaskHistory'
import { countUp, fullRect, type PixelRect } from '@/maskRaster'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

/** Autosave runs this long after the last edit. */
export const AUTOSAVE_DELAY_MS = 20_000

/** Where the edits stand, as the save status shows it. */
export type SaveState = 'empty' | 'saved' | 'unsaved' | 'saving' | 'offline' | 'failed' | 'conflict'

/** A mask change the canvas must redraw: the rectangle (null = everything), numbered so each one is seen. */
export interface MaskChange {
  revision: number
  rect: PixelRect | null
}

/** A save refused because someone saved first; the edit is on the server as a conflict copy. */
export interface SaveConflict {
  message: string
  latestVersion: number
  conflictCopy: AnnotationVersionDto
}

/** An older version or a conflict copy opened for looking only. */
export interface ViewedVersion {
  version: AnnotationVersionDto
  mask: BinaryMask
}

export const useWorkspaceStore = defineStore('workspace', () => {
  const frameId = ref<number | null>(null)
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  /** Whether the person may change the mask here (the view sets it from their role in the frame's lab). */
  const editable = ref(false)

  const mask = shallowRef<BinaryMask | null>(null)
  const maskChange = shallowRef<MaskChange>({ revision: 0, rect: null })
  const upPixels = ref(0)
  const shapes = ref<AnnotationShape[]>([])
  const recipe = ref<AnalysisRecipe>({ ...DEFAULT_RECIPE })
  const history = useMaskHistory()

  /** The saved version the edits start from (null before the frame's first save). */
  const baseVersion = ref<number | null>(null)
  const editCount = ref(0)
  const savedEditCount = ref(0)
  const saving = ref(false)
  const lastError = shallowRef<ApiError | null>(null)
  const lastSavedAt = ref<string | null>(null)
  const conflict = shallowRef<SaveConflict | null>(null)

  const versions = ref<AnnotationVersionDto[]>([])
  const versionsStatus = ref<LoadStatus>('idle')
  const analysis = shallowRef<AnalysisDto | null>(null)
  const analysisStatus = ref<LoadStatus>('idle')
  const previewMeasurements = shallowRef<FrameMeasurements | null>(null)
  const viewing = shallowRef<ViewedVersion | null>(null)

  const dirty = computed(() => editCount.value !== savedEditCount.value)
  const saveState = computed<SaveState>(() => {
    if (saving.value) return 'saving'
    if (conflict.value) return 'conflict'
    if (lastError.value && dirty.value) return lastError.value.code === 'network-error' ? 'offline' : 'failed'
    if (dirty.value) return 'unsaved'
    return baseVersion.value === null ? 'empty' : 'saved'
  })
  /** The mask on the canvas: an opened older version, or the one being edited. */
  const displayedMask = computed(() => viewing.value?.mask ?? mask.value)
  /** Up pixels of the mask on the canvas (counted once when an older version is opened). */
  const displayedUpPixels = computed(() => (viewing.value ? countUp(viewing.value.mask.data) : upPixels.value))

  let autosaveTimer: ReturnType<typeof setTimeout> | null = null
  let inFlight: Promise<boolean> | null = null
  let openRequest = 0

  function publish(rect: PixelRect | null): void {
    maskChange.value = { revision: maskChange.value.revision + 1, rect }
  }

  function clearAutosave(): void {
    if (autosaveTimer !== null) clearTimeout(autosaveTimer)
    autosaveTimer = null
  }

  function scheduleAutosave(): void {
    clearAutosave()
    if (!editable.value || conflict.value || !dirty.value) return
    autosaveTimer = setTimeout(() => {
      autosaveTimer = null
      void save()
    }, AUTOSAVE_DELAY_MS)
  }

  function markEdited(): void {
    editCount.value++
    scheduleAutosave()
  }

  /** Make `next` the edited mask, with a fresh history (after loading a version). */
  function adopt(next: BinaryMask, version: number | null, nextShapes: AnnotationShape[]): void {
    const raw = markRaw(next)
    mask.value = raw
    history.reset(raw)
    upPixels.value = countUp(raw.data)
    shapes.value = nextShapes
    baseVersion.value = version
    editCount.value = 0
    savedEditCount.value = 0
    lastError.value = null
    publish(null)
  }

  function decode(dto: AnnotationDto, width: number, height: number): BinaryMask {
    const decoded = maskFromBase64(dto.mask)
    if (decoded.width !== width || decoded.height !== height) {
      throw new Error(`The saved mask is ${decoded.width} × ${decoded.height} px but the frame is ${width} × ${height} px.`)
    }
    return decoded
  }

  async function refreshVersions(): Promise<void> {
    const id = frameId.value
    if (id === null) return
    versionsStatus.value = 'loading'
    try {
      const rows = await listVersions(id)
      if (id !== frameId.value) return
      versions.value = rows
      versionsStatus.value = 'ready'
    } catch {
      if (id === frameId.value) versionsStatus.value = 'error'
    }
  }

  async function refreshAnalysis(): Promise<void> {
    const id = frameId.value
    if (id === null) return
    analysisStatus.value = 'loading'
    try {
      const latest = await getFrameAnalysis(id)
      if (id !== frameId.value) return
      analysis.value = latest
      analysisStatus.value = 'ready'
    } catch {
      if (id === frameId.value) analysisStatus.value = 'error'
    }
  }

  /**
   * Open a frame of `width` × `height` px: its latest saved mask (an all-down mask when it has none yet), its
   * history and its latest analysis, whose recipe becomes the starting recipe.
   */
  async function open(target: { frameId: number; width: number; height: number }): Promise<void> {
    const mine = ++openRequest
    clearAutosave()
    frameId.value = target.frameId
    status.value = 'loading'
    error.value = null
    conflict.value = null
    viewing.value = null
    previewMeasurements.value = null
    lastSavedAt.value = null
    analysis.value = null
    versions.value = []
    try {
      const [latest] = await Promise.all([
        getAnnotation(target.frameId, 'latest').catch((e: unknown) => {
          // No saved mask yet is the normal start, not a failure.
          if (asApiError(e).code === 'annotation-not-found') return null
          throw e
        }),
        refreshVersions(),
        refreshAnalysis(),
      ])
      if (mine !== openRequest) return
      if (latest) {
        adopt(decode(latest, target.width, target.height), latest.version, latest.shapes)
        lastSavedAt.value = latest.createdAt
      } else {
        adopt({ width: target.width, height: target.height, data: new Uint8Array(target.width * target.height) }, null, [])
      }
      recipe.value = recipeOf(analysis.value)
      status.value = 'ready'
    } catch (e) {
      if (mine !== openRequest) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  /** A tool finished one edit of `rect` (already drawn by the canvas): record it as one undoable step. */
  function commitEdit(rect: PixelRect, label: string, shape?: AnnotationShape): void {
    const change = history.commit(rect, label, shape)
    if (!change) return
    upPixels.value += change.upDelta
    if (shape) shapes.value = [...shapes.value, shape]
    markEdited()
  }

  /** A tool abandoned a half-done edit: put `rect` back as it was. */
  function revertEdit(rect: PixelRect): void {
    history.revert(rect)
    publish(rect)
  }

  function applyHistory(change: ReturnType<typeof history.undo>, direction: 'undo' | 'redo'): boolean {
    if (!change) return false
    upPixels.value += change.upDelta
    const shape = change.meta as AnnotationShape | undefined
    if (shape) shapes.value = direction === 'undo' ? shapes.value.filter((s) => s !== shape) : [...shapes.value, shape]
    publish(change.rect)
    markEdited()
    return true
  }

  function undo(): boolean {
    return viewing.value ? false : applyHistory(history.undo(), 'undo')
  }

  function redo(): boolean {
    return viewing.value ? false : applyHistory(history.redo(), 'redo')
  }

  /** Replace the whole mask (a preview segmentation) as one undoable step. */
  function replaceMask(data: Uint8Array, label: string): void {
    const current = mask.value
    if (!current || data.length !== current.data.length) return
    current.data.set(data)
    const change = history.commit(fullRect(current), label)
    publish(null)
    if (!change) return
    upPixels.value += change.upDelta
    markEdited()
  }

  /** Keep a non-mask shape (a scale or probe line) with the next save; a newer one of the same kind replaces it. */
  function keepShape(shape: AnnotationShape): void {
    shapes.value = [...shapes.value.filter((s) => s.kind !== shape.kind), shape]
  }

  function setRecipe(next: AnalysisRecipe): void {
    recipe.value = next
  }

  function afterSaved(outcome: Extract<SaveOutcome, { kind: 'saved' }>, editsAtEncode: number): void {
    baseVersion.value = outcome.annotation.version
    savedEditCount.value = editsAtEncode
    lastSavedAt.value = outcome.annotation.createdAt
    lastError.value = null
    analysis.value = outcome.analysis
    analysisStatus.value = 'ready'
  }

  /**
   * Save the mask as the version after `baseVersion`. Resolves true when saved; false after a conflict (now in
   * `conflict`) or a failure (in `lastError`, retried by the next autosave). Concurrent calls share one request.
   */
  function save(): Promise<boolean> {
    if (inFlight) return inFlight
    const id = frameId.value
    const current = mask.value
    if (id === null || !current || !editable.value || conflict.value) return Promise.resolve(false)
    clearAutosave()
    const editsAtEncode = editCount.value
    // Encoded now: edits made while the request is on its way stay unsaved and go with the next save.
    const body = { baseVersion: baseVersion.value, mask: maskToBase64(current), shapes: shapes.value, recipe: recipe.value }
    saving.value = true
    inFlight = (async () => {
      try {
        const outcome = await saveAnnotation(id, body)
        if (id !== frameId.value) return false
        if (outcome.kind === 'conflict') {
          conflict.value = { message: outcome.message, latestVersion: outcome.latestVersion, conflictCopy: outcome.conflictCopy }
          lastError.value = null
          return false
        }
        afterSaved(outcome, editsAtEncode)
        return true
      } catch (e) {
        lastError.value = asApiError(e)
        return false
      } finally {
        saving.value = false
        inFlight = null
        if (id === frameId.value) {
          void refreshVersions()
          scheduleAutosave()
        }
      }
    })()
    return inFlight
  }

  /** After a conflict: drop the local edits (kept on the server as the conflict copy) and edit the latest version. */
  async function loadLatest(): Promise<void> {
    const id = frameId.value
    const current = mask.value
    if (id === null || !current) return
    const latest = await getAnnotation(id, 'latest')
    if (id !== frameId.value) return
    conflict.value = null
    viewing.value = null
    adopt(decode(latest, current.width, current.height), latest.version, latest.shapes)
    lastSavedAt.value = latest.createdAt
    await Promise.all([refreshVersions(), refreshAnalysis()])
  }

  /** After a conflict: save the local mask again, on top of the latest version. */
  function keepMine(): Promise<boolean> {
    const latest = conflict.value?.latestVersion
    if (latest === undefined) return Promise.resolve(false)
    baseVersion.value = latest
    conflict.value = null
    return save()
  }

  /** Show an older version or a conflict copy read-only; editing resumes with `closeVersion`. */
  async function openVersion(version: AnnotationVersionDto): Promise<void> {
    const id = frameId.value
    const current = mask.value
    if (id === null || !current) return
    const dto = await getAnnotation(id, version.state === 'conflict' || version.version === null ? { copy: version.id } : { version: version.version })
    if (id !== frameId.value) return
    viewing.value = { version, mask: markRaw(decode(dto, current.width, current.height)) }
    publish(null)
  }

  function closeVersion(): void {
    if (!viewing.value) return
    viewing.value = null
    publish(null)
  }

  /**
   * Save an older version again as the newest, then edit it. Local unsaved edits are replaced (the view asks first).
   * Resolves true when restored; false after a conflict.
   */
  async function restore(version: number): Promise<boolean> {
    const id = frameId.value
    const current = mask.value
    if (id === null || !current) return false
    clearAutosave()
    const outcome = await restoreVersion(id, version, baseVersion.value)
    if (id !== frameId.value) return false
    if (outcome.kind === 'conflict') {
      conflict.value = { message: outcome.message, latestVersion: outcome.latestVersion, conflictCopy: outcome.conflictCopy }
      void refreshVersions()
      return false
    }
    const restored = await getAnnotation(id, { version: outcome.annotation.version! })
    viewing.value = null
    adopt(decode(restored, current.width, current.height), restored.version, restored.shapes)
    afterSaved(outcome, 0)
    await refreshVersions()
    return true
  }

  /**
   * Save what is unsaved, then submit the analysis of the saved version, which puts it in the reviewers' queue and marks
   * the frame submitted (one step on the server). Resolves false when the save did not go through or there is no
   * analysis to submit; throws ApiError when the server refuses (e.g. 409 `analysis-has-no-results`).
   */
  /** Save what is unsaved, then submit the saved version's analysis, with an optional note for the reviewer. */
  async function submitForReview(note = ''): Promise<boolean> {
    if (frameId.value === null || !editable.value) return false
    if (dirty.value && !(await save())) return false
    const latest = analysis.value
    if (latest === null) return false
    await reviewStep(latest.id, 'submit', note.trim() || undefined)
    return true
  }

  function setPreviewMeasurements(measurements: FrameMeasurements | null): void {
    previewMeasurements.value = measurements
  }

  function reset(): void {
    openRequest++
    clearAutosave()
    frameId.value = null
    status.value = 'idle'
    error.value = null
    mask.value = null
    history.reset({ width: 0, height: 0, data: new Uint8Array(0) })
    upPixels.value = 0
    shapes.value = []
    baseVersion.value = null
    editCount.value = 0
    savedEditCount.value = 0
    lastError.value = null
    lastSavedAt.value = null
    conflict.value = null
    versions.value = []
    versionsStatus.value = 'idle'
    analysis.value = null
    analysisStatus.value = 'idle'
    previewMeasurements.value = null
    viewing.value = null
    publish(null)
  }

  // Another person signing in must not see (or save) the previous person's edits.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return {
    frameId,
    status,
    error,
    editable,
    mask,
    maskChange,
    upPixels,
    displayedUpPixels,
    shapes,
    recipe,
    baseVersion,
    dirty,
    saving,
    saveState,
    lastError,
    lastSavedAt,
    conflict,
    versions,
    versionsStatus,
    analysis,
    analysisStatus,
    previewMeasurements,
    viewing,
    displayedMask,
    canUndo: history.canUndo,
    canRedo: history.canRedo,
    undoCount: history.undoCount,
    undoLabel: history.undoLabel,
    redoLabel: history.redoLabel,
    open,
    commitEdit,
    revertEdit,
    undo,
    redo,
    replaceMask,
    keepShape,
    setRecipe,
    save,
    loadLatest,
    keepMine,
    openVersion,
    closeVersion,
    restore,
    refreshVersions,
    submitForReview,
    setPreviewMeasurements,
    clearAutosave,
    reset,
  }
})

/** The recipe of the frame's latest analysis (so a re-save measures the same way), or the default one. */
function recipeOf(analysis: AnalysisDto | null): AnalysisRecipe {
  if (!analysis) return { ...DEFAULT_RECIPE }
  try {
    return normalizeRecipe(analysis.recipe)
  } catch {
    return { ...DEFAULT_RECIPE }
  }
}
