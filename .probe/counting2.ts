import { parseExpression } from '../shared/rules/expression'
import type { ChecklistDefinition, ChecklistField, ChecklistStep } from '../shared/schemas/checklist'
import type { RunProgress } from '../shared/types/run'
import { DISPOSITION_WORDS, dispositionOf, type Disposition, type DispositionKind } from '../shared/record/disposition'

/**
 * The one counting rule of the record (docs/REFERENCES.md §Record keeping). Every screen, the report, the archive,
 * the handover CSVs and Verify count with `countRun`, so a count is the same wherever it is printed.
 *
 * - A **check** is a field of the checklist that has something to say: a judged value, a recorded value, a required
 *   value still missing, or a disposition. An optional field left blank is not a check; it prints as "—".
 * - A check with an acceptance criterion is **judged**: pass, marginal, fail, or incomplete (required and missing,
 *   or a value that cannot be judged because the design point lacks a value).
 * - A value with no acceptance criterion (no rule, free text, photos, a computed value with no limit) is
 *   **recorded**: shown neutrally, never counted as a pass.
 * - A check with a disposition (its own, its step's, or, for a computed value, the disposition of the reading it is
 *   computed from) counts under that disposition.
 */

export type FieldPlace = { field: ChecklistField; stepId: string; sectionId: string; step: ChecklistStep }

const placesCache = new WeakMap<ChecklistDefinition, Map<string, FieldPlace>>()

/** Where each field of a checklist version lives (its step and section), in checklist order. */
export function fieldPlaces(definition: ChecklistDefinition): Map<string, FieldPlace> {
  let places = placesCache.get(definition)
  if (places) return places
  places = new Map<string, FieldPlace>()
  for (const section of definition.sections) {
    for (const step of section.steps) for (const field of step.fields) places.set(field.id, { field, step, stepId: step.id, sectionId: section.id })
  }
  placesCache.set(definition, places)
  return places
}

export const JUDGED_OUTCOMES = ['pass', 'marginal', 'fail', 'incomplete'] as const
export type JudgedOutcome = (typeof JUDGED_OUTCOMES)[number]
export type CheckOutcome = JudgedOutcome | 'recorded' | DispositionKind

/** The word of each outcome, as every screen and the report print it. */
export const OUTCOME_WORDS: Record<CheckOutcome, string> = {
  pass: 'Pass',
  marginal: 'Marginal',
  fail: 'Fail',
  incomplete: 'Incomplete',
  recorded: 'Recorded',
  not_applicable: DISPOSITION_WORDS.not_applicable.label,
  by_others: DISPOSITION_WORDS.by_others.label,
  verified_earlier: DISPOSITION_WORDS.verified_earlier.label,
  deferred: DISPOSITION_WORDS.deferred.label,
  not_done: DISPOSITION_WORDS.not_done.label,
}

/** Whether a field has an acceptance criterion: a rule to judge it by (free text and photos never have one). */
export function hasCriterion(field: ChecklistField): boolean {
  if (field.kind === 'text' || field.kind === 'photo') return false
  // Recorded against a design value (building- or tower-driven readings) is a reference, not a criterion.
  return field.rule !== undefined && field.rule !== null && field.rule.type !== 'design_reference'
}

/** The little of a reading that counting needs. */
export interface CountedReading {
  fieldId: string
  /** The stored evaluation's verdict ('recorded' for values without a criterion; older records say 'pass'). */
  verdict: string
  /** Whether the evaluation holds a value (a number, an answer): tells an unjudgeable value from a blank. */
  hasValue?: boolean
  disposition?: Disposition | null
  notApplicable?: boolean
  naReason?: string | null
}

export interface CountedStep {
  stepId: string
  disposition?: Disposition | null
  notApplicable?: boolean
  naReason?: string | null
}

export interface CheckResult {
  fieldId: string
  stepId: string
  sectionId: string
  /** null: an optional field left blank, which is not a check. */
  outcome: CheckOutcome | null
  /** Set for an item of a pre-work safety step (permits, lockout): it belongs to the visit, not to the machine. */
  safety?: true
  disposition: Disposition | null
  /** Where the disposition comes from: the field, its step, or the reading a computed value depends on. */
  dispositionFrom: 'field' | 'step' | 'input' | null
  /** For a disposition inherited from an input: that input's field id. */
  dispositionInput?: string
}

export interface RunCount {
  /** Every field of the checklist, in checklist order. */
  results: Map<string, CheckResult>
  totals: RunProgress
}

const dispositionKey: Record<DispositionKind, keyof RunProgress> = {
  not_applicable: 'notApplicable',
  by_others: 'byOthers',
  verified_earlier: 'verifiedEarlier',
  deferred: 'deferred',
  not_done: 'notDone',
}

export function emptyProgress(): RunProgress {
  return { checks: 0, judged: 0, required: 0, answered: 0, pass: 0, marginal: 0, fail: 0, incomplete: 0, recorded: 0, notApplicable: 0, byOthers: 0, verifiedEarlier: 0, deferred: 0, notDone: 0 }
}

