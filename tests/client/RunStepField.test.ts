import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import { emptyProgress } from '@shared/record'
import { evaluateChecklist, physicalBoundsProblem } from '@shared/rules'
import { chillerStartupDefinition } from '@shared/library/chiller'
import type { ChecklistField, ChecklistStep } from '@shared/schemas/checklist'
import type { AnyDesignPoint, DesignPoint } from '@shared/schemas/design-point'
import type { ReadingSaved, RunDetail, RunReading } from '@shared/types/run'
import { createMemoryQueueStorage, type QueuedChange } from '@/composables/useOfflineQueue'
import { useSessionStore } from '@/stores/session'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))
vi.mock('element-plus/es/components/input/style/css', () => ({}))
vi.mock('element-plus/es/components/checkbox/style/css', () => ({}))
vi.mock('element-plus/es/components/radio/style/css', () => ({}))
vi.mock('element-plus/es/components/radio-group/style/css', () => ({}))
vi.mock('element-plus/es/components/select/style/css', () => ({}))
vi.mock('element-plus/es/components/option/style/css', () => ({}))
vi.mock('element-plus/es/components/message/style/css', () => ({}))

const api = vi.hoisted(() => ({ get: vi.fn(), saveReading: vi.fn(), saveStep: vi.fn() }))
vi.mock('@/api/runs', async (original) => {
  const real = await original<typeof import('@/api/runs')>()
  return { ...real, runsApi: { ...real.runsApi, ...api } }
})
const { RunApiError } = await import('@/api/runs')
const { setRunQueueStorageFactory, useRunStore } = await import('@/stores/run')
const { default: RunStepField } = await import('@/components/RunStepField.vue')

// An invented R-134a machine: chilled water 54 → 42 °F at 445 gpm, so it evaporates near 37 psig.
const designPoint: DesignPoint = {
  refrigerant: 'R-134a',
  capacity: { value: 220, unit: 'TR' },
  evaporatorEnteringWaterTemp: { value: 54, unit: 'degF' },
  evaporatorLeavingWaterTemp: { value: 42, unit: 'degF' },
  evaporatorWaterFlow: { value: 445, unit: 'gpm' },
  condenserEnteringWaterTemp: { value: 85, unit: 'degF' },
  condenserLeavingWaterTemp: { value: 94.3, unit: 'degF' },
  condenserWaterFlow: { value: 660, unit: 'gpm' },
}

function place(fieldId: string): { field: ChecklistField; step: ChecklistStep } {
  for (const s of chillerStartupDefinition.sections) for (const step of s.steps) for (const field of step.fields) if (field.id === fieldId) return { field, step }
  throw new Error(`no field ${fieldId}`)
}

function reading(fieldId: string, version = 0, entry: RunReading['entry'] = null): RunReading {
  const evaluation = evaluateChecklist(chillerStartupDefinition, { readings: { [fieldId]: entry }, designPoint: designPoint as AnyDesignPoint, unitSystem: 'IP' })[fieldId]
  return { fieldId, entry, disposition: null, notApplicable: false, naReason: null, justification: null, evaluation, version, updatedAt: null, updatedByName: null }
}

function runDetail(): RunDetail {
  const readings: Record<string, RunReading> = {}
  for (const s of chillerStartupDefinition.sections) for (const st of s.steps) for (const f of st.fields) readings[f.id] = reading(f.id)
  return {
    id: 'run-ch3', projectId: 'p', projectCode: 'KLD-EP', projectName: 'East plant', equipmentId: 'e', equipmentTag: 'CH-3', equipmentKind: 'centrifugal_chiller',
    templateId: 't', templateName: 'Water-cooled centrifugal chiller start-up', templateVersionNumber: 1, state: 'in_progress', version: 1,
    startedAt: '2026-12-01T09:00:00.000Z', startedByName: 'Rafe Okafor', updatedAt: '2026-12-01T09:00:00.000Z',
    progress: emptyProgress(), openFindings: 0, unitSystem: 'IP', siteBarometricKpa: 101.325, definition: chillerStartupDefinition, designPoint, readings, steps: {}, findings: [], attachments: [], signatures: [],
  }
}

