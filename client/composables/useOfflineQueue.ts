import { computed, ref, shallowRef } from 'vue'
import { openDB, type DBSchema, type IDBPDatabase } from 'idb'
import type { ReadingChangeInput, StepChangeInput } from '@shared/schemas/run'
import type { ReadingSaved, RunDetail, RunReading, RunStepState } from '@shared/types/run'
import { ApiError } from '@/api/http'
import { newChangeId, runsApi } from '@/api/runs'

export type ChangeKind = 'reading' | 'step'
export type ChangeBody = ReadingChangeInput | StepChangeInput
/** What the person changed, without the bookkeeping the queue adds (change id, base version). */
export type ChangeContent = Omit<ReadingChangeInput, 'changeId' | 'baseVersion'> | Omit<StepChangeInput, 'changeId' | 'baseVersion'>

/** The signed-in person a change is made by and sent under. */
export interface ChangeAuthor {
  id: string
  name: string
}

/** One change kept on the device until the server has it. */
export interface QueuedChange {
  changeId: string
  runId: string
  /**
   * Who made the change. It is sent only while that person is signed in (and the server refuses it under anyone
   * else). Null only for changes kept by an older version of the app, which did not record it: those go out as before.
   */
  authorId: string | null
  /** The author's display name when the change was made, for the sign-in page of a shared tablet. */
  authorName: string | null
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
  /** Every change kept on this device, of every run and person, oldest first. */
  listAll(): Promise<QueuedChange[]>
  put(change: QueuedChange): Promise<void>
  remove(changeId: string): Promise<void>
  /**
   * The last run detail `ownerId` saw from the server, so the runner opens with no connection. Kept per person: one
   * person's copy is never handed to another.
   */
  getRun(runId: string, ownerId: string): Promise<RunDetail | null>
  putRun(run: RunDetail, ownerId: string): Promise<void>
  /** Deletes every kept run detail for which `keep` says no (owner null: kept by an older version, owner unknown). */
  pruneRuns(keep: (ownerId: string | null, runId: string) => boolean): Promise<void>
}

// Stored values must be structured-clonable plain data, never Vue proxies.
const plain = <T>(value: T): T => JSON.parse(JSON.stringify(value)) as T
const bySeq = (a: QueuedChange, b: QueuedChange) => a.seq - b.seq
/** Changes stored before authors were recorded read as having none. */
const withAuthor = (c: QueuedChange): QueuedChange => ({ ...c, authorId: c.authorId ?? null, authorName: c.authorName ?? null })
const runKey = (ownerId: string, runId: string) => `${ownerId}/${runId}`

export function createMemoryQueueStorage(): QueueStorage & { changes: Map<string, QueuedChange>; runs: Map<string, { ownerId: string; run: RunDetail }> } {
  const changes = new Map<string, QueuedChange>()
  const runs = new Map<string, { ownerId: string; run: RunDetail }>()
  return {
    changes,
    runs,
    async list(runId) {
      return [...changes.values()].filter((c) => c.runId === runId).map(plain).map(withAuthor).sort(bySeq)
    },
    async listAll() {
      return [...changes.values()].map(plain).map(withAuthor).sort(bySeq)
    },
    async put(change) {
      changes.set(change.changeId, plain(change))
    },
    async remove(changeId) {
      changes.delete(changeId)
    },
    async getRun(runId, ownerId) {
      const kept = runs.get(runKey(ownerId, runId))
      return kept ? plain(kept.run) : null
    },
    async putRun(run, ownerId) {
      runs.set(runKey(ownerId, run.id), { ownerId, run: plain(run) })
    },
    async pruneRuns(keep) {
      for (const [key, kept] of runs) if (!keep(kept.ownerId, kept.run.id)) runs.delete(key)
    },
  }
}

