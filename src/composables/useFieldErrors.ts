import { ref, type Ref } from 'vue'
import type { ApiError } from '@/api/http'

export interface FieldErrors {
  /** One message per field, ready for `<el-form-item :error="errors.name">`. */
  errors: Ref<Record<string, string>>
  /** Take the field messages of a 400 answer; true when there were any. */
  setFrom: (error: ApiError | null) => boolean
  clear: () => void
}

/** Map the server's `fields` (zod's flattened messages) onto form items, so a rejected value is marked where typed. */
export function useFieldErrors(): FieldErrors {
  const errors = ref<Record<string, string>>({})

  function setFrom(error: ApiError | null): boolean {
    const entries = Object.entries(error?.fields ?? {}).filter(([, messages]) => messages.length > 0)
    errors.value = Object.fromEntries(entries.map(([field, messages]) => [field, messages[0]]))
    return entries.length > 0
  }

  function clear(): void {
    errors.value = {}
  }

  return { errors, setFrom, clear }
}
