import { computed, ref, shallowRef } from 'vue'
import { openDB, type DBSchema, type IDBPDatabase } from 'idb'
import type { ReadingChangeInput, StepChangeInput } from '@shared/schemas/run'
import type { RunDetail, RunReading, RunStepState } from '@shared/types/run'
import { ApiError } from '@/api/http'
import { newChangeId } from '@/api/runs'

export type ChangeKind = 'reading' | 'step'
export type ChangeBody = ReadingChangeInput | StepChangeInput
/** What the person changed, without the bookkeeping the queue adds (change id, base version). */
export type ChangeContent = Omit<ReadingChangeInput, 'changeId' | 'baseVersion'> | Omit<StepChangeInput, 'changeId' | 'baseVersion'>

/** One change kept on the device until the server has it. */
export interface QueuedChange {
  changeId: string
  runId: string
  /** Order of the change on this device; the queue is sent in this order. */
  seq: number
  kind: ChangeKind
  /** Field id of a reading, step id of a step. */
  targetId: string
  body: ChangeBody
  /** Sent at least once: the server may already hold it, so the change is only ever resent as it is, never rewritten. */
  attempted: boolean
  /** `conflict`: someone else changed the target first; waits for the person to choose. */
  state: 'pending' | 'conflict'
  conflict: { current: RunReading | RunStepState; message: string } | null
  /** Not sent before this moment (epoch ms): typing settles first. */
  readyAt: number
  queuedAt: string
}

/** Where queued changes live. The IndexedDB one survives reloads; the in-memory one serves tests and browsers without IndexedDB. */
export interface QueueStorage {
  list(runId: string): Promise<QueuedChange[]>
  put(change: QueuedChange): Promise<void>
  remove(changeId: string): Promise<void>
  /** The last run detail seen from the server, so the runner opens with no connection. */
  getRun(runId: string): Promise<RunDetail | null>
  putRun(run: RunDetail): Promise<void>
}

// Stored values must be structured-clonable plain data, never Vue proxies.
const plain = <T>(value: T): T => JSON.parse(JSON.stringify(value)) as T
const bySeq = (a: QueuedChange, b: QueuedChange) => a.seq - b.seq

export function createMemoryQueueStorage(): QueueStorage & { changes: Map<string, QueuedChange> } {
  const changes = new Map<string, QueuedChange>()
  const runs = new Map<string, RunDetail>()
  return {
    changes,
    async list(runId) {
      return [...changes.values()].filter((c) => c.runId === runId).map(plain).sort(bySeq)
    },
    async put(change) {
      changes.set(change.changeId, plain(change))
    },
    async remove(changeId) {
      changes.delete(changeId)
    },
    async getRun(runId) {
      const run = runs.get(runId)
      return run ? plain(run) : null
    },
    async putRun(run) {
      runs.set(run.id, plain(run))
    },
  }
}

interface RunDb extends DBSchema {
  changes: { key: string; value: QueuedChange; indexes: { byRun: [string, number] } }
  runs: { key: string; value: { id: string; run: RunDetail; savedAt: string } }
}

export const RUN_DB_NAME = 'startproof-runs'

let dbPromise: Promise<IDBPDatabase<RunDb>> | null = null
function runDb() {
  dbPromise ??= openDB<RunDb>(RUN_DB_NAME, 1, {
    upgrade(db) {
      const changes = db.createObjectStore('changes', { keyPath: 'changeId' })
      changes.createIndex('byRun', ['runId', 'seq'])
      db.createObjectStore('runs', { keyPath: 'id' })
    },
  }).catch((err) => {
    dbPromise = null
    throw err
  })
  return dbPromise
}

