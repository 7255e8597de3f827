/** Wall motion of a pulsed-field series (one image) and of all a sample's series, pooled. */
import type { ImageMotionDto, SampleMotionDto } from '@shared/types/motion'
import { http } from './http'

export function getImageMotion(imageId: number): Promise<ImageMotionDto> {
  return http.get<ImageMotionDto>(`/images/${imageId}/motion`)
}

export function getSampleMotion(sampleId: number): Promise<SampleMotionDto> {
  return http.get<SampleMotionDto>(`/samples/${sampleId}/motion`)
}