const refsCache = new WeakMap<ChecklistField, string[]>()
function inputsOf(field: ChecklistField): string[] {
  if (!field.computed) return []
  let refs = refsCache.get(field)
  if (!refs) {
    try {
      refs = parseExpression(field.computed.expression).fieldRefs
    } catch {
      refs = []
    }
    refsCache.set(field, refs)
  }
  return refs
}

/** Adds one outcome to the totals (`required`/`answered` are the checks and those with an outcome other than incomplete). */
export function addOutcome(p: RunProgress, outcome: CheckOutcome | null): void {
  if (outcome === null) return
  p.checks += 1
  p.required += 1
  if (outcome !== 'incomplete') p.answered += 1
  if (outcome === 'recorded') p.recorded += 1
  else if ((JUDGED_OUTCOMES as readonly string[]).includes(outcome)) {
    p.judged += 1
    p[outcome as JudgedOutcome] += 1
  } else p[dispositionKey[outcome as DispositionKind]] += 1
}

/** Every field's outcome and the run's totals, by the one rule above. */
export function countRun(
  definition: ChecklistDefinition,
  readings: Readonly<Record<string, CountedReading | undefined>> | Iterable<CountedReading>,
  steps: Readonly<Record<string, CountedStep | undefined>> | Iterable<CountedStep>,
): RunCount {
  const places = fieldPlaces(definition)
  const byField = toMap(readings, (r) => r.fieldId)
  const byStep = toMap(steps, (s) => s.stepId)
  const results = new Map<string, CheckResult>()
  const own = (fieldId: string): { disposition: Disposition; from: 'field' | 'step' } | null => {
    const place = places.get(fieldId)
    if (!place) return null
    const step = dispositionOf(byStep.get(place.stepId))
    if (step) return { disposition: step, from: 'step' }
    const field = dispositionOf(byField.get(fieldId))
    return field ? { disposition: field, from: 'field' } : null
  }
  // A computed value whose inputs carry a disposition carries it too (a voltage unbalance from readings done by others).
  const inherited = (field: ChecklistField, seen: Set<string>): { disposition: Disposition; input: string } | null => {
    for (const ref of inputsOf(field)) {
      if (seen.has(ref)) continue
      seen.add(ref)
      const d = own(ref)
      if (d) return { disposition: d.disposition, input: ref }
      const inner = places.get(ref)
      const deeper = inner ? inherited(inner.field, seen) : null
      if (deeper) return deeper
    }
    return null
  }
  const totals = emptyProgress()
  for (const [fieldId, place] of places) {
    const { field } = place
    const required = field.required !== false
    const reading = byField.get(fieldId)
    const d = own(fieldId)
    const check = (outcome: CheckOutcome | null, disposition: Disposition | null, from: CheckResult['dispositionFrom'], input?: string) => checkResult(place, fieldId, outcome, disposition, from, input)
    let result: CheckResult
    if (d) {
      // An optional field in a step that has a disposition is not a check of its own.
      result = check(d.from === 'step' && !required ? null : d.disposition.kind, d.disposition, d.from)
    } else {
      const verdict = reading?.verdict ?? 'incomplete'
      if (verdict === 'incomplete') {
        const from = field.computed ? inherited(field, new Set([fieldId])) : null
        if (from) result = check(required ? from.disposition.kind : null, from.disposition, 'input', from.input)
        else result = check(required || reading?.hasValue ? 'incomplete' : null, null, null)
      } else if (place.step.safety && verdict === 'fail') {
        // A "No" on a pre-work safety item stops the run: it is never a fail to sign off, it is work not yet allowed.
        result = check('incomplete', null, null)
      } else if (!hasCriterion(field) || verdict === 'recorded') {
        result = check('recorded', null, null)
      } else {
        result = check(verdict as JudgedOutcome, null, null)
      }
    }
    results.set(fieldId, result)
    addOutcome(totals, result.outcome)
  }
  return { results, totals }
}

/**
 * One field's result, its keys always in the same order. Written out rather than spread from a shared base: V8 copies
 * a spread of objects of varying shape slowly, and this runs for every field of every save (about 25× faster).
 */
function checkResult(place: FieldPlace, fieldId: string, outcome: CheckOutcome | null, disposition: Disposition | null, dispositionFrom: CheckResult['dispositionFrom'], dispositionInput?: string): CheckResult {
  const r: CheckResult = place.step.safety
    ? { fieldId, stepId: place.stepId, sectionId: place.sectionId, safety: true, outcome, disposition, dispositionFrom }
    : { fieldId, stepId: place.stepId, sectionId: place.sectionId, outcome, disposition, dispositionFrom }
  if (dispositionInput !== undefined) r.dispositionInput = dispositionInput
  return r
}

function toMap<T>(source: Readonly<Record<string, T | undefined>> | Iterable<T>, key: (x: T) => string): Map<string, T> {
  const out = new Map<string, T>()
  const values: Iterable<T | undefined> = Symbol.iterator in Object(source) ? (source as Iterable<T>) : Object.values(source as Record<string, T | undefined>)
  for (const v of values) if (v) out.set(key(v), v)
  return out
}

