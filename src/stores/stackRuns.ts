/**
 * Stack runs: each image's list of runs, each opened run's detail (refreshed while it is processed), and the run
 * masks the jumps panel compares. Loads record failures in `error` for a Retry; starting a run throws for the dialog.
 */
import { reactive, watch } from 'vue'
import { defineStore } from 'pinia'
import type { AnalysisRecipe } from '@shared/analysis/recipe'
import type { BinaryMask } from '@shared/analysis/types'
import type { StackRunDetailDto, StackRunDto, StackRunStatus } from '@shared/types/stack'
import { asApiError, type ApiError } from '@/api/http'
import { getStackRun, getStackRunMask, listStackRuns, startStackRun } from '@/api/stackRuns'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

interface RunListEntry {
  status: LoadStatus
  items: StackRunDto[]
  error: ApiError | null
}

interface RunDetailEntry {
  status: LoadStatus
  item: StackRunDetailDto | null
  error: ApiError | null
}

/** Masks kept for the jumps panel (two per jump, at most ten jumps shown). */
const MASK_CACHE_SIZE = 40

/** A run still being worked on: its page keeps asking for progress. */
export function isRunActive(status: StackRunStatus): boolean {
  return status === 'queued' || status === 'running'
}

export const useStackRunsStore = defineStore('stackRuns', () => {
  const lists = reactive(new Map<number, RunListEntry>())
  const details = reactive(new Map<number, RunDetailEntry>())
  const masks = new Map<string, Promise<BinaryMask>>()

  function runsOf(imageId: number): RunListEntry {
    return lists.get(imageId) ?? { status: 'idle', items: [], error: null }
  }

  function detailOf(runId: number): RunDetailEntry {
    return details.get(runId) ?? { status: 'idle', item: null, error: null }
  }

  async function fetchRuns(imageId: number): Promise<void> {
    if (!lists.has(imageId)) lists.set(imageId, { status: 'idle', items: [], error: null })
    const entry = lists.get(imageId)!
    entry.status = 'loading'
    entry.error = null
    try {
      entry.items = await listStackRuns(imageId)
      entry.status = 'ready'
    } catch (e) {
      entry.error = asApiError(e)
      entry.status = 'error'
    }
  }

  /**
   * Load a run. A refresh of a run already shown keeps it on screen (no skeleton between polls); a failed refresh
   * leaves the last good answer and records the error.
   */
  async function fetchRun(runId: number): Promise<void> {
    if (!details.has(runId)) details.set(runId, { status: 'idle', item: null, error: null })
    const entry = details.get(runId)!
    if (!entry.item) entry.status = 'loading'
    entry.error = null
    try {
      entry.item = await getStackRun(runId)
      entry.status = 'ready'
      const list = lists.get(entry.item.imageId)
      const row = list?.items.findIndex((r) => r.id === runId) ?? -1
      if (list && row !== -1) list.items[row] = { ...list.items[row], status: entry.item.status, framesDone: entry.item.framesDone, error: entry.item.error, finishedAt: entry.item.finishedAt }
    } catch (e) {
      entry.error = asApiError(e)
      if (!entry.item) entry.status = 'error'
    }
  }

  /** Queue a run; it is added at the top of the image's list. Throws `ApiError` for the caller's form. */
  async function start(imageId: number, recipe: Partial<AnalysisRecipe>): Promise<StackRunDto> {
    const run = await startStackRun(imageId, recipe)
    const list = lists.get(imageId)
    if (list) list.items = [run, ...list.items.filter((r) => r.id !== run.id)]
    return run
  }

  /** A frame's run mask, fetched once (the same frame is the "after" of one jump and the "before" of the next). */
  function mask(runId: number, index: number): Promise<BinaryMask> {
    const key = `${runId}:${index}`
    let cached = masks.get(key)
    if (!cached) {
      cached = getStackRunMask(runId, index)
      // A failed fetch is not kept, so the next look tries again.
      cached.catch(() => masks.delete(key))
      masks.set(key, cached)
      if (masks.size > MASK_CACHE_SIZE) masks.delete(masks.keys().next().value as string)
    }
    return cached
  }

  function reset(): void {
    lists.clear()
    details.clear()
    masks.clear()
  }

  // Another person signing in must not see the previous person's runs.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return { runsOf, detailOf, fetchRuns, fetchRun, start, mask, reset }
})