interface RunDb extends DBSchema {
  changes: { key: string; value: QueuedChange; indexes: { byRun: [string, number] } }
  /** `id` is `ownerId/runId`; records written before owners were kept have the bare run id and no `ownerId`. */
  runs: { key: string; value: { id: string; ownerId?: string; runId?: string; run: RunDetail; savedAt: string } }
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
      return (await db.getAllFromIndex('changes', 'byRun', IDBKeyRange.bound([runId, -Infinity], [runId, Infinity]))).map(withAuthor)
    },
    async listAll() {
      const db = await runDb()
      return (await db.getAll('changes')).map(withAuthor).sort(bySeq)
    },
    async put(change) {
      const db = await runDb()
      await db.put('changes', plain(change))
    },
    async remove(changeId) {
      const db = await runDb()
      await db.delete('changes', changeId)
    },
    async getRun(runId, ownerId) {
      const db = await runDb()
      return (await db.get('runs', runKey(ownerId, runId)))?.run ?? null
    },
    async putRun(run, ownerId) {
      const db = await runDb()
      await db.put('runs', { id: runKey(ownerId, run.id), ownerId, runId: run.id, run: plain(run), savedAt: new Date().toISOString() })
    },
    async pruneRuns(keep) {
      const db = await runDb()
      const tx = db.transaction('runs', 'readwrite')
      for (let cursor = await tx.store.openCursor(); cursor; cursor = await cursor.continue()) {
        const { ownerId, runId, run } = cursor.value
        if (!keep(ownerId ?? null, runId ?? run.id)) await cursor.delete()
      }
      await tx.done
    },
  }
}

let storageFactory: () => Promise<QueueStorage> = createIndexedDbQueueStorage
/** Tests hand in their own storage. */
export function setDeviceQueueStorageFactory(factory: () => Promise<QueueStorage>) {
  storageFactory = factory
}
/** This device's queue storage (IndexedDB); throws when the browser has none. */
export function openDeviceQueueStorage(): Promise<QueueStorage> {
  return storageFactory()
}

/** Sends one queued change with its author; resolves the target's new version and the server's whole answer. */
export async function sendQueuedChange(change: QueuedChange): Promise<{ version: number; response: unknown }> {
  if (change.kind === 'reading') {
    const res = await runsApi.saveReading(change.runId, change.targetId, change.body as ReadingChangeInput)
    return { version: res.reading.version, response: res }
  }
  const res = await runsApi.saveStep(change.runId, change.targetId, change.body as StepChangeInput)
  return { version: res.step.version, response: res }
}

/** Whose changes wait on this device, and how many of each person's (changes without a recorded author are left out). */
export interface WaitingAuthor {
  authorId: string
  authorName: string
  count: number
}

export function summarizeWaiting(changes: QueuedChange[]): WaitingAuthor[] {
  const byAuthor = new Map<string, WaitingAuthor>()
  for (const c of changes) {
    if (!c.authorId) continue
    const entry = byAuthor.get(c.authorId) ?? { authorId: c.authorId, authorName: c.authorName ?? 'Another person', count: 0 }
    entry.count += 1
    // The newest change carries the newest spelling of the name.
    if (c.authorName) entry.authorName = c.authorName
    byAuthor.set(c.authorId, entry)
  }
  return [...byAuthor.values()]
}

/** The people whose unsent changes this device holds; none when the device keeps nothing or its storage cannot be read. */
export async function listWaitingAuthors(): Promise<WaitingAuthor[]> {
  try {
    return summarizeWaiting(await (await openDeviceQueueStorage()).listAll())
  } catch {
    return []
  }
}

/** localStorage: which person opened a run for editing on this device (lets a reload with no connection keep editing). */
export const RUN_EDITOR_KEY_PREFIX = 'startproof:run-editor:'
/** sessionStorage: the cautions a person acknowledged in this tab (kept by the run page). */
const RUN_CAUTIONS_KEY_PREFIX = 'startproof:run-cautions:'

