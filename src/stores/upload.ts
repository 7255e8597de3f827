/**
 * The upload queue: files picked or dropped, each sent in its own request (at most two at a time) with its progress,
 * and each one's outcome: stored, recognised as a duplicate of an image already in the project, failed with the
 * server's message, or cancelled. The queue lives in a store so it survives a look at another page mid-upload.
 */
import { computed, ref, watch } from 'vue'
import { defineStore } from 'pinia'
import type { UploadedImageDto } from '@shared/types/image'
import { IMAGE_DECODE_ERROR_STATUS } from '@shared/imageio/imageDecodeError'
import { asApiError } from '@/api/http'
import { uploadImage, type UploadFields } from '@/api/images'
import { useSessionStore } from './session'

export type UploadStatus = 'queued' | 'uploading' | 'stored' | 'duplicate' | 'failed' | 'cancelled'

/** Where a file goes and what is recorded with it, fixed when its upload is started. */
export interface UploadTarget {
  projectId: number
  fields: UploadFields
}

/** The upload form: the project, and the fields every file of the batch is recorded with. */
export interface UploadSettings extends UploadFields {
  projectId: number | null
}

export interface UploadItem {
  id: number
  file: File
  /** The frames CSV sent with this file (its frames' field or temperature). */
  framesCsv: File | null
  status: UploadStatus
  /** Set once the person started the upload; a queued item without it waits for "Upload". */
  target: UploadTarget | null
  loaded: number
  total: number
  result: UploadedImageDto | null
  error: { code: string; message: string } | null
}

/**
 * Failures that are about the file's own bytes (not an image, damaged, empty, over the size or pixel limits): sending
 * the same file again gets the same answer, so the queue offers to remove it instead of a retry. Anything else — no
 * answer, the store or database down, a refused CSV or sample that the form can fix — may go through next time.
 */
const FILE_CONTENT_FAILURES = new Set<string>([...Object.keys(IMAGE_DECODE_ERROR_STATUS), 'file-too-large'])

export function retryCanHelp(error: { code: string } | null): boolean {
  return error === null || !FILE_CONTENT_FAILURES.has(error.code)
}

/** Requests in flight at once: enough to keep the line busy while the server checks the previous file. */
export const MAX_PARALLEL_UPLOADS = 2

const CSV_PATTERN = /\.csv$/i

function baseName(name: string): string {
  return name.replace(/\.[^.]*$/, '').toLowerCase()
}

