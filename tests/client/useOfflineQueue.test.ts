import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { RunApiError } from '@/api/runs'
import {
  createMemoryQueueStorage,
  forgetDeviceRunData,
  sendWaitingChanges,
  setDeviceQueueStorageFactory,
  stopBackgroundSending,
  summarizeWaiting,
  useOfflineQueue,
  type ChangeAuthor,
  type QueuedChange,
} from '@/composables/useOfflineQueue'
import type { RunDetail, RunReading } from '@shared/types/run'

const RUN = 'run-1'
const reading = (value: number) => ({ entry: { value, unit: 'psid' }, notApplicable: false, naReason: null, justification: null })
const network = () => new RunApiError(0, 'network', 'The server cannot be reached', {}, null)
const current = (version: number, value: number): RunReading => ({
  fieldId: 'oilPressureRunning',
  entry: { value, unit: 'psid' },
  disposition: null,
  notApplicable: false,
  naReason: null,
  justification: null,
  evaluation: { fieldId: 'oilPressureRunning', verdict: 'pass', message: '', required: true, computed: false, canonical: null, display: { value, unit: 'psid', text: `${value} psid` }, limits: null },
  version,
  updatedAt: '2026-12-01T10:32:00.000Z',
  updatedByName: 'Ines Marlow',
})

// Two technicians sharing one tablet.
const RAFE: ChangeAuthor = { id: '6f1d2c4e-8a53-4b7e-9c21-3d5e7f9a1b02', name: 'Rafe Okafor' }
const INES: ChangeAuthor = { id: '0b8e4a6c-2d19-4f53-a7e1-5c9d3b7f2e64', name: 'Ines Marlow' }

let storage: ReturnType<typeof createMemoryQueueStorage>
/** Who is signed in on the tablet now. */
let signedIn: ChangeAuthor | null
beforeEach(() => {
  vi.useFakeTimers()
  storage = createMemoryQueueStorage()
  signedIn = RAFE
})
afterEach(() => {
  stopBackgroundSending()
  vi.useRealTimers()
})

function setup(send: (c: QueuedChange) => Promise<{ version: number }>, extra: Partial<Parameters<typeof useOfflineQueue>[0]> = {}) {
  const onRejected = vi.fn()
  const onConflict = vi.fn()
  const onSaved = vi.fn()
  const queue = useOfflineQueue({
    runId: RUN, storage, author: () => signedIn, send, onRejected, onConflict, onSaved, debounceMs: 600, backoffMs: 1000, maxBackoffMs: 8000, listenOnline: false, ...extra,
  })
  return { queue, onRejected, onConflict, onSaved }
}

/** A run detail as kept for offline opening (only its id matters to the pruning). */
const keptRun = (id: string) => ({ id, readings: {}, steps: {}, progress: {} }) as unknown as RunDetail

