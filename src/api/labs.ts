/** The labs the person belongs to and their members. */
import type { LabDto } from '@shared/types/lab'
import type { LabMemberDto } from '@shared/types/user'
import { http } from './http'

export function listLabs(): Promise<LabDto[]> {
  return http.get<LabDto[]>('/labs')
}

export function listLabMembers(labId: number): Promise<LabMemberDto[]> {
  return http.get<LabMemberDto[]>(`/labs/${labId}/members`)
}
