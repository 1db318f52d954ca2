import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { SessionUser } from '@shared/types/api'
import type { Role } from '@shared/types/roles'
import type { SignInInput } from '@shared/schemas/auth'
import { ApiError, sessionApi } from '@/api'

/** Who is signed in; loaded once from `GET /api/session`, then kept in step with sign-in and sign-out. */
export const useSessionStore = defineStore('session', () => {
  const user = ref<SessionUser | null>(null)
  const loaded = ref(false)
  let loading: Promise<void> | null = null

  const isSignedIn = computed(() => user.value !== null)
  const role = computed<Role | null>(() => user.value?.role ?? null)

  function hasRole(...roles: Role[]) {
    return user.value !== null && roles.includes(user.value.role)
  }

  async function ensureLoaded() {
    if (loaded.value) return
    loading ??= sessionApi
      .me()
      .then((u) => {
        user.value = u
      })
      .catch((err) => {
        if (!(err instanceof ApiError && err.status === 401)) throw err
        user.value = null
      })
      .then(() => {
        loaded.value = true
      })
      .finally(() => {
        loading = null
      })
    await loading
  }

  async function signIn(input: SignInInput) {
    user.value = await sessionApi.signIn(input)
    loaded.value = true
  }

  async function signOut() {
    await sessionApi.signOut()
    user.value = null
  }

  /** Forget the user locally (after a 401 from any call). */
  function clear() {
    user.value = null
    loaded.value = true
  }

  return { user, loaded, isSignedIn, role, hasRole, ensureLoaded, signIn, signOut, clear }
})