describe('useOfflineQueue', () => {
  it('when a change is made, then it is in storage before any request, sent after typing settles, and removed after the 200', async () => {
    const send = vi.fn().mockResolvedValue({ version: 1 })
    const { queue, onSaved } = setup(send)
    await queue.load()
    const change = await queue.enqueue('reading', 'oilPressureRunning', reading(36), 0)
    expect(storage.changes.get(change.changeId)?.body).toMatchObject({ entry: { value: 36, unit: 'psid' }, baseVersion: 0, changeId: change.changeId })
    expect(send).not.toHaveBeenCalled()
    await vi.advanceTimersByTimeAsync(599)
    expect(send).not.toHaveBeenCalled()
    await vi.advanceTimersByTimeAsync(1)
    expect(send).toHaveBeenCalledTimes(1)
    expect(storage.changes.size).toBe(0)
    expect(onSaved).toHaveBeenCalledTimes(1)
    expect(queue.status.value).toBe('saved')
    queue.dispose()
  })

  it('when a field changes twice before it is sent, then one request carries the newer value', async () => {
    const send = vi.fn().mockResolvedValue({ version: 1 })
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'oilPressureRunning', reading(3), 0)
    await vi.advanceTimersByTimeAsync(300)
    await queue.enqueue('reading', 'oilPressureRunning', reading(36), 0)
    expect(storage.changes.size).toBe(1)
    await vi.advanceTimersByTimeAsync(600)
    expect(send).toHaveBeenCalledTimes(1)
    expect(send.mock.calls[0][0].body.entry).toEqual({ value: 36, unit: 'psid' })
    queue.dispose()
  })

  it('when several fields change, then they are sent in the order made, one request at a time', async () => {
    let inFlight = 0
    let most = 0
    const order: string[] = []
    const send = vi.fn(async (c: QueuedChange) => {
      inFlight++
      most = Math.max(most, inFlight)
      order.push(c.targetId)
      await new Promise((r) => setTimeout(r, 100))
      inFlight--
      return { version: 1 }
    })
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'voltsAB', reading(461), 0)
    await queue.enqueue('reading', 'voltsBC', reading(459), 0)
    await queue.enqueue('step', 'motor-supply', { note: 'Meter serial 4471', notApplicable: false, naReason: null }, 0)
    await vi.advanceTimersByTimeAsync(2000)
    expect(order).toEqual(['voltsAB', 'voltsBC', 'motor-supply'])
    expect(most).toBe(1)
    expect(storage.changes.size).toBe(0)
    queue.dispose()
  })

  it('when the network fails, then the change is kept, retried with growing waits, and sent once the server answers', async () => {
    const send = vi.fn().mockRejectedValueOnce(network()).mockRejectedValueOnce(network()).mockResolvedValue({ version: 1 })
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(600)
    expect(send).toHaveBeenCalledTimes(1)
    expect(queue.status.value).toBe('offline')
    expect(storage.changes.size).toBe(1)
    await vi.advanceTimersByTimeAsync(999)
    expect(send).toHaveBeenCalledTimes(1)
    await vi.advanceTimersByTimeAsync(1)
    expect(send).toHaveBeenCalledTimes(2)
    // The second wait is twice the first.
    await vi.advanceTimersByTimeAsync(1999)
    expect(send).toHaveBeenCalledTimes(2)
    await vi.advanceTimersByTimeAsync(1)
    expect(send).toHaveBeenCalledTimes(3)
    expect(storage.changes.size).toBe(0)
    expect(queue.status.value).toBe('saved')
    // Every attempt carried the same change id, so a retry after a lost answer is harmless.
    expect(new Set(send.mock.calls.map((c) => c[0].changeId)).size).toBe(1)
    queue.dispose()
  })

  it('when the database is down (503), then the change is kept and the state says the server is failing', async () => {
    const send = vi.fn().mockRejectedValue(new RunApiError(503, 'database_unavailable', 'The database is not available', {}, null))
    const { queue, onRejected } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(600)
    expect(queue.status.value).toBe('failing')
    expect(storage.changes.size).toBe(1)
    expect(onRejected).not.toHaveBeenCalled()
    queue.dispose()
  })

  it('when the server is overloaded (503 with Retry-After), then the change is kept, waits as long as the server asked, and is sent then', async () => {
    const busy = new RunApiError(503, 'busy', 'Startproof is busy', {}, null, 5000)
    const send = vi.fn().mockRejectedValueOnce(busy).mockResolvedValue({ version: 1 })
    const { queue, onRejected } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(600)
    expect(send).toHaveBeenCalledTimes(1)
    expect(queue.status.value).toBe('failing')
    expect([...storage.changes.values()].map((c) => c.body)).toEqual([expect.objectContaining(reading(1200))])
    // The backoff alone would retry after 1 s; the server asked for 5 s.
    await vi.advanceTimersByTimeAsync(4999)
    expect(send).toHaveBeenCalledTimes(1)
    await vi.advanceTimersByTimeAsync(1)
    expect(send).toHaveBeenCalledTimes(2)
    expect(send.mock.calls[1][0].changeId).toBe(send.mock.calls[0][0].changeId)
    expect(send.mock.calls[1][0].body).toEqual(expect.objectContaining(reading(1200)))
    expect(storage.changes.size).toBe(0)
    expect(queue.status.value).toBe('saved')
    expect(onRejected).not.toHaveBeenCalled()
    queue.dispose()
  })

  it('when the connection returns, then retryNow sends at once instead of waiting out the backoff', async () => {
    const send = vi.fn().mockRejectedValueOnce(network()).mockRejectedValueOnce(network()).mockResolvedValue({ version: 1 })
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(600 + 1000)
    expect(send).toHaveBeenCalledTimes(2)
    queue.retryNow()
    await vi.advanceTimersByTimeAsync(0)
    expect(send).toHaveBeenCalledTimes(3)
    expect(storage.changes.size).toBe(0)
    queue.dispose()
  })

  it('when the server refuses a value (400), then it is dropped with the reason and the changes behind it still go', async () => {
    const refusal = new RunApiError(400, 'invalid_reading', 'Chilled-water flow −10 gpm cannot be negative', { chwFlow: 'Chilled-water flow −10 gpm cannot be negative' }, null)
    const send = vi.fn(async (c: QueuedChange) => {
      if (c.targetId === 'chwFlow') throw refusal
      return { version: 1 }
    })
    const { queue, onRejected } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(-10), 0)
    await queue.enqueue('reading', 'cwFlow', reading(1500), 0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(onRejected).toHaveBeenCalledWith(expect.objectContaining({ targetId: 'chwFlow' }), refusal)
    expect(send.mock.calls.map((c) => c[0].targetId)).toEqual(['chwFlow', 'cwFlow'])
    expect(storage.changes.size).toBe(0)
    queue.dispose()
  })

  it('when someone else changed the field, then the change waits as a conflict, other fields go on, and "use mine" resends on their version', async () => {
    const theirs = current(3, 36)
    let conflictOnce = true
    const send = vi.fn(async (c: QueuedChange) => {
      if (c.targetId === 'oilPressureRunning' && conflictOnce) {
        conflictOnce = false
        throw new RunApiError(409, 'reading_conflict', 'Ines Marlow changed Oil pressure to 36 psid', {}, theirs)
      }
      return { version: 4 }
    })
    const { queue, onConflict } = setup(send)
    await queue.load()
    const first = await queue.enqueue('reading', 'oilPressureRunning', reading(38), 2)
    await queue.enqueue('reading', 'cwFlow', reading(1500), 0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(onConflict).toHaveBeenCalledTimes(1)
    expect(queue.conflicts.value).toHaveLength(1)
    expect(storage.changes.get(first.changeId)?.state).toBe('conflict')
    expect(send.mock.calls.map((c) => c[0].targetId)).toEqual(['oilPressureRunning', 'cwFlow'])

    await queue.useMine('reading', 'oilPressureRunning', theirs.version)
    await vi.advanceTimersByTimeAsync(0)
    const resent = send.mock.calls[2][0]
    expect(resent.body.baseVersion).toBe(3)
    expect(resent.changeId).not.toBe(first.changeId)
    expect((resent.body as { entry: unknown }).entry).toEqual({ value: 38, unit: 'psid' })
    expect(storage.changes.size).toBe(0)
    queue.dispose()
  })

  it('when the person keeps theirs, then this device forgets its change and sends nothing for the field', async () => {
    const send = vi.fn().mockRejectedValueOnce(new RunApiError(409, 'reading_conflict', 'Changed meanwhile', {}, current(3, 36)))
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'oilPressureRunning', reading(38), 2)
    await vi.advanceTimersByTimeAsync(600)
    expect(queue.conflicts.value).toHaveLength(1)
    await queue.keepTheirs('reading', 'oilPressureRunning')
    await vi.advanceTimersByTimeAsync(5000)
    expect(send).toHaveBeenCalledTimes(1)
    expect(storage.changes.size).toBe(0)
    expect(queue.pendingCount.value).toBe(0)
    queue.dispose()
  })

  it('when a field changes again while its first change is on the way, then the second is based on the version the first produced', async () => {
    let release: (v: { version: number }) => void = () => undefined
    const send = vi
      .fn()
      .mockImplementationOnce(() => new Promise((r) => (release = r)))
      .mockResolvedValue({ version: 6 })
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwLeaving', reading(44), 4)
    await vi.advanceTimersByTimeAsync(600)
    expect(send).toHaveBeenCalledTimes(1)
    await queue.enqueue('reading', 'chwLeaving', reading(44.2), 4)
    release({ version: 5 })
    await vi.advanceTimersByTimeAsync(600)
    expect(send).toHaveBeenCalledTimes(2)
    expect(send.mock.calls[1][0].body).toMatchObject({ baseVersion: 5, entry: { value: 44.2, unit: 'psid' } })
    queue.dispose()
  })

  it('when the page is reloaded with changes kept, then a new queue on the same storage sends them in order with their change ids', async () => {
    const failing = vi.fn().mockRejectedValue(network())
    const before = setup(failing)
    await before.queue.load()
    const a = await before.queue.enqueue('reading', 'voltsAB', reading(461), 0)
    const b = await before.queue.enqueue('reading', 'voltsBC', reading(459), 0)
    await vi.advanceTimersByTimeAsync(700)
    before.queue.dispose()
    expect(storage.changes.size).toBe(2)

    const send = vi.fn().mockResolvedValue({ version: 1 })
    const after = setup(send)
    const restored = await after.queue.load()
    expect(restored.map((c) => c.changeId)).toEqual([a.changeId, b.changeId])
    await vi.advanceTimersByTimeAsync(0)
    expect(send.mock.calls.map((c) => c[0].changeId)).toEqual([a.changeId, b.changeId])
    expect(storage.changes.size).toBe(0)
    after.queue.dispose()
  })

  it('when the sign-in has ended (401), then the change is kept for after signing in again', async () => {
    const send = vi.fn().mockRejectedValue(new RunApiError(401, 'not_signed_in', 'Sign in to continue', {}, null))
    const { queue, onRejected } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(600)
    expect(queue.status.value).toBe('signed_out')
    expect(storage.changes.size).toBe(1)
    expect(onRejected).not.toHaveBeenCalled()
    queue.dispose()
  })
})

