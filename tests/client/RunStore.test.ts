import { emptyProgress } from '@shared/record'
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import { evaluateChecklist } from '@shared/rules'
import { chillerStartupDefinition } from '@shared/library/chiller'
import type { AnyDesignPoint } from '@shared/schemas/design-point'
import type { ReadingSaved, RunDetail, RunReading } from '@shared/types/run'
import { createMemoryQueueStorage } from '@/composables/useOfflineQueue'
import { useSessionStore } from '@/stores/session'

const api = vi.hoisted(() => ({ get: vi.fn(), saveReading: vi.fn(), saveStep: vi.fn() }))
vi.mock('@/api/runs', async (original) => {
  const real = await original<typeof import('@/api/runs')>()
  return { ...real, runsApi: { ...real.runsApi, ...api } }
})
const { RunApiError } = await import('@/api/runs')
const { setRunQueueStorageFactory, useRunStore } = await import('@/stores/run')

// Part of CH-1's design point (500 tons, 35 psid oil pressure setpoint, 460 V, 420 A).
const designPoint = {
  refrigerant: 'R-134a',
  capacity: { value: 500, unit: 'TR' },
  oilPressureSetpoint: { value: 35, unit: 'psid' },
  voltage: { value: 460, unit: 'V' },
  fullLoadAmps: { value: 420, unit: 'A' },
}

function reading(fieldId: string, version = 0, entry: RunReading['entry'] = null, by: string | null = null): RunReading {
  const evaluation = evaluateChecklist(chillerStartupDefinition, { readings: { [fieldId]: entry }, designPoint: designPoint as AnyDesignPoint, unitSystem: 'IP' })[fieldId]
  return { fieldId, entry, disposition: null, notApplicable: false, naReason: null, justification: null, evaluation, version, updatedAt: by ? '2026-12-01T10:32:00.000Z' : null, updatedByName: by }
}

function runDetail(): RunDetail {
  const readings: Record<string, RunReading> = {}
  for (const s of chillerStartupDefinition.sections) for (const st of s.steps) for (const f of st.fields) readings[f.id] = reading(f.id)
  return {
    id: 'run-ch1', projectId: 'p', projectCode: 'VXH-CUP', projectName: 'Central utility plant', equipmentId: 'e', equipmentTag: 'CH-1', equipmentKind: 'centrifugal_chiller',
    templateId: 't', templateName: 'Water-cooled centrifugal chiller start-up', templateVersionNumber: 1, state: 'in_progress', version: 1,
    startedAt: '2026-12-01T09:00:00.000Z', startedByName: 'Rafe Okafor', updatedAt: '2026-12-01T09:00:00.000Z',
    progress: { ...emptyProgress(), checks: 74, judged: 74, required: 74, incomplete: 74 },
    openFindings: 0, unitSystem: 'IP', siteBarometricKpa: 101.325, definition: chillerStartupDefinition, designPoint, readings, steps: {}, findings: [], attachments: [], signatures: [],
  }
}

function saved(fieldId: string, version: number, entry: RunReading['entry']): ReadingSaved {
  const r = runDetail().readings
  r[fieldId] = reading(fieldId, version, entry)
  return { reading: r[fieldId], readings: r, progress: runDetail().progress, duplicate: false }
}

let storage: ReturnType<typeof createMemoryQueueStorage>
beforeEach(() => {
  vi.useFakeTimers()
  setActivePinia(createPinia())
  const session = useSessionStore()
  session.user = { id: 'u1', email: 'rafe.okafor@tallowmere.test', displayName: 'Rafe Okafor', role: 'technician', organizationName: 'Tallowmere' }
  session.loaded = true
  storage = createMemoryQueueStorage()
  setRunQueueStorageFactory(async () => storage)
  api.get.mockReset().mockResolvedValue(runDetail())
  api.saveReading.mockReset()
})
afterEach(() => {
  useRunStore().close()
  vi.useRealTimers()
})

