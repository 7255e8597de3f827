/**
 * A lab's own material constants for the theory panel: list, add, edit, remove. Anyone in the lab reads them; people
 * who may edit samples ('sample.edit': admin, PI, microscopist) maintain them, because they are the ones who record
 * the samples and know the films' constants; lab administration ('lab.manage') is about people, not physics. Every
 * change is audited with the values before and after.
 */
import { UniqueConstraintError } from 'sequelize'
import type { LabMaterialDto, LabMaterialInput } from '../../shared/types/labMaterial'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, notFound } from '../errors'
import { LabMaterial } from '../models'
import { recordAudit } from './auditService'

/** Who may change a lab's materials (see the file header). */
export const LAB_MATERIAL_WRITE_ACTION = 'sample.edit' as const

export function toLabMaterialDto(m: LabMaterial): LabMaterialDto {
  return {
    id: m.id,
    labId: m.labId,
    name: m.name,
    msAPerM: m.msAPerM,
    aJPerM: m.aJPerM,
    kJPerM3: m.kJPerM3,
    tcK: m.tcK,
    source: m.source,
    createdAt: m.createdAt.toISOString(),
    updatedAt: m.updatedAt.toISOString(),
  }
}

function duplicateName(name: string): AppError {
  return new AppError(409, 'material-name-taken', `This lab already has a material named “${name}”.`, { fields: { name: ['A material of this name exists already.'] } })
}

async function findMaterial(labId: number, materialId: number): Promise<LabMaterial> {
  const material = await LabMaterial.findOne({ where: { id: materialId, labId } })
  if (!material) throw notFound('material')
  return material
}

export async function listLabMaterials(user: SessionUser, labId: number): Promise<LabMaterialDto[]> {
  assertLabAction(user, labId, 'lab.read', 'lab')
  const rows = await LabMaterial.findAll({ where: { labId }, order: [['name', 'ASC']] })
  return rows.map(toLabMaterialDto)
}

export async function createLabMaterial(user: SessionUser, labId: number, input: LabMaterialInput): Promise<LabMaterialDto> {
  assertLabAction(user, labId, LAB_MATERIAL_WRITE_ACTION, 'lab')
  let material: LabMaterial
  try {
    material = await LabMaterial.create({ labId, ...input })
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw duplicateName(input.name)
    throw err
  }
  const dto = toLabMaterialDto(material)
  await recordAudit({ labId, actorId: user.id, action: 'lab-material.create', entityType: 'lab-material', entityId: material.id, after: dto })
  return dto
}

export async function updateLabMaterial(user: SessionUser, labId: number, materialId: number, patch: Partial<LabMaterialInput>): Promise<LabMaterialDto> {
  assertLabAction(user, labId, LAB_MATERIAL_WRITE_ACTION, 'lab')
  const material = await findMaterial(labId, materialId)
  const before = toLabMaterialDto(material)
  try {
    await material.update(patch)
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw duplicateName(patch.name ?? material.name)
    throw err
  }
  const after = toLabMaterialDto(material)
  await recordAudit({ labId, actorId: user.id, action: 'lab-material.update', entityType: 'lab-material', entityId: material.id, before, after })
  return after
}

export async function deleteLabMaterial(user: SessionUser, labId: number, materialId: number): Promise<void> {
  assertLabAction(user, labId, LAB_MATERIAL_WRITE_ACTION, 'lab')
  const material = await findMaterial(labId, materialId)
  const before = toLabMaterialDto(material)
  await material.destroy()
  await recordAudit({ labId, actorId: user.id, action: 'lab-material.delete', entityType: 'lab-material', entityId: materialId, before })
}