function saved(fieldId: string, entry: RunReading['entry']): ReadingSaved {
  const r = runDetail().readings
  r[fieldId] = reading(fieldId, 1, entry)
  return { reading: r[fieldId], readings: r, progress: runDetail().progress, duplicate: false }
}

let storage: ReturnType<typeof createMemoryQueueStorage>
let wrapper: VueWrapper | null = null

beforeEach(() => {
  vi.useFakeTimers()
  setActivePinia(createPinia())
  const session = useSessionStore()
  session.user = { id: 'u1', email: 'rafe.okafor@tallowmere.test', displayName: 'Rafe Okafor', role: 'technician', organizationName: 'Tallowmere' }
  session.loaded = true
  storage = createMemoryQueueStorage()
  setRunQueueStorageFactory(async () => storage)
  api.get.mockReset().mockResolvedValue(runDetail())
  api.saveReading.mockReset().mockImplementation(async (_run: string, fieldId: string, change: { entry: RunReading['entry'] }) => saved(fieldId, change.entry))
})
afterEach(() => {
  wrapper?.unmount()
  wrapper = null
  useRunStore().close()
  document.body.innerHTML = ''
  vi.useRealTimers()
})

async function mountField(fieldId: string) {
  const store = useRunStore()
  await store.open('run-ch3')
  wrapper = mount(RunStepField, { props: place(fieldId), attachTo: document.body })
  await flushPromises()
  return { store, wrapper }
}

const input = (w: VueWrapper, fieldId: string) => w.get<HTMLInputElement>(`input#field-${fieldId}`)

async function type(w: VueWrapper, fieldId: string, text: string) {
  const el = input(w, fieldId)
  el.element.focus()
  await el.setValue(text)
}

