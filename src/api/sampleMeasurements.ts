/** What has been measured on a sample: latest frame analyses and stack-run summaries of its images. */
import type { SampleMeasurementsDto } from '@shared/types/sampleMeasurements'
import { http } from './http'

export function getSampleMeasurements(sampleId: number): Promise<SampleMeasurementsDto> {
  return http.get<SampleMeasurementsDto>(`/samples/${sampleId}/measurements`)
}
