import { ref, shallowRef, type Ref, type ShallowRef } from 'vue'
import { ElMessage } from 'element-plus'
import { asApiError, type ApiError } from '@/api/http'

export interface AsyncActionOptions {
  /**
   * The server field names whose messages the form shows beside a field just now (see `useFieldErrors`): an error
   * whose fields are all among them needs no extra toast; one naming a field the form does not show (say, a lab
   * chooser hidden for people in one lab) is toasted, so it never goes unseen.
   */
  fieldsShownInForm?: () => readonly string[]
}

export interface AsyncAction<Args extends unknown[], R> {
  pending: Ref<boolean>
  error: ShallowRef<ApiError | null>
  /** Runs the action; resolves to its result, or to `undefined` after a failure (already reported). */
  run: (...args: Args) => Promise<R | undefined>
}

/**
 * Run a user-started action (save, create, sign out) with a pending flag for the button and one error message.
 * A 401 is not reported here: the HTTP layer has already sent the person to sign-in.
 */
export function useAsyncAction<Args extends unknown[], R>(
  action: (...args: Args) => Promise<R>,
  options: AsyncActionOptions = {},
): AsyncAction<Args, R> {
  const pending = ref(false)
  const error = shallowRef<ApiError | null>(null)

  async function run(...args: Args): Promise<R | undefined> {
    pending.value = true
    error.value = null
    try {
      return await action(...args)
    } catch (e) {
      const failure = asApiError(e)
      error.value = failure
      const fields = Object.keys(failure.fields)
      const shown = options.fieldsShownInForm?.() ?? []
      const shownInForm = fields.length > 0 && fields.every((field) => shown.includes(field))
      if (failure.status !== 401 && !shownInForm) ElMessage.error({ message: failure.message, grouping: true })
      return undefined
    } finally {
      pending.value = false
    }
  }

  return { pending, error, run }
}