function removeKeys(storage: Storage | undefined, prefix: string, keep: (value: string | null) => boolean = () => false) {
  if (!storage) return
  const keys: string[] = []
  for (let i = 0; i < storage.length; i++) {
    const key = storage.key(i)
    if (key?.startsWith(prefix) && !keep(storage.getItem(key))) keys.push(key)
  }
  for (const key of keys) storage.removeItem(key)
}

/**
 * What a sign-out (or the next person's sign-in) leaves on a shared device. Queued changes always stay. A kept run
 * detail stays only while the person who saw it still has unsent changes to that run (they may open it with no
 * connection once signed in again), or when it is `stayingUserId`'s own; every other one goes, so the next person
 * cannot read the previous person's runs. Which runs were opened for editing, and the cautions acknowledged in this
 * tab, are the person's own and go too: the next technician acknowledges the cautions again.
 */
export async function forgetDeviceRunData(stayingUserId: string | null = null): Promise<void> {
  try {
    removeKeys(typeof localStorage === 'undefined' ? undefined : localStorage, RUN_EDITOR_KEY_PREFIX, (editor) => stayingUserId !== null && editor === stayingUserId)
    removeKeys(typeof sessionStorage === 'undefined' ? undefined : sessionStorage, RUN_CAUTIONS_KEY_PREFIX)
  } catch {
    // Storage switched off: nothing is kept there either.
  }
  let storage: QueueStorage
  try {
    storage = await openDeviceQueueStorage()
  } catch {
    return
  }
  const waiting = new Set((await storage.listAll()).filter((c) => c.authorId).map((c) => runKey(c.authorId!, c.runId)))
  await storage.pruneRuns((ownerId, runId) => ownerId !== null && (ownerId === stayingUserId || waiting.has(runKey(ownerId, runId))))
}

/**
 * saved: nothing waiting · waiting: a change settles before it is sent · sending: one change on its way ·
 * offline: the server cannot be reached · failing: the server answered with a failure (5xx, database down) ·
 * signed_out: the sign-in ended, or the server holds another person's sign-in; changes wait until their author signs in.
 */
export type QueueStatus = 'saved' | 'waiting' | 'sending' | 'offline' | 'failing' | 'signed_out'

export interface OfflineQueueOptions {
  runId: string
  storage: QueueStorage
  /**
   * Who is signed in now (asked at every step: a sign-out stops the sending at once). New changes carry this person;
   * only their changes are loaded, shown and sent. Null: nobody is, so nothing is sent or taken.
   */
  author: () => ChangeAuthor | null
  /** Sends one change; resolves the target's version on the server after the change (for the changes queued behind it). */
  send: (change: QueuedChange) => Promise<{ version: number; response?: unknown }>
  onSaved?: (change: QueuedChange, result: { version: number; response?: unknown }) => void
  /** A definitive refusal (bad value, run locked, no access): the change has been dropped from the queue. */
  onRejected?: (change: QueuedChange, error: ApiError) => void
  onConflict?: (change: QueuedChange) => void
  /** The server's sign-in is not the change's author (409 `author_mismatch`): the change is kept, sending stops. */
  onAuthorMismatch?: (change: QueuedChange, error: ApiError) => void
  /**
   * Sending with nobody watching (after a sign-in, with the run not open): a definitive refusal leaves the change on
   * the device, untouched, for the run page to send again and show the reason where the person sees it.
   */
  holdRefusals?: boolean
  /** Nothing left that this queue may send. */
  onSettled?: () => void
  debounceMs?: number
  backoffMs?: number
  maxBackoffMs?: number
  now?: () => number
  /** Listen to the window's `online` event (off in unit tests that drive `retryNow`). */
  listenOnline?: boolean
}

/** What an error means for a queued change. */
export function classifyFailure(err: unknown): 'retry' | 'conflict' | 'author' | 'reject' {
  if (!(err instanceof ApiError)) return 'retry'
  if (err.status === 0 || err.status >= 500 || err.status === 408 || err.status === 429 || err.status === 401) return 'retry'
  if (err.status === 409 && err.code === 'author_mismatch') return 'author'
  const current = (err as { current?: unknown }).current
  if (err.status === 409 && (err.code === 'reading_conflict' || err.code === 'step_conflict') && current) return 'conflict'
  return 'reject'
}

