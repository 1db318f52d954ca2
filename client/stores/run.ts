import { defineStore } from 'pinia'
import { computed, ref, shallowRef, watch } from 'vue'
import { ValidationError } from 'yup'
import { evaluateField, physicalBoundsProblem, plausibilityQuestion, type FieldEvaluation, type PlausibilityQuestion } from '@shared/rules'
import type { ChecklistField, ChecklistSection, ChecklistStep } from '@shared/schemas/checklist'
import type { AnyDesignPoint } from '@shared/schemas/design-point'
import { entrySchemaFor, type FieldEntry } from '@shared/schemas/reading'
import { countRun, dispositionOf, dispositionSchema, stepTotals, type Disposition } from '@shared/record'
import type { FindingCreateInput, FindingUpdateInput } from '@shared/schemas/run'
import {
  EDITABLE_RUN_STATES,
  type FindingSummary,
  type ReadingSaved,
  type RunAttachment,
  type RunDetail,
  type RunReading,
  type RunStepState,
} from '@shared/types/run'
import { ApiError } from '@/api/http'
import { runsApi } from '@/api/runs'
import {
  createMemoryQueueStorage,
  openDeviceQueueStorage,
  RUN_EDITOR_KEY_PREFIX,
  sendQueuedChange,
  setDeviceQueueStorageFactory,
  useOfflineQueue,
  type OfflineQueue,
  type QueuedChange,
  type QueueStorage,
  type WaitingAuthor,
} from '@/composables/useOfflineQueue'
import { useSessionStore } from '@/stores/session'

/** What the technician has entered for a field and the server does not confirm yet. */
export interface LocalReading {
  entry: FieldEntry | null
  /** Why the field has no reading of its own; `notApplicable` and `naReason` follow it (older queued changes have only those). */
  disposition: Disposition | null
  notApplicable: boolean
  naReason: string | null
  justification: string | null
}
export interface LocalStep {
  note: string
  disposition: Disposition | null
  notApplicable: boolean
  naReason: string | null
}

export interface StepRef {
  section: ChecklistSection
  step: ChecklistStep
  index: number
}

export type SaveTone = 'saved' | 'saving' | 'offline' | 'problem' | 'readonly'

/** A typed number far outside what the machine makes plausible: kept here, not saved, until the technician answers. */
export interface HeldReading {
  entry: FieldEntry
  /** The text as typed ("368"), so the input shows it again and the question keeps its digits. */
  typed: string
  question: PlausibilityQuestion
  /** The question is on screen (the technician left the input or pressed Enter). */
  asking: boolean
}

/** "Ines Marlow has 2 changes to this run waiting on this device", for each person. */
export function othersWaitingText(waiting: WaitingAuthor[]): string | null {
  if (!waiting.length) return null
  return waiting.map((w) => `${w.authorName} has ${w.count} change${w.count === 1 ? '' : 's'} to this run waiting on this device`).join('; ')
}

/** The content of a field change; a disposition decides `notApplicable` and `naReason` (an older change has only those). */
const readingContent = (r: Partial<LocalReading>): LocalReading => {
  const disposition = r.disposition === undefined ? dispositionOf(r) : r.disposition
  return { entry: disposition ? null : (r.entry ?? null), disposition, notApplicable: disposition !== null, naReason: disposition?.reason ?? null, justification: r.justification ?? null }
}
const stepContent = (s: Partial<LocalStep>): LocalStep => {
  const disposition = s.disposition === undefined ? dispositionOf(s) : s.disposition
  return { note: s.note ?? '', disposition, notApplicable: disposition !== null, naReason: disposition?.reason ?? null }
}
function dispositionProblem(d: Disposition | null): string | null {
  if (!d) return null
  try {
    dispositionSchema.validateSync(d, { abortEarly: true })
    return null
  } catch (err) {
    if (ValidationError.isError(err)) return err.errors[0] ?? err.message
    throw err
  }
}
const sameJson = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b)
/** JSON with object keys sorted: the database hands entries back with its own key order. */
function canonicalJson(value: unknown): string {
  return JSON.stringify(value, (_k, v: unknown) =>
    v && typeof v === 'object' && !Array.isArray(v) ? Object.fromEntries(Object.entries(v as Record<string, unknown>).sort(([a], [b]) => a.localeCompare(b))) : v,
  )
}

