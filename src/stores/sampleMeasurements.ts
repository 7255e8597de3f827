/** Each opened sample with its measurements (latest frame analyses, stack-run summaries), for the sample page. */
import { reactive, watch } from 'vue'
import { defineStore } from 'pinia'
import type { SampleMeasurementsDto } from '@shared/types/sampleMeasurements'
import { asApiError, type ApiError } from '@/api/http'
import { getSampleMeasurements } from '@/api/sampleMeasurements'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

interface SampleMeasurementsEntry {
  status: LoadStatus
  item: SampleMeasurementsDto | null
  error: ApiError | null
}

export const useSampleMeasurementsStore = defineStore('sampleMeasurements', () => {
  const entries = reactive(new Map<number, SampleMeasurementsEntry>())

  function measurementsOf(sampleId: number): SampleMeasurementsEntry {
    return entries.get(sampleId) ?? { status: 'idle', item: null, error: null }
  }

  async function fetchMeasurements(sampleId: number): Promise<void> {
    if (!entries.has(sampleId)) entries.set(sampleId, { status: 'idle', item: null, error: null })
    const entry = entries.get(sampleId)!
    entry.status = 'loading'
    entry.error = null
    try {
      entry.item = await getSampleMeasurements(sampleId)
      entry.status = 'ready'
    } catch (e) {
      entry.error = asApiError(e)
      entry.status = 'error'
    }
  }

  const session = useSessionStore()
  watch(() => session.user?.id, () => entries.clear())

  return { measurementsOf, fetchMeasurements }
})