describe('RunStepField: a typed value far from the design point', () => {
  it('when 368 psig is typed for the evaporator pressure, then nothing is saved and, once the input is left, the question names the design value and the suggestion', async () => {
    const { store, wrapper: w } = await mountField('evapPressure')
    await type(w, 'evapPressure', '368')
    await vi.advanceTimersByTimeAsync(1000)
    expect(storage.changes.size).toBe(0)
    expect(api.saveReading).not.toHaveBeenCalled()
    expect(w.find('[role=alertdialog]').exists()).toBe(false)

    await input(w, 'evapPressure').trigger('blur')
    await flushPromises()
    const dialog = w.get('[role=alertdialog]')
    expect(dialog.text()).toContain('368 psig is about ten times the design evaporator pressure (37 psig). Did you mean 36.8 psig?')
    expect(dialog.attributes('aria-describedby')).toBe('plausibility-message-evapPressure')
    expect(document.activeElement).toBe(w.get('[data-test=plausibility-use-evapPressure]').element)
    expect(input(w, 'evapPressure').element.value).toBe('368')
    expect(w.find('[data-test=verdict-evapPressure]').exists()).toBe(false)
    expect(store.saveState.label).toBe('Not saved: Evaporator refrigerant pressure 368 psig waits for your answer')
    expect(storage.changes.size).toBe(0)
  })

  it('when 368 is typed a key at a time, then the 36 kept on the way is withdrawn and the field holds what it had before', async () => {
    const { store, wrapper: w } = await mountField('evapPressure')
    const el = input(w, 'evapPressure')
    el.element.focus()
    for (const text of ['3', '36', '368']) {
      await el.setValue(text)
      await vi.advanceTimersByTimeAsync(100)
    }
    await flushPromises()
    expect(store.held.evapPressure?.typed).toBe('368')
    expect(store.working('evapPressure').entry).toBeNull()
    await vi.advanceTimersByTimeAsync(1000)
    for (const call of api.saveReading.mock.calls) expect(call[2].entry).toBeNull()
    expect(store.liveEvaluations.evapSatTemp.message).toMatch(/cannot be computed until Evaporator refrigerant pressure is recorded/)
    expect(el.element.value).toBe('368')
  })

  it('when the suggestion is taken, then 36.8 psig is saved, shown in the input, and the question goes', async () => {
    const { store, wrapper: w } = await mountField('evapPressure')
    await type(w, 'evapPressure', '368')
    await input(w, 'evapPressure').trigger('keydown', { key: 'Enter' })
    await flushPromises()
    await w.get('[data-test=plausibility-use-evapPressure]').trigger('click')
    await flushPromises()
    expect(w.find('[role=alertdialog]').exists()).toBe(false)
    expect(input(w, 'evapPressure').element.value).toBe('36.8')
    expect(store.working('evapPressure').entry).toEqual({ value: 36.8, unit: 'psig' })
    await vi.advanceTimersByTimeAsync(1000)
    expect(api.saveReading).toHaveBeenCalledWith('run-ch3', 'evapPressure', expect.objectContaining({ entry: { value: 36.8, unit: 'psig' } }))
    expect(store.saveState.label).toBe('Saved')
  })

  it('when the value is kept as typed, then 368 psig is saved as it was typed and not questioned again', async () => {
    const { store, wrapper: w } = await mountField('evapPressure')
    await type(w, 'evapPressure', '368')
    await input(w, 'evapPressure').trigger('blur')
    await flushPromises()
    await w.get('[data-test=plausibility-keep-evapPressure]').trigger('click')
    await flushPromises()
    expect(store.working('evapPressure').entry).toEqual({ value: 368, unit: 'psig' })
    expect(w.get('[data-test=verdict-evapPressure]').attributes('data-verdict')).toBe('recorded')
    await vi.advanceTimersByTimeAsync(1000)
    expect(api.saveReading).toHaveBeenCalledWith('run-ch3', 'evapPressure', expect.objectContaining({ entry: { value: 368, unit: 'psig' } }))

    await type(w, 'evapPressure', '36')
    await type(w, 'evapPressure', '368')
    await input(w, 'evapPressure').trigger('blur')
    await flushPromises()
    expect(w.find('[role=alertdialog]').exists()).toBe(false)
  })

  it('when Edit is chosen (or Escape pressed), then the input has focus again with the typed text, and leaving it asks again', async () => {
    const { store, wrapper: w } = await mountField('chwFlow')
    await type(w, 'chwFlow', '4450')
    await input(w, 'chwFlow').trigger('blur')
    await flushPromises()
    expect(w.get('[role=alertdialog]').text()).toContain('4450 gpm is about ten times the design chilled-water flow (445 gpm). Did you mean 445 gpm?')
    await w.get('[role=alertdialog]').trigger('keydown', { key: 'Escape' })
    await flushPromises()
    expect(w.find('[role=alertdialog]').exists()).toBe(false)
    expect(document.activeElement).toBe(input(w, 'chwFlow').element)
    expect(input(w, 'chwFlow').element.value).toBe('4450')
    expect(store.held.chwFlow?.entry).toEqual({ value: 4450, unit: 'gpm' })

    await input(w, 'chwFlow').trigger('blur')
    await flushPromises()
    await w.get('[data-test=plausibility-edit-chwFlow]').trigger('click')
    await flushPromises()
    await type(w, 'chwFlow', '445')
    await input(w, 'chwFlow').trigger('blur')
    await flushPromises()
    expect(w.find('[role=alertdialog]').exists()).toBe(false)
    expect(store.held.chwFlow).toBeUndefined()
    expect(w.get('[data-test=verdict-chwFlow]').attributes('data-verdict')).toBe('pass')
  })

  it('when the step is left with the question open, then the typed value is still there when it comes back', async () => {
    const { wrapper: w } = await mountField('chwFlow')
    await type(w, 'chwFlow', '4450')
    await input(w, 'chwFlow').trigger('blur')
    await flushPromises()
    w.unmount()
    wrapper = mount(RunStepField, { props: place('chwFlow'), attachTo: document.body })
    await flushPromises()
    expect(input(wrapper, 'chwFlow').element.value).toBe('4450')
    expect(wrapper.get('[role=alertdialog]').text()).toContain('Did you mean 445 gpm?')
  })

  it('when a plausible value is typed, then it is saved with its verdict and no question', async () => {
    const { wrapper: w } = await mountField('chwFlow')
    await type(w, 'chwFlow', '300')
    await input(w, 'chwFlow').trigger('blur')
    await flushPromises()
    expect(w.find('[role=alertdialog]').exists()).toBe(false)
    expect(storage.changes.size).toBe(1)
    expect(w.get('[data-test=verdict-chwFlow]').attributes('data-verdict')).toBe('fail')
    expect(w.find('[data-test=record-finding-chwFlow]').exists()).toBe(true)
  })
})

