import { defineStore } from 'pinia'
import { computed, ref, watch } from 'vue'
import type { SessionUser } from '@shared/types/api'
import type { Role } from '@shared/types/roles'
import type { SignInInput } from '@shared/schemas/auth'
import { ApiError, sessionApi } from '@/api'
import {
  forgetDeviceRunData,
  openDeviceQueueStorage,
  sendWaitingChanges,
  stopBackgroundSending,
  type ChangeAuthor,
} from '@/composables/useOfflineQueue'

/** localStorage: who was last signed in here, so a reload with no connection knows whose changes are being made. */
const DEVICE_USER_KEY = 'startproof:signed-in-user'
/** localStorage: a sign-out the server has not heard of yet; the server's sign-in is ended at the next contact. */
const SIGN_OUT_PENDING_KEY = 'startproof:sign-out-pending'

function readDeviceUser(): SessionUser | null {
  try {
    const raw = localStorage.getItem(DEVICE_USER_KEY)
    const parsed = raw ? (JSON.parse(raw) as SessionUser) : null
    return parsed && typeof parsed.id === 'string' && typeof parsed.displayName === 'string' ? parsed : null
  } catch {
    return null
  }
}
function writeKey(key: string, value: string | null) {
  try {
    if (value === null) localStorage.removeItem(key)
    else localStorage.setItem(key, value)
  } catch {
    // Storage switched off: the app works for as long as the page is open.
  }
}
function signOutPending(): boolean {
  try {
    return localStorage.getItem(SIGN_OUT_PENDING_KEY) !== null
  } catch {
    return false
  }
}

/** Who is signed in; loaded once from `GET /api/session`, then kept in step with sign-in and sign-out. */
export const useSessionStore = defineStore('session', () => {
  const user = ref<SessionUser | null>(null)
  const loaded = ref(false)
  /** The last person signed in on this device (until they sign out), as far as the device knows without the server. */
  const deviceUser = ref<SessionUser | null>(readDeviceUser())
  let loading: Promise<void> | null = null

  watch(
    user,
    (u) => {
      if (!u) return
      deviceUser.value = u
      writeKey(DEVICE_USER_KEY, JSON.stringify(u))
    },
    { flush: 'sync' },
  )

  const isSignedIn = computed(() => user.value !== null)
  const role = computed<Role | null>(() => user.value?.role ?? null)
  /**
   * The person changes are made by: the server's answer, or, while the server has not answered (a reload with no
   * connection), the person last signed in on this device. Null once anyone has signed out.
   */
  const actingUser = computed<SessionUser | null>(() => user.value ?? (loaded.value ? null : deviceUser.value))
  const author = computed<ChangeAuthor | null>(() => (actingUser.value ? { id: actingUser.value.id, name: actingUser.value.displayName } : null))

  function hasRole(...roles: Role[]) {
    return user.value !== null && roles.includes(user.value.role)
  }

  /** Nobody is signed in here any more. */
  function forgetUser() {
    user.value = null
    loaded.value = true
    deviceUser.value = null
    writeKey(DEVICE_USER_KEY, null)
  }

  /** Sends, in the background, the changes the person signed in now left on this device earlier. */
  async function sendWaiting() {
    const me = user.value
    if (!me) return
    try {
      await sendWaitingChanges({ storage: await openDeviceQueueStorage(), author: () => author.value })
    } catch {
      // No storage on this device: nothing can be waiting on it.
    }
  }

  async function load() {
    const pendingSignOut = signOutPending()
    if (pendingSignOut) {
      // Signed out with no connection: end that sign-in on the server before anyone may use it.
      try {
        await sessionApi.signOut()
        writeKey(SIGN_OUT_PENDING_KEY, null)
      } catch {
        forgetUser()
        return
      }
    }
    try {
      // The answer the browser fetched with the page predates that sign-out and still names the person: ask anew.
      user.value = await sessionApi.me(pendingSignOut)
    } catch (err) {
      if (!(err instanceof ApiError && err.status === 401)) throw err
      forgetUser()
    }
    loaded.value = true
    if (user.value) void sendWaiting()
  }

  async function ensureLoaded() {
    if (loaded.value) return
    loading ??= load().finally(() => {
      loading = null
    })
    await loading
  }

  /** Asks the server again who is signed in (it refused a change as not this person's). */
  async function recheck() {
    loaded.value = false
    await ensureLoaded()
  }

  async function signIn(input: SignInInput) {
    if (signOutPending()) await sessionApi.signOut().catch(() => undefined)
    user.value = await sessionApi.signIn(input)
    loaded.value = true
    writeKey(SIGN_OUT_PENDING_KEY, null)
    // Whatever an earlier person left cached goes, except what they need for their own unsent changes.
    void forgetDeviceRunData(user.value.id).catch(() => undefined)
    void sendWaiting()
  }

  /**
   * Signs out here even with no connection: the sign-out is then finished on the server at the next contact. The
   * person's unsent changes stay on the device and wait for them; cached runs nobody still needs go.
   */
  async function signOut(): Promise<{ serverReached: boolean }> {
    stopBackgroundSending()
    let serverReached = true
    try {
      await sessionApi.signOut()
      writeKey(SIGN_OUT_PENDING_KEY, null)
    } catch (err) {
      if (!(err instanceof ApiError && err.status === 401)) {
        serverReached = false
        writeKey(SIGN_OUT_PENDING_KEY, new Date().toISOString())
      }
    }
    forgetUser()
    await forgetDeviceRunData(null).catch(() => undefined)
    return { serverReached }
  }

  /** Forget the user locally (after a 401 from any call). */
  function clear() {
    stopBackgroundSending()
    forgetUser()
  }

  return { user, loaded, deviceUser, isSignedIn, role, actingUser, author, hasRole, ensureLoaded, recheck, signIn, signOut, clear }
})
