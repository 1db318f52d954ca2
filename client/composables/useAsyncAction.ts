import { ref } from 'vue'
import { ApiError } from '@/api'

/** Runs an async action with `isLoading` and an `error` in words; `fieldErrors` keeps the server's per-field messages. */
export function useAsyncAction<A extends unknown[], R>(action: (...args: A) => Promise<R>) {
  const isLoading = ref(false)
  const error = ref<string | null>(null)
  const fieldErrors = ref<Record<string, string>>({})

  async function run(...args: A): Promise<R | undefined> {
    isLoading.value = true
    error.value = null
    fieldErrors.value = {}
    try {
      return await action(...args)
    } catch (err) {
      if (err instanceof ApiError) {
        error.value = err.message
        fieldErrors.value = err.fields
      } else {
        error.value = err instanceof Error ? err.message : String(err)
      }
      return undefined
    } finally {
      isLoading.value = false
    }
  }

  return { isLoading, error, fieldErrors, run }
}