describe('RunStepField: a value that was refused', () => {
  it('when the server refuses a value with a 400 naming the field, then its message is shown, the typed text stays, and there is no verdict and no finding button', async () => {
    // A change kept on this device from an earlier session reaches the server, which refuses it.
    const entry = { value: -10, unit: 'gpm' }
    const refusal = physicalBoundsProblem(place('chwFlow').field, entry)!
    expect(refusal).toBe('Chilled-water flow \u221210 gpm cannot be negative')
    api.saveReading.mockReset().mockRejectedValue(new RunApiError(400, 'invalid_reading', refusal, { chwFlow: refusal }, null))
    const kept: QueuedChange = {
      changeId: '6c1f7f0e-9f1e-4c57-9d38-0d2f3b1b8a10', runId: 'run-ch3', authorId: 'u1', authorName: 'Rafe Okafor', seq: 1, kind: 'reading', targetId: 'chwFlow',
      body: { changeId: '6c1f7f0e-9f1e-4c57-9d38-0d2f3b1b8a10', baseVersion: 0, entry, disposition: null, notApplicable: false, naReason: null, justification: null } as QueuedChange['body'],
      attempted: false, state: 'pending', conflict: null, readyAt: 0, queuedAt: '2026-12-01T09:30:00.000Z',
    }
    await storage.put(kept)
    const { store, wrapper: w } = await mountField('chwFlow')
    await vi.advanceTimersByTimeAsync(1000)
    await flushPromises()
    expect(api.saveReading).toHaveBeenCalled()
    expect(w.get('[data-test=field-error-chwFlow]').text()).toBe(refusal)
    expect(input(w, 'chwFlow').element.value).toBe('-10')
    expect(w.find('[data-test=verdict-chwFlow]').exists()).toBe(false)
    expect(w.find('[data-test=fail-actions-chwFlow]').exists()).toBe(false)
    expect(w.find('[data-test=record-finding-chwFlow]').exists()).toBe(false)
    expect(store.liveEvaluations.chwFlow.verdict).toBe('incomplete')
    // Nothing is computed from a value that was not taken.
    expect(store.liveEvaluations.capacity.message).toMatch(/cannot be computed until .*Chilled-water flow/)

    await type(w, 'chwFlow', '440')
    await flushPromises()
    expect(w.find('[data-test=field-error-chwFlow]').exists()).toBe(false)
    expect(w.get('[data-test=verdict-chwFlow]').attributes('data-verdict')).toBe('pass')
  })

  it('when a value that cannot be a measurement is typed, then the device refuses it in the server’s words, queues nothing, and shows no verdict', async () => {
    const { wrapper: w } = await mountField('chwFlow')
    await type(w, 'chwFlow', '-10')
    await flushPromises()
    expect(w.get('[data-test=field-error-chwFlow]').text()).toBe(physicalBoundsProblem(place('chwFlow').field, { value: -10, unit: 'gpm' }))
    expect(input(w, 'chwFlow').element.value).toBe('-10')
    expect(w.find('[data-test=verdict-chwFlow]').exists()).toBe(false)
    expect(w.find('[data-test=record-finding-chwFlow]').exists()).toBe(false)
    expect(storage.changes.size).toBe(0)
  })
})
