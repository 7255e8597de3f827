import { ref, type Ref } from 'vue'
import type { FormItemRule, FormRules } from 'element-plus'
import type { SampleDto } from '@shared/types/lab'
import type { SampleInput, SamplePatch } from '@/api/samples'

type NumberField = 'thicknessNm' | 'annealTemperatureC' | 'annealDurationMin' | 'annealFieldMT'

/**
 * An optional number within [min, max]. The ranges are the server's (server/routes/projects.ts), checked here first
 * so people see the limit beside the field instead of after a round trip; the server still decides.
 */
function optionalRange(min: number, max: number, message: string, exclusiveMin = false): FormItemRule {
  return {
    trigger: 'blur',
    validator: (_rule, value: number | null | undefined, callback) => {
      const tooLow = value != null && (exclusiveMin ? value <= min : value < min)
      callback(value != null && (tooLow || value > max) ? new Error(message) : undefined)
    },
  }
}

const RULES: FormRules<SampleInput> = {
  name: [
    { required: true, whitespace: true, message: 'Give the sample a name.', trigger: 'blur' },
    { max: 200, message: 'At most 200 characters.', trigger: 'blur' },
  ],
  thicknessNm: [optionalRange(0, 1e7, 'Thickness must be above 0 nm (and at most 10 mm).', true)],
  annealTemperatureC: [optionalRange(-273.15, 3000, 'Between −273.15 °C and 3000 °C.')],
  annealDurationMin: [optionalRange(0, 1e6, 'Between 0 and 1,000,000 min.')],
  annealFieldMT: [optionalRange(-1e5, 1e5, 'Between −100,000 mT and 100,000 mT.')],
  notes: [{ max: 10_000, message: 'At most 10,000 characters.', trigger: 'blur' }],
}

const TEXT_FIELDS = ['name', 'material', 'substrate', 'annealAtmosphere', 'notes'] as const
const NUMBER_FIELDS: readonly NumberField[] = ['thicknessNm', 'annealTemperatureC', 'annealDurationMin', 'annealFieldMT']

export interface SampleForm {
  form: Ref<SampleInput>
  rules: FormRules<SampleInput>
  /** Fill the form from a sample to edit, or empty it for a new one. */
  reset: (sample?: SampleDto | null) => void
  /** The values to send: trimmed name, and `null` for a cleared number (an input may report `undefined`). */
  input: () => SampleInput
  /** Only the fields that differ from `original`, for a PATCH that records exactly what changed. */
  changesFrom: (original: SampleDto) => SamplePatch
}

/** State, validation rules and change detection for the add/edit sample form. */
export function useSampleForm(): SampleForm {
  const form = ref<SampleInput>(empty())

  function empty(): SampleInput {
    return { name: '', material: '', thicknessNm: null, substrate: '', annealTemperatureC: null, annealDurationMin: null, annealAtmosphere: '', annealFieldMT: null, notes: '' }
  }

  function reset(sample?: SampleDto | null): void {
    const next = empty()
    if (sample) {
      for (const key of TEXT_FIELDS) next[key] = sample[key]
      for (const key of NUMBER_FIELDS) next[key] = sample[key]
    }
    form.value = next
  }

  function input(): SampleInput {
    const values = { ...form.value, name: form.value.name.trim() }
    for (const key of NUMBER_FIELDS) values[key] = values[key] ?? null
    return values
  }

  function changesFrom(original: SampleDto): SamplePatch {
    const values = input()
    const patch: SamplePatch = {}
    for (const key of TEXT_FIELDS) if (values[key] !== original[key]) patch[key] = values[key]
    for (const key of NUMBER_FIELDS) if (values[key] !== original[key]) patch[key] = values[key]
    return patch
  }

  return { form, rules: RULES, reset, input, changesFrom }
}
