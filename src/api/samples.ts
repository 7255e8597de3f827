/** Samples of a project, with their anneal conditions. */
import type { SampleDto, SampleSummaryDto } from '@shared/types/lab'
import { http } from './http'

/** What the person enters for a sample; the server assigns `id` and takes `projectId` from the path. */
export type SampleInput = Omit<SampleDto, 'id' | 'projectId'>
/** A PATCH changes only the fields it sends. */
export type SamplePatch = Partial<SampleInput>

export function listSamples(projectId: number): Promise<SampleSummaryDto[]> {
  return http.get<SampleSummaryDto[]>(`/projects/${projectId}/samples`)
}

/** Needs `sample.edit` in the project's lab; 400 with `fields` when a value is out of range. */
export function createSample(projectId: number, input: SampleInput): Promise<SampleDto> {
  return http.post<SampleDto>(`/projects/${projectId}/samples`, input)
}

export function updateSample(sampleId: number, patch: SamplePatch): Promise<SampleDto> {
  return http.patch<SampleDto>(`/samples/${sampleId}`, patch)
}
