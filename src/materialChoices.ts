/**
 * The materials a theory panel offers: the built-in table (shared/analysis/materials.ts, METHODS §7.3, each constant
 * with its source) and the lab's own table, as one list of choices in SI with their sources.
 */
import { MATERIALS, MATERIAL_IDS } from '@shared/analysis/materials'
import type { LabMaterialDto } from '@shared/types/labMaterial'
import type { MaterialConstantsSI } from './theoryPredictions'

export interface MaterialChoice {
  /** 'builtin:fe' or 'lab:12'. */
  key: string
  group: 'builtin' | 'lab'
  name: string
  constants: MaterialConstantsSI
  /** Where each constant comes from (the same text for all four in a lab row). */
  sources: { ms: string; a: string; k: string; tc: string | null }
  notes?: string
  /** Set for a lab row: its id, for editing. */
  labMaterial?: LabMaterialDto
}

/** Built-in materials first (table order), then the lab's by name. */
export function materialChoices(labMaterials: readonly LabMaterialDto[]): MaterialChoice[] {
  const builtin = MATERIAL_IDS.map((id): MaterialChoice => {
    const m = MATERIALS[id]
    return {
      key: `builtin:${id}`,
      group: 'builtin',
      name: m.name,
      constants: { msAPerM: m.Ms.value, aJPerM: m.A.value, kJPerM3: m.K1.value, tcK: m.Tc?.value ?? null, anisotropy: m.anisotropy },
      sources: { ms: m.Ms.source, a: m.A.source, k: m.K1.source, tc: m.Tc?.source ?? null },
      notes: m.notes,
    }
  })
  const own = [...labMaterials]
    .sort((a, b) => a.name.localeCompare(b.name))
    .map(
      (m): MaterialChoice => ({
        key: `lab:${m.id}`,
        group: 'lab',
        name: m.name,
        constants: { msAPerM: m.msAPerM, aJPerM: m.aJPerM, kJPerM3: m.kJPerM3, tcK: m.tcK, anisotropy: 'unknown' },
        sources: { ms: m.source, a: m.source, k: m.source, tc: m.tcK === null ? null : m.source },
        labMaterial: m,
      }),
    )
  return [...builtin, ...own]
}

const normalise = (text: string) => text.toLowerCase().replace(/[^a-z0-9]/g, '')
/** Common ways a sample's material is written, for the built-in entries. */
const ALIASES: Record<string, string[]> = {
  'builtin:fe': ['fe', 'iron'],
  'builtin:co': ['co', 'cobalt'],
  'builtin:ni': ['ni', 'nickel'],
  'builtin:nd2fe14b': ['nd2fe14b', 'ndfeb'],
  'builtin:permalloy': ['permalloy', 'py', 'ni80fe20', 'nife'],
}

/**
 * The choice that matches a sample's free-text material: a lab material of exactly that name first, then a built-in
 * one by name or a common alias; null when nothing matches (the panel then asks the person to choose).
 */
export function guessMaterialChoice(material: string, choices: readonly MaterialChoice[]): MaterialChoice | null {
  const wanted = normalise(material)
  if (!wanted) return null
  return (
    choices.find((c) => c.group === 'lab' && normalise(c.name) === wanted) ??
    choices.find((c) => c.group === 'builtin' && (normalise(c.name) === wanted || (ALIASES[c.key] ?? []).includes(wanted))) ??
    null
  )
}

/**
 * The source text of a lab material copied from a choice: a built-in row names each constant's own source
 * (constants sharing one are listed together), "Built-in table — Ms, Tc: …; A, K1: …"; a lab row keeps its own text.
 */
export function copiedSourceText(choice: MaterialChoice): string {
  if (choice.group === 'lab') return choice.sources.ms
  const byText = new Map<string, string[]>()
  const named: [string, string | null][] = [['Ms', choice.sources.ms], ['A', choice.sources.a], ['K1', choice.sources.k], ['Tc', choice.sources.tc]]
  for (const [constant, text] of named) if (text !== null) byText.set(text, [...(byText.get(text) ?? []), constant])
  return `Built-in table — ${[...byText].map(([text, constants]) => `${constants.join(', ')}: ${text}`).join('; ')}`
}
