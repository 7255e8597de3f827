/**
 * Wall motion: each opened image's motion analysis and each sample's pooled motion, for the motion page. The server
 * computes on request (in its analysis workers) and keeps recent results, so a reload is cheap.
 */
import { reactive, watch } from 'vue'
import { defineStore } from 'pinia'
import type { ImageMotionDto, SampleMotionDto } from '@shared/types/motion'
import { asApiError, type ApiError } from '@/api/http'
import { getImageMotion, getSampleMotion } from '@/api/motion'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

interface Entry<T> {
  status: LoadStatus
  item: T | null
  error: ApiError | null
}

function idle<T>(): Entry<T> {
  return { status: 'idle', item: null, error: null }
}

export const useMotionStore = defineStore('motion', () => {
  const images = reactive(new Map<number, Entry<ImageMotionDto>>())
  const samples = reactive(new Map<number, Entry<SampleMotionDto>>())

  async function load<T>(entries: Map<number, Entry<T>>, id: number, fetch: (id: number) => Promise<T>): Promise<void> {
    if (!entries.has(id)) entries.set(id, idle<T>())
    const entry = entries.get(id)!
    entry.status = 'loading'
    entry.error = null
    try {
      entry.item = await fetch(id)
      entry.status = 'ready'
    } catch (e) {
      entry.error = asApiError(e)
      entry.status = 'error'
    }
  }

  const imageMotionOf = (imageId: number): Entry<ImageMotionDto> => images.get(imageId) ?? idle()
  const sampleMotionOf = (sampleId: number): Entry<SampleMotionDto> => samples.get(sampleId) ?? idle()
  const fetchImageMotion = (imageId: number) => load(images as Map<number, Entry<ImageMotionDto>>, imageId, getImageMotion)
  const fetchSampleMotion = (sampleId: number) => load(samples as Map<number, Entry<SampleMotionDto>>, sampleId, getSampleMotion)

  // Another person signing in must not see the previous person's results.
  const session = useSessionStore()
  watch(
    () => session.user?.id,
    () => {
      images.clear()
      samples.clear()
    },
  )

  return { imageMotionOf, sampleMotionOf, fetchImageMotion, fetchSampleMotion }
})