/** Queued changes and the last run detail in this browser's IndexedDB (`startproof-runs`). Throws when IndexedDB cannot be opened. */
export async function createIndexedDbQueueStorage(): Promise<QueueStorage> {
  if (typeof indexedDB === 'undefined') throw new Error('IndexedDB is not available in this browser')
  await runDb()
  return {
    async list(runId) {
      const db = await runDb()
      return db.getAllFromIndex('changes', 'byRun', IDBKeyRange.bound([runId, -Infinity], [runId, Infinity]))
    },
    async put(change) {
      const db = await runDb()
      await db.put('changes', plain(change))
    },
    async remove(changeId) {
      const db = await runDb()
      await db.delete('changes', changeId)
    },
    async getRun(runId) {
      const db = await runDb()
      return (await db.get('runs', runId))?.run ?? null
    },
    async putRun(run) {
      const db = await runDb()
      await db.put('runs', { id: run.id, run: plain(run), savedAt: new Date().toISOString() })
    },
  }
}

/**
 * saved: nothing waiting · waiting: a change settles before it is sent · sending: one change on its way ·
 * offline: the server cannot be reached · failing: the server answered with a failure (5xx, database down) ·
 * signed_out: the sign-in ended; changes wait until the person signs in again.
 */
export type QueueStatus = 'saved' | 'waiting' | 'sending' | 'offline' | 'failing' | 'signed_out'

export interface OfflineQueueOptions {
  runId: string
  storage: QueueStorage
  /** Sends one change; resolves the target's version on the server after the change (for the changes queued behind it). */
  send: (change: QueuedChange) => Promise<{ version: number }>
  onSaved?: (change: QueuedChange, result: { version: number }) => void
  /** A definitive refusal (bad value, run locked, no access): the change has been dropped from the queue. */
  onRejected?: (change: QueuedChange, error: ApiError) => void
  onConflict?: (change: QueuedChange) => void
  debounceMs?: number
  backoffMs?: number
  maxBackoffMs?: number
  now?: () => number
  /** Listen to the window's `online` event (off in unit tests that drive `retryNow`). */
  listenOnline?: boolean
}

/** What an error means for a queued change. */
export function classifyFailure(err: unknown): 'retry' | 'conflict' | 'reject' {
  if (!(err instanceof ApiError)) return 'retry'
  if (err.status === 0 || err.status >= 500 || err.status === 408 || err.status === 429 || err.status === 401) return 'retry'
  const current = (err as { current?: unknown }).current
  if (err.status === 409 && (err.code === 'reading_conflict' || err.code === 'step_conflict') && current) return 'conflict'
  return 'reject'
}

/**
 * An ordered, persistent outbox for one run. Every change is written to storage before any network call; one change
 * is sent at a time, in order; a change leaves storage only after the server's 200 or a definitive refusal. Network
 * failures, 5xx and 401 keep it and retry with backoff (and at once when the browser comes back online). A conflict
 * keeps it, marked, until the person keeps theirs or uses their own.
 */