/** The counts of one step (the runner's step list): the same rule, over that step's fields. */
export function stepTotals(count: RunCount, stepId: string): RunProgress {
  const p = emptyProgress()
  for (const r of count.results.values()) if (r.stepId === stepId) addOutcome(p, r.outcome)
  return p
}

/** What counting needs of a run's readings and steps as the API and the snapshot hold them. */
export function countedOf(run: {
  readings: Readonly<Record<string, { fieldId: string; evaluation: { verdict: string; display?: unknown; answer?: unknown }; disposition?: Disposition | null; notApplicable?: boolean; naReason?: string | null }>>
  steps: Readonly<Record<string, { stepId: string; disposition?: Disposition | null; notApplicable?: boolean; naReason?: string | null }>>
}): { readings: CountedReading[]; steps: CountedStep[] } {
  return {
    readings: Object.values(run.readings).map((r) => ({
      fieldId: r.fieldId,
      verdict: r.evaluation.verdict,
      hasValue: r.evaluation.display != null || r.evaluation.answer !== undefined,
      disposition: r.disposition ?? null,
      notApplicable: r.notApplicable,
      naReason: r.naReason,
    })),
    steps: Object.values(run.steps).map((s) => ({ stepId: s.stepId, disposition: s.disposition ?? null, notApplicable: s.notApplicable, naReason: s.naReason })),
  }
}

/** The run's counts from its definition, readings and steps (API shapes or the signed snapshot). */
export function countRunRecord(run: Parameters<typeof countedOf>[0] & { definition: ChecklistDefinition }): RunCount {
  const c = countedOf(run)
  return countRun(run.definition, c.readings, c.steps)
}

/** Backwards-compatible name: the totals only. */
export function progressOf(definition: ChecklistDefinition, readings: Iterable<CountedReading>, steps: Iterable<CountedStep> | ReadonlySet<string>): RunProgress {
  const stepList: CountedStep[] = steps instanceof Set ? [...(steps as ReadonlySet<string>)].map((stepId) => ({ stepId, notApplicable: true })) : [...(steps as Iterable<CountedStep>)]
  return countRun(definition, readings, stepList).totals
}

/** The counts as one line of words: "93 checks: 61 pass, 2 marginal, …" (zero counts left out). */
export function describeTotals(p: RunProgress): string {
  const parts: string[] = []
  const add = (n: number, word: string) => {
    if (n) parts.push(`${n} ${word}`)
  }
  add(p.pass, 'pass')
  add(p.marginal, 'marginal')
  add(p.fail, 'fail')
  add(p.incomplete, 'incomplete')
  add(p.recorded, 'recorded')
  add(p.notApplicable, 'not applicable')
  add(p.byOthers, 'done by others')
  add(p.verifiedEarlier, 'carried over')
  add(p.deferred, 'deferred')
  add(p.notDone, 'not done')
  return `${p.checks} check${p.checks === 1 ? '' : 's'}${parts.length ? `: ${parts.join(', ')}` : ''}`
}

export interface SafetyStop {
  stepId: string
  /** "Do not proceed until …": the step's own words, or a default naming the items answered No. */
  message: string
  fieldIds: string[]
}

/** A pre-work safety item answered "No" stops the run: nothing else may be recorded until it is put right. */
export function safetyStop(definition: ChecklistDefinition, verdicts: Readonly<Record<string, { verdict: string } | undefined>>): SafetyStop | null {
  for (const section of definition.sections) {
    for (const step of section.steps) {
      if (!step.safety) continue
      const stopped = step.fields.filter((f) => verdicts[f.id]?.verdict === 'fail')
      if (!stopped.length) continue
      const message = step.stop ?? `Do not proceed until ${stopped.map((f) => f.label.charAt(0).toLowerCase() + f.label.slice(1)).join('; ')}.`
      return { stepId: step.id, message, fieldIds: stopped.map((f) => f.id) }
    }
  }
  return null
}

/** Work recorded as done by others, grouped by who and their record, for the performer's statement and the report. */
export interface ByOthersItem {
  by: string
  reference: string | null
  witnessed: boolean | null
  /** Step titles (a whole step) or "Step › Field". */
  where: string[]
  checks: number
}

export function byOthersOf(definition: ChecklistDefinition, count: RunCount): ByOthersItem[] {
  const places = fieldPlaces(definition)
  const groups = new Map<string, ByOthersItem>()
  for (const r of count.results.values()) {
    if (r.outcome !== 'by_others' || !r.disposition) continue
    const d = r.disposition
    const key = `${d.by}\u0000${d.reference}\u0000${d.witnessed}`
    let g = groups.get(key)
    if (!g) groups.set(key, (g = { by: d.by ?? 'someone else', reference: d.reference, witnessed: d.witnessed, where: [], checks: 0 }))
    const place = places.get(r.fieldId)!
    const where = r.dispositionFrom === 'step' || r.dispositionFrom === 'input' ? place.step.title : `${place.step.title} › ${place.field.label}`
    if (!g.where.includes(where)) g.where.push(where)
    g.checks += 1
  }
  return [...groups.values()]
}