export const useUploadStore = defineStore('upload', () => {
  const items = ref<UploadItem[]>([])
  const controllers = new Map<number, AbortController>()
  let nextId = 1

  const inFlight = computed(() => items.value.filter((i) => i.status === 'uploading').length)
  const waiting = computed(() => items.value.filter((i) => i.status === 'queued' && i.target !== null).length)
  const ready = computed(() => items.value.filter((i) => i.status === 'queued' && i.target === null).length)
  const busy = computed(() => inFlight.value + waiting.value > 0)
  const finished = computed(() => items.value.filter((i) => !['queued', 'uploading'].includes(i.status)).length)
  /** Bytes sent of everything started and not cancelled, for the overall progress bar. */
  const overall = computed(() => {
    const counted = items.value.filter((i) => i.target !== null && i.status !== 'cancelled')
    const total = counted.reduce((sum, i) => sum + i.total, 0)
    const loaded = counted.reduce((sum, i) => sum + (i.status === 'uploading' || i.status === 'queued' ? i.loaded : i.total), 0)
    return { loaded, total, percent: total > 0 ? Math.min(100, Math.round((loaded / total) * 100)) : 0 }
  })

  function find(itemId: number): UploadItem | undefined {
    return items.value.find((i) => i.id === itemId)
  }

  /**
   * Queue images; a CSV among them becomes the frames CSV of the image with the same base name (stack.tif +
   * stack.csv), or of the only image waiting in the queue. Returns the names of CSVs that matched no image.
   */
  function addFiles(files: readonly File[]): { unmatchedCsv: string[] } {
    const images = files.filter((f) => !CSV_PATTERN.test(f.name))
    const csvs = files.filter((f) => CSV_PATTERN.test(f.name))
    for (const file of images) {
      items.value.push({ id: nextId++, file, framesCsv: null, status: 'queued', target: null, loaded: 0, total: file.size, result: null, error: null })
    }
    const unmatchedCsv: string[] = []
    for (const csv of csvs) {
      const open = items.value.filter((i) => i.status === 'queued' && i.target === null)
      const byName = open.find((i) => baseName(i.file.name) === baseName(csv.name))
      // Without a matching name, only a lone image is an unambiguous owner.
      const lone = open.length === 1 && open[0].framesCsv === null ? open[0] : undefined
      const item = byName ?? lone
      if (item) item.framesCsv = csv
      else unmatchedCsv.push(csv.name)
    }
    return { unmatchedCsv }
  }

  function attachFramesCsv(itemId: number, csv: File | null): void {
    const item = find(itemId)
    if (item && item.status === 'queued') item.framesCsv = csv
  }

  function remove(itemId: number): void {
    const item = find(itemId)
    if (item && item.status !== 'uploading') items.value = items.value.filter((i) => i.id !== itemId)
  }

  /** Start every queued file with these settings. */
  function start(target: UploadTarget): void {
    for (const item of items.value) {
      if (item.status === 'queued') item.target = { projectId: target.projectId, fields: { ...target.fields } }
    }
    pump()
  }

  function pump(): void {
    while (inFlight.value < MAX_PARALLEL_UPLOADS) {
      const next = items.value.find((i) => i.status === 'queued' && i.target !== null)
      if (!next) return
      void send(next)
    }
  }

  async function send(item: UploadItem): Promise<void> {
    const target = item.target!
    const controller = new AbortController()
    controllers.set(item.id, controller)
    item.status = 'uploading'
    item.loaded = 0
    item.error = null
    try {
      item.result = await uploadImage(target.projectId, item.file, target.fields, {
        framesCsv: item.framesCsv,
        signal: controller.signal,
        onProgress: ({ loaded, total }) => {
          item.loaded = loaded
          item.total = total
        },
      })
      item.loaded = item.total
      item.status = item.result.duplicateOf !== undefined ? 'duplicate' : 'stored'
    } catch (e) {
      const failure = asApiError(e)
      item.status = failure.code === 'upload-cancelled' ? 'cancelled' : 'failed'
      item.error = item.status === 'failed' ? { code: failure.code, message: failure.message } : null
    } finally {
      controllers.delete(item.id)
      pump()
    }
  }

  /** Stop one file: abort its request, or take it out of the waiting line. */
  function cancel(itemId: number): void {
    const item = find(itemId)
    if (!item) return
    if (item.status === 'uploading') controllers.get(itemId)?.abort()
    else if (item.status === 'queued' && item.target !== null) item.status = 'cancelled'
  }

  /** Stop everything started: waiting files first, so aborting a request does not start the next one. */
  function cancelAll(): void {
    for (const item of items.value) if (item.status === 'queued' && item.target !== null) item.status = 'cancelled'
    for (const controller of controllers.values()) controller.abort()
  }

  /** Put a failed or cancelled file back in the queue, to go with the next "Upload". */
  function retry(itemId: number): void {
    const item = find(itemId)
    if (item && (item.status === 'failed' || item.status === 'cancelled')) {
      Object.assign(item, { status: 'queued', target: null, loaded: 0, total: item.file.size, error: null, result: null })
    }
  }

  function clearFinished(): void {
    items.value = items.value.filter((i) => i.status === 'queued' || i.status === 'uploading')
  }

  function reset(): void {
    cancelAll()
    items.value = []
  }

  // Another person signing in gets an empty queue; the previous person's requests are stopped.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return {
    items,
    inFlight,
    waiting,
    ready,
    busy,
    finished,
    overall,
    addFiles,
    attachFramesCsv,
    remove,
    start,
    cancel,
    cancelAll,
    retry,
    clearFinished,
    reset,
  }
})