describe('useRunStore', () => {
  it('when a value is typed, then the live verdict follows at once and the change is kept on the device before it is sent', async () => {
    api.saveReading.mockImplementation(async (_run: string, fieldId: string, change: { entry: RunReading['entry'] }) => saved(fieldId, 1, change.entry))
    const store = useRunStore()
    await store.open('run-ch1')
    await store.setReading('oilPressureRunning', { entry: { value: 28, unit: 'psid' } })
    expect(store.liveEvaluations.oilPressureRunning.verdict).toBe('fail')
    expect(store.liveEvaluations.oilPressureRunning.message).toContain('below the minimum')
    expect(storage.changes.size).toBe(1)
    expect(api.saveReading).not.toHaveBeenCalled()
    await vi.advanceTimersByTimeAsync(600)
    expect(api.saveReading).toHaveBeenCalledWith('run-ch1', 'oilPressureRunning', expect.objectContaining({ baseVersion: 0, entry: { value: 28, unit: 'psid' } }))
    expect(storage.changes.size).toBe(0)
    expect(store.local.oilPressureRunning).toBeUndefined()
    expect(store.saveState.label).toBe('Saved')
  })

  it('when the server refuses a reading, then what was typed stays in the field with the server message beside it', async () => {
    api.saveReading.mockRejectedValue(new RunApiError(400, 'invalid_reading', 'Chilled-water flow −10 gpm cannot be negative', { chwFlow: 'Chilled-water flow −10 gpm cannot be negative' }, null))
    const store = useRunStore()
    await store.open('run-ch1')
    await store.setReading('chwFlow', { entry: { value: -10, unit: 'gpm' } })
    await vi.advanceTimersByTimeAsync(600)
    expect(store.working('chwFlow').entry).toEqual({ value: -10, unit: 'gpm' })
    expect(store.fieldErrors.chwFlow).toBe('Chilled-water flow −10 gpm cannot be negative')
    expect(store.saveState.tone).toBe('problem')
    expect(storage.changes.size).toBe(0)
  })

  it('when a unit the field does not measure is given, then it is refused on the device with the reason and nothing is queued', async () => {
    const store = useRunStore()
    await store.open('run-ch1')
    await store.setReading('chwFlow', { entry: { value: 1200, unit: 'psid' } })
    expect(store.fieldErrors.chwFlow).toMatch(/must be one of/)
    expect(storage.changes.size).toBe(0)
  })

  it('when the page opens with no connection, then the device copy and the changes kept on it are shown', async () => {
    const first = useRunStore()
    api.saveReading.mockRejectedValue(new RunApiError(0, 'network', 'The server cannot be reached', {}, null))
    await first.open('run-ch1')
    await first.setReading('cwFlow', { entry: { value: 1500, unit: 'gpm' } })
    await vi.advanceTimersByTimeAsync(700)
    expect(first.saveState.label).toBe('Offline — 1 change kept on this device')
    first.close()

    setActivePinia(createPinia())
    const session = useSessionStore()
    session.loaded = false
    api.get.mockRejectedValue(new RunApiError(0, 'network', 'The server cannot be reached', {}, null))
    const reloaded = useRunStore()
    await reloaded.open('run-ch1')
    expect(reloaded.run?.equipmentTag).toBe('CH-1')
    expect(reloaded.fromDevice).toBe(true)
    expect(reloaded.working('cwFlow').entry).toEqual({ value: 1500, unit: 'gpm' })
    expect(reloaded.canEdit).toBe(true)
  })

  it('when someone else changed the field, then "keep theirs" shows their value and "use mine" resends on their version', async () => {
    const theirs = reading('oilPressureRunning', 3, { value: 36, unit: 'psid' }, 'Ines Marlow')
    api.saveReading
      .mockRejectedValueOnce(new RunApiError(409, 'reading_conflict', 'Ines Marlow changed Oil pressure to 36 psid', {}, theirs))
      .mockRejectedValueOnce(new RunApiError(409, 'reading_conflict', 'Ines Marlow changed Oil pressure to 36 psid', {}, theirs))
      .mockImplementation(async (_run: string, fieldId: string, change: { entry: RunReading['entry'] }) => saved(fieldId, 4, change.entry))
    const store = useRunStore()
    await store.open('run-ch1')
    await store.setReading('oilPressureRunning', { entry: { value: 38, unit: 'psid' } })
    await vi.advanceTimersByTimeAsync(600)
    expect(store.conflictFor('oilPressureRunning')?.conflict?.current.updatedByName).toBe('Ines Marlow')
    expect(store.working('oilPressureRunning').entry).toEqual({ value: 38, unit: 'psid' })

    await store.keepTheirs('reading', 'oilPressureRunning')
    expect(store.working('oilPressureRunning').entry).toEqual({ value: 36, unit: 'psid' })
    expect(storage.changes.size).toBe(0)

    await store.setReading('oilPressureRunning', { entry: { value: 39, unit: 'psid' } })
    await vi.advanceTimersByTimeAsync(600)
    expect(store.conflictFor('oilPressureRunning')).not.toBeNull()
    await store.useMine('reading', 'oilPressureRunning')
    await vi.advanceTimersByTimeAsync(0)
    expect(api.saveReading).toHaveBeenLastCalledWith('run-ch1', 'oilPressureRunning', expect.objectContaining({ baseVersion: 3, entry: { value: 39, unit: 'psid' } }))
    expect(store.conflictFor('oilPressureRunning')).toBeNull()
  })
})