export function useOfflineQueue(options: OfflineQueueOptions) {
  const debounceMs = options.debounceMs ?? 600
  const backoffMs = options.backoffMs ?? 1000
  const maxBackoffMs = options.maxBackoffMs ?? 30000
  const now = options.now ?? (() => Date.now())

  const items = shallowRef<QueuedChange[]>([])
  const status = ref<QueueStatus>('saved')
  const lastError = ref<string | null>(null)
  const lastSavedAt = ref<Date | null>(null)
  const loaded = ref(false)

  let sending = false
  let stopped = false
  let failures = 0
  let retryAt = 0
  let timer: ReturnType<typeof setTimeout> | undefined
  let lastSeq = 0
  let chain: Promise<unknown> = Promise.resolve()

  /** Storage writes and queue edits run one after another, so an edit never races the sender. */
  function locked<T>(fn: () => Promise<T>): Promise<T> {
    const next = chain.then(fn, fn)
    chain = next.catch(() => undefined)
    return next
  }

  const publish = (list: QueuedChange[]) => (items.value = [...list].sort(bySeq))
  const pendingCount = computed(() => items.value.length)
  const conflicts = computed(() => items.value.filter((c) => c.state === 'conflict'))

  const onOnline = () => retryNow()
  if (options.listenOnline !== false && typeof window !== 'undefined') window.addEventListener('online', onOnline)

  function schedule(ms: number) {
    clearTimeout(timer)
    if (stopped) return
    timer = setTimeout(() => void pump(), Math.max(0, ms))
  }

  /** Reads what this device still holds for the run and starts sending it. */
  async function load(): Promise<QueuedChange[]> {
    const list = await locked(() => options.storage.list(options.runId))
    lastSeq = list.reduce((m, c) => Math.max(m, c.seq), 0)
    publish(list)
    loaded.value = true
    void pump()
    return list
  }

  const sameTarget = (a: QueuedChange, kind: ChangeKind, targetId: string) => a.kind === kind && a.targetId === targetId

  /**
   * Keeps a change for sending. A change to a target whose earlier change has not been sent yet replaces that change
   * (same place in the order); otherwise it is added at the end. `baseVersion` is the target's version the person saw.
   */
  function enqueue(kind: ChangeKind, targetId: string, content: ChangeContent, baseVersion: number): Promise<QueuedChange> {
    return locked(async () => {
      const list = items.value
      const earlier = [...list].reverse().find((c) => sameTarget(c, kind, targetId))
      let change: QueuedChange
      if (earlier && !earlier.attempted && earlier.state === 'pending') {
        change = { ...earlier, body: { ...content, changeId: earlier.changeId, baseVersion: earlier.body.baseVersion } as ChangeBody, readyAt: now() + debounceMs }
      } else {
        const changeId = newChangeId()
        lastSeq = Math.max(now(), lastSeq + 1)
        change = {
          changeId,
          runId: options.runId,
          seq: lastSeq,
          kind,
          targetId,
          // Behind an unanswered change of the same target: rebased on that change's result when it lands.
          body: { ...content, changeId, baseVersion: earlier ? earlier.body.baseVersion : baseVersion } as ChangeBody,
          attempted: false,
          state: 'pending',
          conflict: null,
          readyAt: now() + debounceMs,
          queuedAt: new Date(now()).toISOString(),
        }
      }
      await options.storage.put(change)
      publish([...list.filter((c) => c.changeId !== change.changeId), change])
      if (!sending) schedule(0)
      return change
    })
  }

  /** The next change that may be sent: in order, skipping every change held behind a conflict on its target. */
  function nextToSend(): QueuedChange | null {
    const blocked = new Set<string>()
    for (const c of items.value) {
      const key = `${c.kind}:${c.targetId}`
      if (c.state === 'conflict') {
        blocked.add(key)
        continue
      }
      if (!blocked.has(key)) return c
    }
    return null
  }

  function settleStatus() {
    if (!nextToSend()) {
      status.value = 'saved'
      lastError.value = items.value.length ? lastError.value : null
    }
  }

  async function pump(): Promise<void> {
    if (sending || stopped) return
    sending = true
    try {
      for (;;) {
        if (stopped) return
        const next = nextToSend()
        if (!next) {
          settleStatus()
          return
        }
        const wait = Math.max(next.readyAt - now(), retryAt - now())
        if (wait > 0) {
          if (status.value === 'saved' || status.value === 'sending') status.value = 'waiting'
          schedule(wait)
          return
        }
        const change = await locked(async () => {
          const current = items.value.find((c) => c.changeId === next.changeId)
          if (!current || current.state !== 'pending') return null
          if (current.readyAt > now()) return null
          const marked = { ...current, attempted: true }
          if (!current.attempted) {
            await options.storage.put(marked)
            publish(items.value.map((c) => (c.changeId === marked.changeId ? marked : c)))
          }
          return marked
        })
        if (!change) continue
        if (status.value !== 'offline' && status.value !== 'failing' && status.value !== 'signed_out') status.value = 'sending'
        try {
          const result = await options.send(change)
          failures = 0
          retryAt = 0
          await locked(async () => {
            await options.storage.remove(change.changeId)
            const rest: QueuedChange[] = []
            for (const c of items.value) {
              if (c.changeId === change.changeId) continue
              if (sameTarget(c, change.kind, change.targetId) && c.body.baseVersion !== result.version) {
                const rebased = { ...c, body: { ...c.body, baseVersion: result.version } }
                await options.storage.put(rebased)
                rest.push(rebased)
              } else rest.push(c)
            }
            publish(rest)
          })
          lastSavedAt.value = new Date(now())
          lastError.value = null
          status.value = 'sending'
          options.onSaved?.(change, result)
        } catch (err) {
          const verdict = classifyFailure(err)
          if (verdict === 'retry') {
            failures += 1
            const delay = Math.min(maxBackoffMs, backoffMs * 2 ** (failures - 1))
            retryAt = now() + delay
            const e = err instanceof ApiError ? err : null
            status.value = !e || e.status === 0 ? 'offline' : e.status === 401 ? 'signed_out' : 'failing'
            lastError.value = err instanceof Error ? err.message : String(err)
            schedule(delay)
            return
          }
          const apiError = err as ApiError
          if (verdict === 'conflict') {
            const current = (apiError as ApiError & { current: RunReading | RunStepState }).current
            const marked: QueuedChange = { ...change, state: 'conflict', conflict: { current, message: apiError.message } }
            await locked(async () => {
              await options.storage.put(marked)
              publish(items.value.map((c) => (c.changeId === marked.changeId ? marked : c)))
            })
            options.onConflict?.(marked)
          } else {
            await locked(async () => {
              await options.storage.remove(change.changeId)
              publish(items.value.filter((c) => c.changeId !== change.changeId))
            })
            options.onRejected?.(change, apiError)
          }
        }
      }
    } finally {
      sending = false
    }
  }

  /** Tries again at once (the browser came back online, or the person asked). */
  function retryNow() {
    retryAt = 0
    failures = 0
    schedule(0)
  }

  /** Drops this device's changes to the target: the server's value stands. */
  function keepTheirs(kind: ChangeKind, targetId: string): Promise<void> {
    return locked(async () => {
      const drop = items.value.filter((c) => sameTarget(c, kind, targetId))
      for (const c of drop) await options.storage.remove(c.changeId)
      publish(items.value.filter((c) => !sameTarget(c, kind, targetId)))
      settleStatus()
    })
  }

  /** Sends this device's newest change to the target again, on top of the server's current version. */
  function useMine(kind: ChangeKind, targetId: string, currentVersion: number): Promise<void> {
    return locked(async () => {
      const mine = items.value.filter((c) => sameTarget(c, kind, targetId))
      if (!mine.length) return
      const newest = mine[mine.length - 1]
      for (const c of mine) await options.storage.remove(c.changeId)
      const changeId = newChangeId()
      const resent: QueuedChange = {
        ...newest,
        changeId,
        body: { ...newest.body, changeId, baseVersion: currentVersion },
        attempted: false,
        state: 'pending',
        conflict: null,
        readyAt: now(),
      }
      await options.storage.put(resent)
      publish([...items.value.filter((c) => !sameTarget(c, kind, targetId)), resent])
      if (!sending) schedule(0)
    })
  }

  /** Changes waiting for a target, oldest first. */
  function changesFor(kind: ChangeKind, targetId: string) {
    return items.value.filter((c) => sameTarget(c, kind, targetId))
  }

  function dispose() {
    stopped = true
    clearTimeout(timer)
    if (typeof window !== 'undefined') window.removeEventListener('online', onOnline)
  }

  return { items, status, lastError, lastSavedAt, loaded, pendingCount, conflicts, load, enqueue, retryNow, keepTheirs, useMine, changesFor, dispose, pump }
}

export type OfflineQueue = ReturnType<typeof useOfflineQueue>