describe('useOfflineQueue on a shared tablet', () => {
  it('when a change is made, then it carries its author in storage and in the request body', async () => {
    const send = vi.fn().mockResolvedValue({ version: 1 })
    const { queue } = setup(send)
    await queue.load()
    const change = await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    expect(storage.changes.get(change.changeId)).toMatchObject({ authorId: RAFE.id, authorName: 'Rafe Okafor', body: { authorId: RAFE.id } })
    await vi.advanceTimersByTimeAsync(600)
    expect(send.mock.calls[0][0].body.authorId).toBe(RAFE.id)
    queue.dispose()
  })

  it('when the author signs out with a change unsent, then nothing more is sent and the change stays on the device', async () => {
    const send = vi.fn().mockRejectedValueOnce(network()).mockResolvedValue({ version: 1 })
    const { queue } = setup(send)
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(600)
    expect(send).toHaveBeenCalledTimes(1)
    signedIn = null
    queue.retryNow()
    await vi.advanceTimersByTimeAsync(10_000)
    expect(send).toHaveBeenCalledTimes(1)
    expect(queue.status.value).toBe('signed_out')
    expect([...storage.changes.values()].map((c) => c.authorId)).toEqual([RAFE.id])
    queue.dispose()
  })

  it('when another person signs in, then the first person\'s changes are neither shown nor sent, theirs go, and the first person\'s go when they sign in again', async () => {
    const offline = setup(vi.fn().mockRejectedValue(network()))
    await offline.queue.load()
    const rafes = await offline.queue.enqueue('reading', 'chwFlow', reading(1200), 3)
    await offline.queue.enqueue('reading', 'cwFlow', reading(1500), 0)
    await vi.advanceTimersByTimeAsync(700)
    offline.queue.dispose()

    signedIn = INES
    const send = vi.fn().mockResolvedValue({ version: 4 })
    const ines = setup(send)
    expect(await ines.queue.load()).toEqual([])
    expect(ines.queue.othersWaiting.value).toEqual([{ authorId: RAFE.id, authorName: 'Rafe Okafor', count: 2 }])
    // Ines changes the same field: a change of her own, and Rafe's keeps the version he saw.
    const hers = await ines.queue.enqueue('reading', 'chwFlow', reading(1190), 3)
    await vi.advanceTimersByTimeAsync(5000)
    expect(send.mock.calls.map((c) => [c[0].changeId, c[0].body.authorId])).toEqual([[hers.changeId, INES.id]])
    expect(storage.changes.size).toBe(2)
    expect(storage.changes.get(rafes.changeId)?.body.baseVersion).toBe(3)
    ines.queue.dispose()

    signedIn = RAFE
    const back = vi.fn().mockResolvedValue({ version: 5 })
    const rafe = setup(back)
    await rafe.queue.load()
    await vi.advanceTimersByTimeAsync(0)
    expect(back.mock.calls.map((c) => [c[0].targetId, c[0].body.authorId])).toEqual([['chwFlow', RAFE.id], ['cwFlow', RAFE.id]])
    expect(storage.changes.size).toBe(0)
    rafe.queue.dispose()
  })

  it('when the server answers that the change is not the signed-in person\'s (409 author_mismatch), then the change is kept and the page is told', async () => {
    const mismatch = new RunApiError(409, 'author_mismatch', 'This change was made by another person than the one signed in', {}, null)
    const send = vi.fn().mockRejectedValue(mismatch)
    const onAuthorMismatch = vi.fn()
    const { queue, onRejected } = setup(send, { onAuthorMismatch })
    await queue.load()
    const change = await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(10_000)
    expect(send).toHaveBeenCalledTimes(1)
    expect(onAuthorMismatch).toHaveBeenCalledWith(expect.objectContaining({ changeId: change.changeId }), mismatch)
    expect(onRejected).not.toHaveBeenCalled()
    expect(queue.status.value).toBe('signed_out')
    expect(storage.changes.has(change.changeId)).toBe(true)
    queue.dispose()
  })

  it('when a change was kept by a version that did not record authors, then it is sent as before, without an author', async () => {
    const send = vi.fn().mockResolvedValue({ version: 1 })
    const legacy = { changeId: 'c0ffee00-0000-4000-8000-000000000001', runId: RUN, seq: 1, kind: 'reading', targetId: 'chwFlow', attempted: false, state: 'pending', conflict: null, readyAt: 0, queuedAt: '2026-12-01T10:00:00.000Z' }
    await storage.put({ ...legacy, body: { ...reading(1200), changeId: legacy.changeId, baseVersion: 0 } } as unknown as QueuedChange)
    signedIn = INES
    const { queue } = setup(send)
    expect(await queue.load()).toHaveLength(1)
    await vi.advanceTimersByTimeAsync(0)
    expect(send).toHaveBeenCalledTimes(1)
    expect(send.mock.calls[0][0].body).not.toHaveProperty('authorId')
    queue.dispose()
  })

  it('when the author signs in again with the run closed, then their changes of every run are sent, others\' stay, and a refusal stays for the run page', async () => {
    const fail = setup(vi.fn().mockRejectedValue(network()))
    await fail.queue.load()
    await fail.queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await fail.queue.enqueue('reading', 'voltsAB', reading(461), 0)
    await vi.advanceTimersByTimeAsync(700)
    fail.queue.dispose()
    signedIn = INES
    const ines = useOfflineQueue({ runId: 'run-2', storage, author: () => signedIn, send: vi.fn().mockRejectedValue(network()), listenOnline: false })
    await ines.load()
    const hers = await ines.enqueue('reading', 'cwFlow', reading(1500), 0)
    await vi.advanceTimersByTimeAsync(700)
    ines.dispose()
    expect(summarizeWaiting([...storage.changes.values()])).toEqual([
      { authorId: RAFE.id, authorName: 'Rafe Okafor', count: 2 },
      { authorId: INES.id, authorName: 'Ines Marlow', count: 1 },
    ])

    signedIn = RAFE
    const refusal = new RunApiError(409, 'run_locked', 'The run has been submitted', {}, null)
    const send = vi.fn(async (c: QueuedChange) => {
      if (c.targetId === 'voltsAB') throw refusal
      return { version: 1 }
    })
    const started = await sendWaitingChanges({ storage, author: () => signedIn, send, listenOnline: false })
    expect(started).toHaveLength(1)
    await vi.advanceTimersByTimeAsync(0)
    expect(send.mock.calls.map((c) => [c[0].runId, c[0].targetId, c[0].body.authorId])).toEqual([[RUN, 'chwFlow', RAFE.id], [RUN, 'voltsAB', RAFE.id]])
    expect([...storage.changes.values()].map((c) => [c.authorId, c.targetId]).sort()).toEqual([[INES.id, 'cwFlow'], [RAFE.id, 'voltsAB']].sort())
    expect(storage.changes.has(hers.changeId)).toBe(true)
  })

  it('when the person signs out while their changes are being sent in the background, then the rest stay on the device', async () => {
    const fail = setup(vi.fn().mockRejectedValue(network()))
    await fail.queue.load()
    await fail.queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await fail.queue.enqueue('reading', 'cwFlow', reading(1500), 0)
    await vi.advanceTimersByTimeAsync(700)
    fail.queue.dispose()

    const send = vi.fn().mockRejectedValue(network())
    await sendWaitingChanges({ storage, author: () => signedIn, send, backoffMs: 1000, listenOnline: false })
    await vi.advanceTimersByTimeAsync(0)
    expect(send).toHaveBeenCalledTimes(1)
    signedIn = null
    await vi.advanceTimersByTimeAsync(60_000)
    expect(send).toHaveBeenCalledTimes(1)
    expect(storage.changes.size).toBe(2)
  })

  it('when someone signs out, then kept runs go except those whose viewer still has unsent changes to them, and the run keys of this browser go', async () => {
    setDeviceQueueStorageFactory(async () => storage)
    const { queue } = setup(vi.fn().mockRejectedValue(network()))
    await queue.load()
    await queue.enqueue('reading', 'chwFlow', reading(1200), 0)
    await vi.advanceTimersByTimeAsync(700)
    queue.dispose()
    await storage.putRun(keptRun(RUN), RAFE.id)
    await storage.putRun(keptRun('run-2'), RAFE.id)
    await storage.putRun(keptRun(RUN), INES.id)
    localStorage.setItem(`startproof:run-editor:${RUN}`, RAFE.id)
    sessionStorage.setItem(`startproof:run-cautions:${RUN}`, JSON.stringify(['safety-checks']))
    localStorage.setItem('startproof:template-working-copy:t1:v2', '{"definition":{}}')

    await forgetDeviceRunData(null)

    expect(await storage.getRun(RUN, RAFE.id)).toMatchObject({ id: RUN })
    expect(await storage.getRun('run-2', RAFE.id)).toBeNull()
    expect(await storage.getRun(RUN, INES.id)).toBeNull()
    expect(storage.changes.size).toBe(1)
    expect(localStorage.getItem(`startproof:run-editor:${RUN}`)).toBeNull()
    expect(sessionStorage.getItem(`startproof:run-cautions:${RUN}`)).toBeNull()
    // Unsaved template work is not a cache: it stays.
    expect(localStorage.getItem('startproof:template-working-copy:t1:v2')).not.toBeNull()
    localStorage.clear()
  })

  it('when a person signs in, then their own kept runs stay and nobody else\'s without unsent changes do', async () => {
    setDeviceQueueStorageFactory(async () => storage)
    await storage.putRun(keptRun(RUN), RAFE.id)
    await storage.putRun(keptRun('run-2'), INES.id)
    await forgetDeviceRunData(INES.id)
    expect(await storage.getRun(RUN, RAFE.id)).toBeNull()
    expect(await storage.getRun('run-2', INES.id)).toMatchObject({ id: 'run-2' })
    expect(await storage.getRun('run-2', RAFE.id)).toBeNull()
  })
})
