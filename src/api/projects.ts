/** Projects of the person's labs. */
import type { ProjectDto } from '@shared/types/lab'
import { http } from './http'

export interface ProjectInput {
  labId: number
  name: string
  description?: string
}

export function listProjects(): Promise<ProjectDto[]> {
  return http.get<ProjectDto[]>('/projects')
}

/** Needs `project.create` in the lab; 403 otherwise. */
export function createProject(input: ProjectInput): Promise<ProjectDto> {
  return http.post<ProjectDto>('/projects', input)
}
