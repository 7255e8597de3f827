/** The annotation queue: frames assigned for annotation, the signed-in person's own or all of a project's. */
import type { QueueFrameDto } from '@shared/types/annotation'
import { http } from './http'

/** Frames assigned to the signed-in person, in every lab they belong to. */
export function listMyFrames(): Promise<QueueFrameDto[]> {
  return http.get<QueueFrameDto[]>('/queue?mine=true')
}

/** Every assigned frame of a project, whoever it is assigned to (404 for a project outside the person's labs). */
export function listProjectFrames(projectId: number): Promise<QueueFrameDto[]> {
  return http.get<QueueFrameDto[]>(`/queue?mine=false&projectId=${projectId}`)
}
