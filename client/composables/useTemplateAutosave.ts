import { computed, ref } from 'vue'
import { ApiError } from '@/api/http'
import type { ValidationIssue } from '@shared/types/api'

/**
 * saved: the server has exactly the working copy · pending: a valid change waits for its save · saving: on its way ·
 * invalid: the schema finds problems, nothing is sent · rejected: the server refused it (its problems are shown) ·
 * offline: the server cannot be reached, retried · error: another failure, retried · frozen: the version is no
 * longer a draft. In every state but saved, the working copy is kept in this browser.
 */
export type AutosaveStatus = 'saved' | 'pending' | 'saving' | 'invalid' | 'rejected' | 'offline' | 'error' | 'frozen'

/** What is kept in localStorage for one template version. */
export interface StoredWorkingCopy {
  definition: unknown
  /** `updatedAt` of the server's copy this work started from. */
  baseUpdatedAt: string | null
  changedAt: string
}

export interface AutosaveOptions {
  storageKey: string
  /** Sends the definition; resolves the server's `updatedAt` of the saved version. */
  save: (definition: unknown) => Promise<{ updatedAt: string }>
  debounceMs?: number
  retryMs?: number
  storage?: Storage
  onRejected?: (issues: ValidationIssue[]) => void
}

export function templateDraftStorageKey(templateId: string, number: number) {
  return `startproof:template-working-copy:${templateId}:v${number}`
}

/** Reads a stored working copy; null when there is none or it cannot be read. */
export function readStoredWorkingCopy(key: string, storage: Storage = window.localStorage): StoredWorkingCopy | null {
  try {
    const raw = storage.getItem(key)
    if (!raw) return null
    const parsed = JSON.parse(raw) as StoredWorkingCopy
    return parsed && typeof parsed === 'object' && 'definition' in parsed ? parsed : null
  } catch {
    return null
  }
}

/**
 * Debounced saving of a draft that only sends valid definitions, keeps every unsaved change in localStorage
 * (so a reload, a refused save or a lost connection loses nothing) and retries when the connection returns.
 */
export function useTemplateAutosave(options: AutosaveOptions) {
  const storage = options.storage ?? window.localStorage
  const debounceMs = options.debounceMs ?? 1200
  const retryMs = options.retryMs ?? 10000

  const status = ref<AutosaveStatus>('saved')
  const problemCount = ref(0)
  const lastSavedAt = ref<Date | null>(null)
  const message = ref<string | null>(null)

  let savedJson: string | null = null
  let baseUpdatedAt: string | null = null
  let currentJson: string | null = null
  let currentValid = false
  let timer: ReturnType<typeof setTimeout> | undefined
  let inflight: Promise<void> | null = null
  let stopped = false

  const onOnline = () => {
    if (status.value === 'offline' || status.value === 'error') schedule(0)
  }
  window.addEventListener('online', onOnline)

  function store(json: string) {
    try {
      const entry: StoredWorkingCopy = { definition: JSON.parse(json), baseUpdatedAt, changedAt: new Date().toISOString() }
      storage.setItem(options.storageKey, JSON.stringify(entry))
    } catch {
      // A full or disabled storage must not stop editing; the status still says the work is not saved.
    }
  }
  function forget() {
    try {
      storage.removeItem(options.storageKey)
    } catch {
      // Nothing to clean up when storage is unavailable.
    }
  }

  function schedule(ms: number) {
    clearTimeout(timer)
    if (stopped) return
    timer = setTimeout(() => void saveNow(), ms)
  }

  /** The server's copy as loaded: what "saved" is measured against. */
  function setBaseline(json: string, updatedAt: string | null) {
    savedJson = json
    baseUpdatedAt = updatedAt
    if (currentJson === null) currentJson = json
  }

  /** Tells the autosave what the working copy now is and whether the schema accepts it. */
  function update(json: string, problems: number) {
    if (stopped) {
      if (json !== currentJson) store(json)
      currentJson = json
      return
    }
    currentJson = json
    currentValid = problems === 0
    problemCount.value = problems
    if (json === savedJson) {
      clearTimeout(timer)
      forget()
      if (!inflight) {
        status.value = 'saved'
        message.value = null
      }
      return
    }
    store(json)
    if (!currentValid) {
      clearTimeout(timer)
      if (!inflight) status.value = 'invalid'
      return
    }
    if (!inflight && status.value !== 'offline' && status.value !== 'error') status.value = 'pending'
    schedule(status.value === 'offline' || status.value === 'error' ? retryMs : debounceMs)
  }

  async function saveNow(): Promise<void> {
    clearTimeout(timer)
    if (stopped || currentJson === null || !currentValid || currentJson === savedJson) return
    if (inflight) {
      await inflight
      return saveNow()
    }
    const json = currentJson
    status.value = 'saving'
    inflight = (async () => {
      try {
        const result = await options.save(JSON.parse(json))
        savedJson = json
        baseUpdatedAt = result.updatedAt
        lastSavedAt.value = new Date()
        message.value = null
        if (currentJson === savedJson) {
          status.value = 'saved'
          forget()
        } else {
          store(currentJson!)
          status.value = currentValid ? 'pending' : 'invalid'
          if (currentValid) schedule(debounceMs)
        }
      } catch (err) {
        const e = err instanceof ApiError ? err : null
        message.value = err instanceof Error ? err.message : String(err)
        if (e && e.status === 0) {
          status.value = 'offline'
          schedule(retryMs)
        } else if (e && e.code === 'invalid_definition') {
          status.value = 'rejected'
          const issues = Object.entries(e.fields).map(([path, msg]) => ({ path, message: msg }))
          problemCount.value = issues.length
          options.onRejected?.(issues)
        } else if (e && (e.code === 'version_frozen' || e.status === 409 || e.status === 404)) {
          status.value = 'frozen'
          stopped = true
        } else {
          status.value = 'error'
          schedule(retryMs)
        }
      } finally {
        inflight = null
      }
    })()
    await inflight
  }

  /** Saves at once if a valid change is waiting (leaving the page, publishing). */
  async function flush(): Promise<boolean> {
    if (inflight) await inflight
    if (currentJson !== savedJson && currentValid && !stopped) await saveNow()
    return currentJson === savedJson
  }

  function dispose() {
    clearTimeout(timer)
    stopped = true
    window.removeEventListener('online', onOnline)
  }

  const hasUnsavedWork = computed(() => status.value !== 'saved')
  const label = computed(() => {
    switch (status.value) {
      case 'saved':
        return 'Saved'
      case 'pending':
        return 'Unsaved changes'
      case 'saving':
        return 'Saving…'
      case 'invalid':
        return `Not saved: ${problemCount.value} problem${problemCount.value === 1 ? '' : 's'}`
      case 'rejected':
        return `Not saved: the server found ${problemCount.value} problem${problemCount.value === 1 ? '' : 's'}`
      case 'offline':
        return 'Offline: kept on this device'
      case 'error':
        return 'Not saved: kept on this device'
      case 'frozen':
        return 'No longer a draft: kept on this device'
    }
    return ''
  })

  return { status, label, problemCount, lastSavedAt, message, hasUnsavedWork, setBaseline, update, saveNow, flush, dispose, forget }
}