/** Tests hand in their own storage (by default the queue's IndexedDB, or memory when this browser has none: then the page says so). */
export function setRunQueueStorageFactory(factory: () => Promise<QueueStorage>) {
  setDeviceQueueStorageFactory(factory)
}

/** The run being worked on: the server's state, what this device has entered on top, and the outbox that sends it. */
export const useRunStore = defineStore('run', () => {
  const run = ref<RunDetail | null>(null)
  const local = ref<Record<string, LocalReading>>({})
  const localSteps = ref<Record<string, LocalStep>>({})
  const fieldErrors = ref<Record<string, string>>({})
  const held = ref<Record<string, HeldReading>>({})
  /** Values the technician confirmed as typed after the plausibility question: not asked again. */
  const confirmedAsTyped = ref<Record<string, string>>({})
  /** What each field held when the technician started typing in it (see holdReading). */
  let editStart: Record<string, LocalReading> = {}
  const stepErrors = ref<Record<string, string>>({})
  const loadError = ref<string | null>(null)
  const isLoading = ref(false)
  /** Opened from this device's copy because the server could not be reached. */
  const fromDevice = ref(false)
  const storageProblem = ref<string | null>(null)
  const queue = shallowRef<OfflineQueue | null>(null)
  let storage: QueueStorage | null = null
  let snapshotTimer: ReturnType<typeof setTimeout> | undefined
  /** Whose run this is on the page: the copy kept, and the changes made, are that person's. */
  let openedBy: string | null = null

  const session = useSessionStore()
  // Another person (or nobody) signed in: what the previous person had on the page goes; their changes stay on the device.
  watch(
    () => session.actingUser?.id ?? null,
    (now, before) => {
      if (before !== null && now !== before) close()
    },
    { flush: 'sync' },
  )

  const definition = computed(() => run.value?.definition ?? null)
  const steps = computed<StepRef[]>(() => {
    const out: StepRef[] = []
    for (const section of definition.value?.sections ?? []) for (const step of section.steps) out.push({ section, step, index: out.length })
    return out
  })
  const fieldIndex = computed(() => {
    const map = new Map<string, { field: ChecklistField; step: ChecklistStep; section: ChecklistSection }>()
    for (const { section, step } of steps.value) for (const field of step.fields) map.set(field.id, { field, step, section })
    return map
  })
  /** Set when this device opened the run as a technician: lets a reload with no connection keep taking readings. */
  const deviceEditor = ref(false)
  const canEdit = computed(() => {
    if (!run.value || !EDITABLE_RUN_STATES.includes(run.value.state)) return false
    if (session.user) return session.role === 'technician'
    return !session.loaded && session.actingUser?.role === 'technician' && deviceEditor.value
  })
  const editorKey = (runId: string) => `${RUN_EDITOR_KEY_PREFIX}${runId}`
  function rememberEditor(runId: string) {
    try {
      if (session.role === 'technician') localStorage.setItem(editorKey(runId), session.user!.id)
      const editor = localStorage.getItem(editorKey(runId))
      deviceEditor.value = editor !== null && editor === session.actingUser?.id
    } catch {
      deviceEditor.value = false
    }
  }

  function serverReading(fieldId: string): RunReading | undefined {
    return run.value?.readings[fieldId]
  }

  /** The field as the technician sees it now: this device's entry over the server's. */
  function working(fieldId: string): LocalReading {
    const mine = local.value[fieldId]
    if (mine) return mine
    const r = serverReading(fieldId)
    return readingContent({ entry: r?.entry ?? null, disposition: r ? dispositionOf(r) : null, justification: r?.justification ?? null })
  }
  function workingStep(stepId: string): LocalStep {
    const mine = localSteps.value[stepId]
    if (mine) return mine
    const s = run.value?.steps[stepId]
    return stepContent({ note: s?.note ?? '', disposition: s ? dispositionOf(s) : null })
  }

  const workingEntries = computed(() => {
    const out: Record<string, FieldEntry | null> = {}
    for (const [id, { step }] of fieldIndex.value) {
      const w = working(id)
      // Set aside (the field or its whole step): no value, as the server evaluates it. A value refused (by the server or
      // on this device) is not recorded, so nothing is computed from it either.
      out[id] = w.disposition || workingStep(step.id).disposition || refusal(id) ? null : w.entry
    }
    return out
  })

  /** Why this device's value for a field was refused (the server's 400 in the field's words, or the same check here). */
  function refusal(fieldId: string): string | null {
    return local.value[fieldId] ? (fieldErrors.value[fieldId] ?? null) : null
  }

  /** Live verdicts from the shared engine on the working values; only what this device changed differs from the server's. */
  const liveEvaluations = computed(() => {
    const out: Record<string, FieldEvaluation> = {}
    const def = definition.value
    if (!def || !run.value) return out
    const hasLocal = Object.keys(local.value).length > 0
    const context = { definition: def, designPoint: run.value.designPoint as AnyDesignPoint, unitSystem: run.value.unitSystem, siteBarometricKpa: run.value.siteBarometricKpa, readings: workingEntries.value }
    for (const [id, { field }] of fieldIndex.value) {
      const refused = refusal(id)
      if (refused) {
        // No verdict for a value that was not taken: the refusal is what the field says.
        out[id] = { fieldId: id, verdict: 'incomplete', message: refused, required: field.required !== false, computed: Boolean(field.computed), canonical: null, display: null, limits: null }
        continue
      }
      const stored = serverReading(id)?.evaluation
      if (stored && !local.value[id] && !(field.computed && hasLocal)) {
        out[id] = stored
        continue
      }
      try {
        out[id] = evaluateField(field, workingEntries.value[id], context)
      } catch (err) {
        out[id] = {
          fieldId: id,
          verdict: 'incomplete',
          message: err instanceof Error ? err.message : String(err),
          required: field.required !== false,
          computed: Boolean(field.computed),
          canonical: null,
          display: null,
          limits: null,
        }
      }
    }
    return out
  })

  function isAnswered(fieldId: string): boolean {
    const w = working(fieldId)
    if (w.disposition) return true
    const e = liveEvaluations.value[fieldId]
    return !!e && e.verdict !== 'incomplete'
  }

  /** The one counting rule (shared/record/counting.ts) over what this device shows now: the server counts the same way. */
  const liveCount = computed(() => {
    const def = definition.value
    if (!def) return null
    const readings = [...fieldIndex.value.keys()].map((id) => {
      const e = liveEvaluations.value[id]
      return { fieldId: id, verdict: e?.verdict ?? 'incomplete', hasValue: e ? e.display != null || e.answer !== undefined : false, disposition: working(id).disposition }
    })
    const stepStates = steps.value.map(({ step }) => ({ stepId: step.id, disposition: workingStep(step.id).disposition }))
    return countRun(def, readings, stepStates)
  })

  /** Per step: its checks, how many have an outcome, and the fails and marginals among them. */
  function stepProgress(step: ChecklistStep) {
    const count = liveCount.value
    const p = count ? stepTotals(count, step.id) : null
    const required = p?.checks ?? 0
    const answered = p?.answered ?? 0
    return { required, answered, fail: p?.fail ?? 0, marginal: p?.marginal ?? 0, done: required === answered, notApplicable: workingStep(step.id).disposition !== null }
  }

  const overallProgress = computed(() => {
    let required = 0
    let answered = 0
    for (const { step } of steps.value) {
      const p = stepProgress(step)
      required += p.required
      answered += p.answered
    }
    return { required, answered, pct: required ? Math.round((answered / required) * 100) : 0 }
  })

  const conflictFor = (fieldId: string) => queue.value?.conflicts.value.find((c) => c.kind === 'reading' && c.targetId === fieldId) ?? null
  const stepConflictFor = (stepId: string) => queue.value?.conflicts.value.find((c) => c.kind === 'step' && c.targetId === stepId) ?? null

  function scheduleSnapshot() {
    clearTimeout(snapshotTimer)
    snapshotTimer = setTimeout(() => {
      if (run.value && storage && openedBy) void storage.putRun(run.value, openedBy).catch(() => undefined)
    }, 400)
  }

  function overlay(changes: QueuedChange[]) {
    for (const c of changes) {
      if (c.kind === 'reading') {
        const b = c.body as LocalReading
        local.value[c.targetId] = readingContent(b)
      } else {
        const b = c.body as unknown as LocalStep
        localSteps.value[c.targetId] = stepContent(b)
      }
    }
  }

  /**
   * Takes the server's readings, keeping the entry objects already shown where the server holds the same value, so
   * inputs that compare what they last emitted do not see a "new" value (and drop a row being typed) after each save.
   */
  function adoptReadings(next: Record<string, RunReading>): Record<string, RunReading> {
    const before = run.value?.readings ?? {}
    for (const [id, r] of Object.entries(next)) {
      const shown = local.value[id]?.entry ?? before[id]?.entry
      if (shown && r.entry && canonicalJson(shown) === canonicalJson(r.entry)) r.entry = shown
    }
    return next
  }

  function applyReadingSaved(change: QueuedChange, res: ReadingSaved) {
    if (!run.value) return
    // The answer carries the saved reading and those whose verdict followed it; the rest are as they were.
    run.value.readings = { ...run.value.readings, ...adoptReadings({ ...res.readings, [res.reading.fieldId]: res.reading }) }
    run.value.progress = res.progress
    const left = queue.value?.changesFor('reading', change.targetId).length ?? 0
    const mine = local.value[change.targetId]
    const sent = change.body as LocalReading
    if (!left && mine && canonicalJson(readingContent(mine)) === canonicalJson(readingContent(sent))) {
      delete local.value[change.targetId]
    }
    scheduleSnapshot()
  }

  function applyStepSaved(change: QueuedChange, step: RunStepState) {
    if (!run.value) return
    run.value.steps[step.stepId] = step
    const left = queue.value?.changesFor('step', change.targetId).length ?? 0
    const mine = localSteps.value[change.targetId]
    const sent = change.body as unknown as LocalStep
    if (!left && mine && sameJson(stepContent(mine), stepContent(sent))) delete localSteps.value[change.targetId]
    scheduleSnapshot()
  }

  function messageFor(err: ApiError, targetId: string): string {
    const fields = err.fields ?? {}
    const direct = fields[targetId] ?? Object.entries(fields).find(([k]) => k === 'entry' || k.startsWith('entry.') || k.startsWith(`${targetId}.`))?.[1]
    return direct ?? Object.values(fields)[0] ?? err.message
  }

  function close() {
    queue.value?.dispose()
    queue.value = null
    clearTimeout(snapshotTimer)
    openedBy = null
    run.value = null
    local.value = {}
    localSteps.value = {}
    fieldErrors.value = {}
    held.value = {}
    confirmedAsTyped.value = {}
    editStart = {}
    stepErrors.value = {}
    loadError.value = null
    fromDevice.value = false
  }

  /** Opens a run: this device's copy at once if it has one, the server's when it answers, then the changes still kept here. */
  async function open(runId: string) {
    const by = session.actingUser?.id ?? null
    if (run.value?.id === runId && queue.value && openedBy === by) return
    close()
    openedBy = by
    isLoading.value = true
    try {
      try {
        storage = await openDeviceQueueStorage()
        storageProblem.value = null
      } catch {
        storage = createMemoryQueueStorage()
        storageProblem.value = 'This browser does not keep changes on the device: keep this page open until it says Saved.'
      }
      const store = storage
      rememberEditor(runId)
      const snapshot = by ? await store.getRun(runId, by).catch(() => null) : null
      if (snapshot) run.value = snapshot
      // Only this person's changes are shown on top: another person's wait, unseen, for that person.
      overlay((await store.list(runId).catch(() => [])).filter((c) => c.authorId === null || c.authorId === by))

      const q = useOfflineQueue({
        runId,
        storage: store,
        author: () => session.author,
        send: sendQueuedChange,
        onAuthorMismatch: () => {
          // The server holds someone else's sign-in than this page thinks: ask it, and the page follows.
          void session.recheck().catch(() => undefined)
        },
        onSaved: (change, result) => {
          // The server took a change, so it answers again: a session check that failed offline can succeed now.
          if (!session.loaded) void session.ensureLoaded().catch(() => undefined)
          if (fromDevice.value) {
            fromDevice.value = false
            void refresh()
          }
          const response = (result as { response?: unknown }).response
          if (change.kind === 'reading') applyReadingSaved(change, response as ReadingSaved)
          else applyStepSaved(change, (response as { step: RunStepState }).step)
        },
        onRejected: (change, err) => {
          if (change.kind === 'reading') fieldErrors.value[change.targetId] = messageFor(err, change.targetId)
          else stepErrors.value[change.targetId] = messageFor(err, change.targetId)
        },
      })
      queue.value = q

      try {
        const fresh = await runsApi.get(runId)
        run.value = fresh
        fromDevice.value = false
        if (by) void store.putRun(fresh, by).catch(() => undefined)
      } catch (err) {
        if (!run.value) {
          loadError.value =
            err instanceof ApiError && err.status === 0
              ? 'The server cannot be reached and this run has not been opened on this device before. Try again when the connection returns.'
              : err instanceof Error
                ? err.message
                : String(err)
        } else fromDevice.value = true
      }
      overlay(await q.load())
    } finally {
      isLoading.value = false
    }
  }

  /** Fetches the server's state again (after a conflict is settled); what this device holds stays on top. */
  async function refresh() {
    if (!run.value) return
    try {
      const fresh = await runsApi.get(run.value.id)
      fresh.readings = adoptReadings(fresh.readings)
      run.value = fresh
      fromDevice.value = false
      scheduleSnapshot()
    } catch {
      // Offline: the device copy stands until the next answer.
    }
  }

  function validateReading(field: ChecklistField, r: LocalReading): string | null {
    const setAside = dispositionProblem(r.disposition)
    if (setAside) return setAside
    if (r.disposition || r.entry === null) return null
    try {
      entrySchemaFor(field).validateSync(r.entry, { strict: true })
    } catch (err) {
      if (ValidationError.isError(err)) return err.errors[0]?.replace(/^this\s*/, `${field.label} `) ?? err.message
      throw err
    }
    // The server refuses what cannot be a measurement with the same words; saying it here works offline too.
    return physicalBoundsProblem(field, r.entry)
  }

  /**
   * Records a change to a field: kept in the page at once (the live verdict follows), written to this device's
   * queue, and sent after typing settles. A value the field's own schema refuses stays in the page with the reason.
   */
  async function setReading(fieldId: string, patch: Partial<LocalReading>, options: { typingProblem?: string | null; keepHeld?: boolean } = {}) {
    const found = fieldIndex.value.get(fieldId)
    if (!found || !canEdit.value || !queue.value) return
    const next = readingContent({ ...working(fieldId), ...patch })
    local.value[fieldId] = next
    delete fieldErrors.value[fieldId]
    // A new value or a disposition answers a held value; a justification typed meanwhile does not.
    if (!options.keepHeld && ('entry' in patch || patch.disposition)) delete held.value[fieldId]
    const problem = options.typingProblem ?? validateReading(found.field, next)
    if (problem) {
      fieldErrors.value[fieldId] = problem
      return
    }
    await queue.value.enqueue('reading', fieldId, { ...next }, serverReading(fieldId)?.version ?? 0)
  }

  /**
   * The plausibility question for a typed number (shared/rules/plausibility.ts), or null: none for a value already
   * recorded on the server or confirmed as typed.
   */
  function plausibilityFor(fieldId: string, entry: FieldEntry | null, typed: string): PlausibilityQuestion | null {
    const found = fieldIndex.value.get(fieldId)
    if (!found || !entry || !run.value) return null
    const key = canonicalJson(entry)
    if (confirmedAsTyped.value[fieldId] === key) return null
    const stored = serverReading(fieldId)?.entry
    if (stored && canonicalJson(stored) === key) return null
    return plausibilityQuestion(found.field, entry, { designPoint: run.value.designPoint as AnyDesignPoint }, typed)
  }

  /** The technician starts typing in a field: what it holds now is what it goes back to while a value is held. */
  function beginEdit(fieldId: string) {
    if (!held.value[fieldId]) editStart[fieldId] = { ...working(fieldId) }
  }

  /**
   * Keeps an implausible typed number in the page without saving it; the question waits until typing is done. The
   * keystrokes on the way to it were kept as they came ("36" on the way to "368"), so the field goes back to what it
   * held before the typing began: no value nobody meant is recorded while the question is open.
   */
  async function holdReading(fieldId: string, entry: FieldEntry, typed: string, question: PlausibilityQuestion) {
    if (!canEdit.value) return
    const before = held.value[fieldId]
    held.value[fieldId] = { entry, typed, question, asking: before?.asking ?? false }
    delete fieldErrors.value[fieldId]
    const start = editStart[fieldId]
    if (start && canonicalJson(working(fieldId).entry) !== canonicalJson(start.entry)) {
      await setReading(fieldId, { entry: start.entry }, { keepHeld: true })
    }
  }

  /** Puts the question of a held value on screen (the technician left the input or pressed Enter). */
  function askHeld(fieldId: string): boolean {
    const h = held.value[fieldId]
    if (!h) return false
    h.asking = true
    return true
  }

  /** The technician goes back to the input: the held value stays, the question goes until they are done again. */
  function editHeld(fieldId: string) {
    const h = held.value[fieldId]
    if (h) h.asking = false
  }

  /** Forgets a held value: what is typed now is plausible (or empty) and takes its usual way. */
  function releaseHeld(fieldId: string) {
    delete held.value[fieldId]
  }

  /** The answer to the question: the suggested value, or the value as typed (then not asked about again). */
  async function answerHeld(fieldId: string, answer: 'suggestion' | 'as_typed') {
    const h = held.value[fieldId]
    if (!h) return
    const s = h.question.suggestion
    const entry: FieldEntry = answer === 'suggestion' && s ? { value: s.value, unit: s.unit } : h.entry
    if (answer === 'as_typed') confirmedAsTyped.value[fieldId] = canonicalJson(entry)
    await setReading(fieldId, { entry })
  }

  async function setStep(stepId: string, patch: Partial<LocalStep>) {
    if (!canEdit.value || !queue.value) return
    const next = stepContent({ ...workingStep(stepId), ...patch })
    localSteps.value[stepId] = next
    delete stepErrors.value[stepId]
    const problem = dispositionProblem(next.disposition)
    if (problem) {
      stepErrors.value[stepId] = problem
      return
    }
    await queue.value.enqueue('step', stepId, { note: next.note, disposition: next.disposition, notApplicable: next.notApplicable, naReason: next.naReason }, run.value?.steps[stepId]?.version ?? 0)
  }

  async function keepTheirs(kind: 'reading' | 'step', targetId: string) {
    const q = queue.value
    const c = kind === 'reading' ? conflictFor(targetId) : stepConflictFor(targetId)
    if (!q || !c || !run.value) return
    if (kind === 'reading') {
      run.value.readings[targetId] = c.conflict!.current as RunReading
      delete local.value[targetId]
      delete fieldErrors.value[targetId]
    } else {
      run.value.steps[targetId] = c.conflict!.current as RunStepState
      delete localSteps.value[targetId]
    }
    await q.keepTheirs(kind, targetId)
    void refresh()
  }

  async function useMine(kind: 'reading' | 'step', targetId: string) {
    const q = queue.value
    const c = kind === 'reading' ? conflictFor(targetId) : stepConflictFor(targetId)
    if (!q || !c || !run.value) return
    const current = c.conflict!.current
    if (kind === 'reading') run.value.readings[targetId] = current as RunReading
    else run.value.steps[targetId] = current as RunStepState
    await q.useMine(kind, targetId, current.version)
  }

  // Findings and files need the server: they are not queued, and a failure says so where it happened.
  async function uploadFile(file: File, where: { stepId: string; fieldId?: string | null; findingId?: string | null }): Promise<RunAttachment> {
    if (!run.value) throw new Error('No run is open')
    const attachment = await runsApi.uploadAttachment(run.value.id, file, where)
    run.value.attachments.push(attachment)
    scheduleSnapshot()
    return attachment
  }

  async function addPhoto(fieldId: string, file: File) {
    const found = fieldIndex.value.get(fieldId)
    if (!found) return
    const attachment = await uploadFile(file, { stepId: found.step.id, fieldId })
    const current = working(fieldId).entry as { value?: unknown } | null
    const ids = Array.isArray(current?.value) ? (current!.value as string[]) : []
    await setReading(fieldId, { entry: { value: [...ids, attachment.id] } })
  }

  async function removePhoto(fieldId: string, attachmentId: string) {
    const current = working(fieldId).entry as { value?: unknown } | null
    const ids = (Array.isArray(current?.value) ? (current!.value as string[]) : []).filter((id) => id !== attachmentId)
    await setReading(fieldId, { entry: ids.length ? { value: ids } : null })
  }

  async function createFinding(input: FindingCreateInput, files: File[] = []): Promise<FindingSummary> {
    if (!run.value) throw new Error('No run is open')
    const finding = await runsApi.createFinding(run.value.id, input)
    run.value.findings.push(finding)
    for (const file of files) {
      const a = await uploadFile(file, { stepId: input.stepId, fieldId: input.fieldId ?? null, findingId: finding.id })
      finding.attachmentIds.push(a.id)
    }
    scheduleSnapshot()
    return finding
  }

  async function updateFinding(findingId: string, input: FindingUpdateInput): Promise<FindingSummary> {
    if (!run.value) throw new Error('No run is open')
    const updated = await runsApi.updateFinding(run.value.id, findingId, input)
    const i = run.value.findings.findIndex((f) => f.id === findingId)
    if (i >= 0) run.value.findings[i] = updated
    scheduleSnapshot()
    return updated
  }

  const saveState = computed<{ tone: SaveTone; label: string; detail: string | null }>(() => {
    const q = queue.value
    if (!run.value) return { tone: 'saving', label: 'Opening…', detail: null }
    if (!canEdit.value && !q?.pendingCount.value) return { tone: 'readonly', label: 'Read only', detail: null }
    const n = q?.pendingCount.value ?? 0
    const kept = `${n} change${n === 1 ? '' : 's'} kept on this device`
    const status = q?.status.value ?? 'saved'
    if (status === 'offline') return { tone: 'offline', label: `Offline — ${kept}`, detail: q?.lastError.value ?? null }
    if (status === 'failing') return { tone: 'offline', label: `Server not answering — ${kept}`, detail: q?.lastError.value ?? null }
    if (status === 'signed_out') return { tone: 'problem', label: `Signed out — ${kept}; sign in again to send them`, detail: null }
    const conflicts = q?.conflicts.value.length ?? 0
    if (conflicts) return { tone: 'problem', label: `Not saved: ${conflicts} change${conflicts === 1 ? '' : 's'} also made by someone else`, detail: null }
    // Held while still being typed is not a problem yet; once the question is on screen, nothing is saved until it is answered.
    const waiting = Object.entries(held.value).filter(([, h]) => h.asking)
    if (waiting.length) {
      const [fieldId, h] = waiting[0]
      const label = fieldIndex.value.get(fieldId)?.field.label ?? fieldId
      return { tone: 'problem', label: `Not saved: ${label} ${h.question.entered.text} waits for your answer`, detail: waiting.length > 1 ? `${waiting.length} values wait for an answer` : null }
    }
    const errors = [...Object.values(fieldErrors.value), ...Object.values(stepErrors.value)]
    if (errors.length) return { tone: 'problem', label: `Not saved: ${errors[0]}`, detail: errors.length > 1 ? `${errors.length} fields need attention` : null }
    if (n > 0 || status === 'sending' || status === 'waiting') return { tone: 'saving', label: 'Saving…', detail: null }
    if (fromDevice.value) return { tone: 'offline', label: 'Opened from this device — the server has not answered yet', detail: null }
    return { tone: 'saved', label: 'Saved', detail: othersWaitingText(q?.othersWaiting.value ?? []) }
  })

  return {
    run, local, localSteps, fieldErrors, stepErrors, held, loadError, isLoading, fromDevice, storageProblem, queue,
    definition, steps, fieldIndex, canEdit, liveEvaluations, overallProgress, saveState,
    working, workingStep, serverReading, stepProgress, liveCount, conflictFor, stepConflictFor, isAnswered,
    open, close, refresh, setReading, setStep, refusal, plausibilityFor, beginEdit, holdReading, askHeld, editHeld, releaseHeld, answerHeld, keepTheirs, useMine, addPhoto, removePhoto, uploadFile, createFinding, updateFinding,
  }
})
