/** A lab's own material constants (SI, with their source) for the theory panel. */
import type { LabMaterialDto, LabMaterialInput } from '@shared/types/labMaterial'
import { http } from './http'

export function listLabMaterials(labId: number): Promise<LabMaterialDto[]> {
  return http.get<LabMaterialDto[]>(`/labs/${labId}/materials`)
}

/** Needs `sample.edit` in the lab; 409 `material-name-taken` when the lab has the name already. */
export function createLabMaterial(labId: number, input: LabMaterialInput): Promise<LabMaterialDto> {
  return http.post<LabMaterialDto>(`/labs/${labId}/materials`, input)
}

export function updateLabMaterial(labId: number, materialId: number, patch: Partial<LabMaterialInput>): Promise<LabMaterialDto> {
  return http.patch<LabMaterialDto>(`/labs/${labId}/materials/${materialId}`, patch)
}

export function deleteLabMaterial(labId: number, materialId: number): Promise<void> {
  return http.delete<void>(`/labs/${labId}/materials/${materialId}`)
}
