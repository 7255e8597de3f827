/**
 * The lab materials tables (one per lab, loaded when a theory panel needs it). Loads record failures for a Retry;
 * adds, edits and removals throw for the form that started them.
 */
import { reactive, watch } from 'vue'
import { defineStore } from 'pinia'
import type { LabMaterialDto, LabMaterialInput } from '@shared/types/labMaterial'
import { asApiError, type ApiError } from '@/api/http'
import { createLabMaterial, deleteLabMaterial, listLabMaterials, updateLabMaterial } from '@/api/labMaterials'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

interface MaterialList {
  status: LoadStatus
  items: LabMaterialDto[]
  error: ApiError | null
}

const byName = (a: LabMaterialDto, b: LabMaterialDto) => a.name.localeCompare(b.name)

export const useLabMaterialsStore = defineStore('labMaterials', () => {
  const lists = reactive(new Map<number, MaterialList>())

  function materialsOf(labId: number): MaterialList {
    return lists.get(labId) ?? { status: 'idle', items: [], error: null }
  }

  async function fetchMaterials(labId: number): Promise<void> {
    if (!lists.has(labId)) lists.set(labId, { status: 'idle', items: [], error: null })
    const list = lists.get(labId)!
    list.status = 'loading'
    list.error = null
    try {
      list.items = await listLabMaterials(labId)
      list.status = 'ready'
    } catch (e) {
      list.error = asApiError(e)
      list.status = 'error'
    }
  }

  async function ensureMaterials(labId: number): Promise<void> {
    if (materialsOf(labId).status === 'idle') await fetchMaterials(labId)
  }

  function store(labId: number, material: LabMaterialDto): LabMaterialDto {
    const list = lists.get(labId)
    if (list) list.items = [...list.items.filter((m) => m.id !== material.id), material].sort(byName)
    return material
  }

  async function add(labId: number, input: LabMaterialInput): Promise<LabMaterialDto> {
    return store(labId, await createLabMaterial(labId, input))
  }

  async function edit(labId: number, materialId: number, patch: Partial<LabMaterialInput>): Promise<LabMaterialDto> {
    return store(labId, await updateLabMaterial(labId, materialId, patch))
  }

  async function remove(labId: number, materialId: number): Promise<void> {
    await deleteLabMaterial(labId, materialId)
    const list = lists.get(labId)
    if (list) list.items = list.items.filter((m) => m.id !== materialId)
  }

  const session = useSessionStore()
  watch(() => session.user?.id, () => lists.clear())

  return { materialsOf, fetchMaterials, ensureMaterials, add, edit, remove }
})
