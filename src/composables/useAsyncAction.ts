import { ref, shallowRef, type Ref, type ShallowRef } from 'vue'
import { ElMessage } from 'element-plus'
import { asApiError, type ApiError } from '@/api/http'

export interface AsyncActionOptions {
  /**
   * The caller shows field messages beside the form's fields (see `useFieldErrors`), so an error that carries
   * `fields` needs no extra toast.
   */
  fieldErrorsShownInForm?: boolean
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
      const shownInForm = options.fieldErrorsShownInForm && Object.keys(failure.fields).length > 0
      if (failure.status !== 401 && !shownInForm) ElMessage.error({ message: failure.message, grouping: true })
      return undefined
    } finally {
      pending.value = false
    }
  }

  return { pending, error, run }
}