/** At most one queue sends a run's changes at a time in this page: the run page's, or one sending after a sign-in. */
interface LiveQueue {
  background: boolean
  retryNow(): void
  stop(): Promise<void>
}
const liveQueues = new Map<string, LiveQueue>()

/**
 * An ordered, persistent outbox for one run and one author. Every change is written to storage before any network
 * call; one change is sent at a time, in order; a change leaves storage only after the server's 200 or a definitive
 * refusal. Network failures, 5xx and 401 keep it and retry with backoff (and at once when the browser comes back
 * online). A conflict keeps it, marked, until the person keeps theirs or uses their own. Changes another person made
 * on this device are neither shown nor sent nor touched: they wait for that person (`othersWaiting` counts them).
 */
export function useOfflineQueue(options: OfflineQueueOptions) {
  const debounceMs = options.debounceMs ?? 600
  const backoffMs = options.backoffMs ?? 1000
  const maxBackoffMs = options.maxBackoffMs ?? 30000
  const now = options.now ?? (() => Date.now())

  const items = shallowRef<QueuedChange[]>([])
  const othersWaiting = shallowRef<WaitingAuthor[]>([])
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
  let pumping: Promise<void> = Promise.resolve()

  /** Storage writes and queue edits run one after another, so an edit never races the sender. */
  function locked<T>(fn: () => Promise<T>): Promise<T> {
    const next = chain.then(fn, fn)
    chain = next.catch(() => undefined)
    return next
  }

  /** A change this queue may show and send: its author's, or one kept before authors were recorded. */
  const authorId = () => options.author()?.id ?? null
  const isMine = (c: QueuedChange, me = authorId()) => me !== null && (c.authorId === null || c.authorId === me)

  const publish = (list: QueuedChange[]) => (items.value = [...list].sort(bySeq))
  const pendingCount = computed(() => items.value.length)
  const conflicts = computed(() => items.value.filter((c) => c.state === 'conflict'))

  const onOnline = () => retryNow()
  if (options.listenOnline !== false && typeof window !== 'undefined') window.addEventListener('online', onOnline)

  // Taking over from a queue already sending this run (one started after a sign-in): it finishes the change on its way first.
  // A send that hangs must not keep the run page from opening: after a few seconds it takes over regardless (a change
  // sent twice is harmless, the server knows its change id).
  const previous = liveQueues.get(options.runId)
  const handover = previous ? Promise.race([previous.stop(), new Promise<void>((r) => setTimeout(r, 3000))]) : Promise.resolve()
  const self: LiveQueue = { background: options.holdRefusals === true, retryNow: () => retryNow(), stop: () => stop() }
  liveQueues.set(options.runId, self)

  function schedule(ms: number) {
    clearTimeout(timer)
    if (stopped) return
    timer = setTimeout(() => void pump(), Math.max(0, ms))
  }

  /** Reads what this device still holds for the run and its author, and starts sending it. */
  async function load(): Promise<QueuedChange[]> {
    await handover
    const all = await locked(() => options.storage.list(options.runId))
    const me = authorId()
    const list = all.filter((c) => isMine(c, me))
    othersWaiting.value = summarizeWaiting(all.filter((c) => !isMine(c, me)))
    lastSeq = all.reduce((m, c) => Math.max(m, c.seq), 0)
    publish(list)
    loaded.value = true
    void pump()
    return list
  }

  const sameTarget = (a: QueuedChange, kind: ChangeKind, targetId: string) => a.kind === kind && a.targetId === targetId

  /**
   * Keeps a change for sending, made by the person signed in now. A change to a target whose earlier change has not
   * been sent yet replaces that change (same place in the order); otherwise it is added at the end. `baseVersion` is
   * the target's version the person saw.
   */
  function enqueue(kind: ChangeKind, targetId: string, content: ChangeContent, baseVersion: number): Promise<QueuedChange> {
    return locked(async () => {
      const author = options.author()
      if (!author) throw new Error('Sign in to make changes: nobody is signed in on this device.')
      const list = items.value
      const earlier = [...list].reverse().find((c) => sameTarget(c, kind, targetId))
      let change: QueuedChange
      if (earlier && !earlier.attempted && earlier.state === 'pending') {
        change = {
          ...earlier,
          authorId: author.id,
          authorName: author.name,
          body: { ...content, changeId: earlier.changeId, baseVersion: earlier.body.baseVersion, authorId: author.id } as ChangeBody,
          readyAt: now() + debounceMs,
        }
      } else {
        const changeId = newChangeId()
        lastSeq = Math.max(now(), lastSeq + 1)
        change = {
          changeId,
          runId: options.runId,
          authorId: author.id,
          authorName: author.name,
          seq: lastSeq,
          kind,
          targetId,
          // Behind an unanswered change of the same target: rebased on that change's result when it lands.
          body: { ...content, changeId, baseVersion: earlier ? earlier.body.baseVersion : baseVersion, authorId: author.id } as ChangeBody,
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

  /** The next change that may be sent: in order, its author signed in, skipping every change held behind a conflict on its target. */
  function nextToSend(): QueuedChange | null {
    const me = authorId()
    if (me === null) return null
    const blocked = new Set<string>()
    for (const c of items.value) {
      const key = `${c.kind}:${c.targetId}`
      if (c.state === 'conflict') {
        blocked.add(key)
        continue
      }
      if (!blocked.has(key) && isMine(c, me)) return c
    }
    return null
  }

  function settleStatus() {
    if (!nextToSend()) {
      status.value = authorId() === null && items.value.length ? 'signed_out' : 'saved'
      lastError.value = items.value.length ? lastError.value : null
    }
  }

  function pump(): Promise<void> {
    if (sending || stopped) return pumping
    sending = true
    pumping = sendAll().finally(() => {
      sending = false
    })
    return pumping
  }

  async function sendAll(): Promise<void> {
    for (;;) {
      if (stopped) return
      const next = nextToSend()
      if (!next) {
        settleStatus()
        options.onSettled?.()
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
        if (!current || current.state !== 'pending' || !isMine(current)) return null
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
        if (stopped) {
          // Handed over meanwhile: the server has it, so it leaves storage; the queue that took over rebases what follows.
          await locked(() => options.storage.remove(change.changeId))
          return
        }
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
          const e = err instanceof ApiError ? err : null
          // A busy server says when to come back (503 + Retry-After); the change stays queued until then.
          const delay = Math.max(Math.min(maxBackoffMs, backoffMs * 2 ** (failures - 1)), e?.retryAfterMs ?? 0)
          retryAt = now() + delay
          status.value = !e || e.status === 0 ? 'offline' : e.status === 401 ? 'signed_out' : 'failing'
          lastError.value = err instanceof Error ? err.message : String(err)
          schedule(delay)
          return
        }
        const apiError = err as ApiError
        if (verdict === 'author') {
          // The server holds someone else's sign-in: keep everything and send nothing more until the sign-in is sorted out.
          status.value = 'signed_out'
          lastError.value = apiError.message
          options.onAuthorMismatch?.(change, apiError)
          return
        }
        if (verdict === 'conflict') {
          const current = (apiError as ApiError & { current: RunReading | RunStepState }).current
          const marked: QueuedChange = { ...change, state: 'conflict', conflict: { current, message: apiError.message } }
          await locked(async () => {
            await options.storage.put(marked)
            publish(items.value.map((c) => (c.changeId === marked.changeId ? marked : c)))
          })
          options.onConflict?.(marked)
        } else if (options.holdRefusals) {
          // Left in storage for the run page, which sends it again and shows the reason beside the field.
          publish(items.value.filter((c) => c.changeId !== change.changeId))
        } else {
          await locked(async () => {
            await options.storage.remove(change.changeId)
            publish(items.value.filter((c) => c.changeId !== change.changeId))
          })
          options.onRejected?.(change, apiError)
        }
      }
    }
  }

  /** Tries again at once (the browser came back online, the author signed in again, or the person asked). */
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
      const author = options.author()
      const mine = items.value.filter((c) => sameTarget(c, kind, targetId))
      if (!mine.length || !author) return
      const newest = mine[mine.length - 1]
      for (const c of mine) await options.storage.remove(c.changeId)
      const changeId = newChangeId()
      const resent: QueuedChange = {
        ...newest,
        changeId,
        authorId: author.id,
        authorName: author.name,
        body: { ...newest.body, changeId, baseVersion: currentVersion, authorId: author.id },
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
    if (liveQueues.get(options.runId) === self) liveQueues.delete(options.runId)
  }

  /** Stops, then resolves once the change on its way (if any) has been answered and recorded. */
  async function stop(): Promise<void> {
    dispose()
    await pumping
    await chain
  }

  return { items, othersWaiting, status, lastError, lastSavedAt, loaded, pendingCount, conflicts, load, enqueue, retryNow, keepTheirs, useMine, changesFor, dispose, stop, pump }
}

export type OfflineQueue = ReturnType<typeof useOfflineQueue>

/**
 * After a sign-in: sends the changes this person left on the device, for every run, without the run being open
 * (the run page takes over a run's sending when it opens it). A refusal stays on the device for the run page. The
 * sending stops when the person signs out (`author` turns null) or when `stopBackgroundSending` is called.
 */
export async function sendWaitingChanges(options: {
  storage: QueueStorage
  author: () => ChangeAuthor | null
  send?: OfflineQueueOptions['send']
  onSaved?: (change: QueuedChange, result: { version: number; response?: unknown }) => void
  debounceMs?: number
  backoffMs?: number
  maxBackoffMs?: number
  listenOnline?: boolean
}): Promise<OfflineQueue[]> {
  const me = options.author()
  if (!me) return []
  const runIds = [...new Set((await options.storage.listAll()).filter((c) => c.authorId === me.id && c.state === 'pending').map((c) => c.runId))]
  const started: OfflineQueue[] = []
  for (const runId of runIds) {
    const live = liveQueues.get(runId)
    if (live) {
      live.retryNow()
      continue
    }
    const queue: OfflineQueue = useOfflineQueue({
      runId,
      storage: options.storage,
      author: () => (options.author()?.id === me.id ? me : null),
      send: options.send ?? sendQueuedChange,
      holdRefusals: true,
      debounceMs: 0,
      backoffMs: options.backoffMs,
      maxBackoffMs: options.maxBackoffMs,
      listenOnline: options.listenOnline,
      onSaved: (change, result) => {
        void keepSnapshotCurrent(options.storage, me.id, change, result.response).catch(() => undefined)
        options.onSaved?.(change, result)
      },
      onSettled: () => queue.dispose(),
    })
    started.push(queue)
    void queue.load()
  }
  return started
}

/** Stops every queue sending after a sign-in (the person is signing out); their changes stay on the device. */
export function stopBackgroundSending() {
  for (const live of [...liveQueues.values()]) if (live.background) void live.stop()
}

/** A change sent with the run closed is written into the person's kept copy of the run, so it opens offline as the server has it. */
async function keepSnapshotCurrent(storage: QueueStorage, ownerId: string, change: QueuedChange, response: unknown) {
  const run = await storage.getRun(change.runId, ownerId)
  if (!run || !response) return
  if (change.kind === 'reading') {
    const saved = response as ReadingSaved
    run.readings = { ...run.readings, ...saved.readings, [saved.reading.fieldId]: saved.reading }
    run.progress = saved.progress
  } else {
    const step = (response as { step: RunStepState }).step
    run.steps[step.stepId] = step
  }
  await storage.putRun(run, ownerId)
}
