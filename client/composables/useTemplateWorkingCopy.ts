import { computed, ref, watch, type Ref } from 'vue'
import {
  FIELD_KINDS,
  RULES_FOR_KIND,
  validateChecklistDefinition,
  type ChecklistDefinition,
  type ChecklistField,
  type ChecklistSection,
  type ChecklistStep,
  type FieldKind,
  type FieldRule,
  type RuleType,
} from '@shared/schemas/checklist'
import { displayUnit, isUnitOf, type QuantityKind } from '@shared/units'
import type { ValidationIssue } from '@shared/types/api'

/** What the editor has open: the whole definition, one section, or one step (optionally one of its fields). */
export type EditorSelection =
  | { kind: 'definition' }
  | { kind: 'section'; section: number }
  | { kind: 'step'; section: number; step: number; field?: number }

/** Where a validation path points: `sections[1].steps[0].fields[2].rule.max` → section 1, step 0, field 2, `rule.max`. */
export interface IssueLocation {
  section?: number
  step?: number
  field?: number
  /** What is left after the deepest index, e.g. `rule.max`, `title`, `id`; empty when the path names the item itself. */
  property: string
}

const LOCATION = /^(?:sections\[(\d+)\](?:\.steps\[(\d+)\](?:\.fields\[(\d+)\])?)?)?\.?(.*)$/

export function parseIssuePath(path: string): IssueLocation {
  const m = LOCATION.exec(path)
  if (!m) return { property: path }
  const out: IssueLocation = { property: m[4] ?? '' }
  if (m[1] !== undefined) out.section = Number(m[1])
  if (m[2] !== undefined) out.step = Number(m[2])
  if (m[3] !== undefined) out.field = Number(m[3])
  return out
}

export function sectionPath(section: number) {
  return `sections[${section}]`
}
export function stepPath(section: number, step: number) {
  return `sections[${section}].steps[${step}]`
}
export function fieldPath(section: number, step: number, field: number) {
  return `sections[${section}].steps[${step}].fields[${field}]`
}

/** Issues whose path is `prefix` itself or lies inside it (`sections[1]` holds `sections[1].title`, not `sections[10]`). */
export function issuesUnder(issues: readonly ValidationIssue[], prefix: string): ValidationIssue[] {
  if (!prefix) return [...issues]
  return issues.filter((i) => i.path === prefix || i.path.startsWith(prefix + '.') || i.path.startsWith(prefix + '['))
}

/** The message without the path it starts with, for showing beside the input it belongs to: "Must not be below min". */
export function readableMessage(issue: ValidationIssue): string {
  const rest = issue.path && issue.message.startsWith(issue.path) ? issue.message.slice(issue.path.length).trim() : issue.message
  return rest ? rest[0].toUpperCase() + rest.slice(1) : issue.message
}

/** The selection that shows the item an issue belongs to. */
export function selectionForIssue(path: string): EditorSelection {
  const loc = parseIssuePath(path)
  if (loc.section === undefined) return { kind: 'definition' }
  if (loc.step === undefined) return { kind: 'section', section: loc.section }
  return loc.field === undefined ? { kind: 'step', section: loc.section, step: loc.step } : { kind: 'step', section: loc.section, step: loc.step, field: loc.field }
}

/** A plain copy without Vue proxies or `undefined` properties: what is validated, saved and stored. */
export function plainDefinition(definition: unknown): ChecklistDefinition {
  return JSON.parse(JSON.stringify(definition)) as ChecklistDefinition
}

/**
 * Whether parsed JSON has the shape the editor can show (sections → steps → fields as lists of objects), so that an
 * import the schema refuses can still be opened and fixed item by item. Returns the reason when it cannot.
 */
export function structureProblem(input: unknown): string | null {
  const isObj = (v: unknown) => typeof v === 'object' && v !== null && !Array.isArray(v)
  if (!isObj(input)) return 'The JSON must be an object with title, unitSystem and sections.'
  const sections = (input as { sections?: unknown }).sections
  if (!Array.isArray(sections)) return 'The JSON has no "sections" list.'
  for (const [i, s] of sections.entries()) {
    if (!isObj(s)) return `sections[${i}] is not an object.`
    const steps = (s as { steps?: unknown }).steps
    if (!Array.isArray(steps)) return `sections[${i}] has no "steps" list.`
    for (const [j, st] of steps.entries()) {
      if (!isObj(st)) return `sections[${i}].steps[${j}] is not an object.`
      const fields = (st as { fields?: unknown }).fields
      if (!Array.isArray(fields)) return `sections[${i}].steps[${j}] has no "fields" list.`
      const k = fields.findIndex((f) => !isObj(f))
      if (k >= 0) return `sections[${i}].steps[${j}].fields[${k}] is not an object.`
    }
  }
  return null
}

/** The rule a field gets when its rule type is chosen, carrying over the values that keep their meaning. */
export function defaultRule(type: RuleType, previous?: FieldRule): FieldRule {
  const p = (previous ?? {}) as Record<string, unknown>
  const num = (k: string) => (typeof p[k] === 'number' ? (p[k] as number) : undefined)
  const key = typeof p.key === 'string' ? p.key : 'evaporatorWaterFlow'
  const compact = <T extends object>(o: T): T => Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as T
  switch (type) {
    case 'range':
      return compact({ type, min: num('min'), max: num('max') ?? (num('min') === undefined ? 100 : undefined), warnMin: num('warnMin'), warnMax: num('warnMax') })
    case 'nominal':
      return compact({ type, nominal: num('nominal') ?? 0, tolerance: num('tolerance') ?? 1, warnTolerance: num('warnTolerance') })
    case 'nominal_pct':
      return compact({ type, nominal: num('nominal') ?? 100, tolerancePct: num('tolerancePct') ?? 10, warnTolerancePct: num('warnTolerancePct') })
    case 'design':
      return compact({ type, key, lowerPct: num('lowerPct') ?? 10, upperPct: num('upperPct') ?? 10, warnLowerPct: num('warnLowerPct'), warnUpperPct: num('warnUpperPct') })
    case 'design_offset':
      return compact({ type, key, lower: num('lower') ?? 1, upper: num('upper') ?? 1, warnLower: num('warnLower'), warnUpper: num('warnUpper') })
    case 'design_reference':
      return { type, key }
    case 'rated_at_load':
      return compact({ type, key, side: p.side === 'above' ? 'above' : 'below', loadField: typeof p.loadField === 'string' ? p.loadField : 'testLoad', warnSharePct: num('warnSharePct'), minLoadPct: num('minLoadPct') })
    case 'yes_no':
      return { type, expected: typeof p.expected === 'boolean' ? p.expected : true }
    case 'choice':
      return { type, pass: Array.isArray(p.pass) ? [...(p.pass as string[])] : [] }
    case 'ramp':
      return compact({ type, setpoint: num('setpoint') ?? 35, reachWithinS: num('reachWithinS') ?? 30, holdS: num('holdS'), floor: num('floor') })
  }
}

const MEASURED: readonly FieldKind[] = ['number', 'timer', 'time_series']

/** An empty but valid-looking definition for a brand new template. */
export function emptyDefinition(title = 'New checklist'): ChecklistDefinition {
  return {
    title,
    unitSystem: 'IP',
    sections: [{ id: 'section-1', title: 'New section', steps: [{ id: 'step-1', title: 'New step', fields: [{ id: 'field1', label: 'New reading', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } }] }] }],
  }
}

function uniqueId(taken: Set<string>, base: string, joiner: string): string {
  for (let n = 1; ; n++) {
    const id = `${base}${joiner}${n}`
    if (!taken.has(id)) return id
  }
}

function move<T>(list: T[], from: number, to: number): boolean {
  if (from < 0 || from >= list.length || to < 0 || to >= list.length || from === to) return false
  const [item] = list.splice(from, 1)
  list.splice(to, 0, item)
  return true
}

/**
 * The editor's working copy of a definition: structural edits (add, move, remove, with the selection kept on the
 * moved item), field kind/quantity/rule changes that keep the field consistent, and live validation by path.
 */
export function useTemplateWorkingCopy(
  initial: ChecklistDefinition,
  options: { validateDelayMs?: number; onValidated?: (json: string, issues: ValidationIssue[]) => void } = {},
) {
  const definition = ref(plainDefinition(initial)) as Ref<ChecklistDefinition>
  const selection = ref<EditorSelection>(initial.sections?.[0]?.steps?.length ? { kind: 'step', section: 0, step: 0 } : { kind: 'definition' })
  const issues = ref<ValidationIssue[]>([])
  const validating = ref(false)
  /** Issues the server reported that the shared schema did not (kept until the next edit). */
  const serverIssues = ref<ValidationIssue[]>([])

  const sections = () => definition.value.sections
  const stepsOf = (s: number) => sections()[s]?.steps ?? []
  const fieldsOf = (s: number, j: number) => stepsOf(s)[j]?.fields ?? []

  const allFieldIds = () => new Set(sections().flatMap((s) => (s.steps ?? []).flatMap((st) => (st.fields ?? []).map((f) => f.id))))
  const allStepIds = () => new Set(sections().flatMap((s) => (s.steps ?? []).map((st) => st.id)))
  const allSectionIds = () => new Set(sections().map((s) => s.id))

  function newField(kind: FieldKind = 'number'): ChecklistField {
    const field: ChecklistField = { id: uniqueId(allFieldIds(), 'reading', ''), label: 'New reading', kind, required: true }
    applyKind(field, kind)
    return field
  }
  function newStep(): ChecklistStep {
    return { id: uniqueId(allStepIds(), 'step', '-'), title: 'New step', fields: [newField()] }
  }

  // ----- sections -----
  function addSection(at = sections().length): number {
    const section: ChecklistSection = { id: uniqueId(allSectionIds(), 'section', '-'), title: 'New section', steps: [newStep()] }
    sections().splice(at, 0, section)
    selection.value = { kind: 'section', section: at }
    return at
  }
  function removeSection(s: number) {
    if (!sections()[s]) return
    sections().splice(s, 1)
    const sel = selection.value
    if (sel.kind !== 'definition' && sel.section >= s) {
      const next = Math.min(s, sections().length - 1)
      selection.value = next >= 0 ? { kind: 'section', section: next } : { kind: 'definition' }
    }
  }
  function moveSection(s: number, delta: number) {
    const to = s + delta
    if (!move(sections(), s, to)) return
    const sel = selection.value
    if (sel.kind === 'definition') return
    if (sel.section === s) selection.value = { ...sel, section: to }
    else if (sel.section === to) selection.value = { ...sel, section: s }
  }

  // ----- steps -----
  function addStep(s: number, at = stepsOf(s).length): number {
    const section = sections()[s]
    if (!section) return -1
    section.steps ??= []
    section.steps.splice(at, 0, newStep())
    selection.value = { kind: 'step', section: s, step: at }
    return at
  }
  function removeStep(s: number, j: number) {
    const steps = stepsOf(s)
    if (!steps[j]) return
    steps.splice(j, 1)
    const sel = selection.value
    if (sel.kind === 'step' && sel.section === s && sel.step >= j) {
      selection.value = steps.length ? { kind: 'step', section: s, step: Math.min(j, steps.length - 1) } : { kind: 'section', section: s }
    }
  }
  /** Moves a step up or down; past the first or last step of its section it crosses into the neighbouring section. */
  function moveStep(s: number, j: number, delta: -1 | 1) {
    const steps = stepsOf(s)
    const step = steps[j]
    if (!step) return
    const wasSelected = selection.value.kind === 'step' && selection.value.section === s && selection.value.step === j
    let target: { section: number; step: number }
    if (j + delta >= 0 && j + delta < steps.length) {
      move(steps, j, j + delta)
      target = { section: s, step: j + delta }
      const sel = selection.value
      if (!wasSelected && sel.kind === 'step' && sel.section === s && sel.step === j + delta) selection.value = { ...sel, step: j }
    } else {
      const t = s + delta
      const neighbour = sections()[t]
      if (!neighbour) return
      steps.splice(j, 1)
      neighbour.steps ??= []
      const at = delta < 0 ? neighbour.steps.length : 0
      neighbour.steps.splice(at, 0, step)
      target = { section: t, step: at }
      const sel = selection.value
      if (!wasSelected && sel.kind === 'step') {
        if (sel.section === s && sel.step > j) selection.value = { ...sel, step: sel.step - 1 }
        else if (sel.section === t && delta > 0) selection.value = { ...sel, step: sel.step + 1 }
      }
    }
    if (wasSelected) {
      const field = selection.value.kind === 'step' ? selection.value.field : undefined
      selection.value = field === undefined ? { kind: 'step', ...target } : { kind: 'step', ...target, field }
    }
  }

  // ----- fields -----
  function addField(s: number, j: number, kind: FieldKind = 'number', at = fieldsOf(s, j).length): number {
    const step = stepsOf(s)[j]
    if (!step) return -1
    step.fields ??= []
    step.fields.splice(at, 0, newField(kind))
    selection.value = { kind: 'step', section: s, step: j, field: at }
    return at
  }
  function duplicateField(s: number, j: number, k: number): number {
    const fields = fieldsOf(s, j)
    const source = fields[k]
    if (!source) return -1
    const copy = plainDefinition(source) as unknown as ChecklistField
    copy.id = uniqueId(allFieldIds(), source.id.replace(/\d+$/, '') || 'reading', '')
    copy.label = `${source.label} (copy)`
    fields.splice(k + 1, 0, copy)
    selection.value = { kind: 'step', section: s, step: j, field: k + 1 }
    return k + 1
  }
  function removeField(s: number, j: number, k: number) {
    const fields = fieldsOf(s, j)
    if (!fields[k]) return
    fields.splice(k, 1)
    const sel = selection.value
    if (sel.kind === 'step' && sel.section === s && sel.step === j && sel.field !== undefined && sel.field >= k) {
      selection.value = sel.field === k ? { kind: 'step', section: s, step: j } : { ...sel, field: sel.field - 1 }
    }
  }
  function moveField(s: number, j: number, k: number, delta: -1 | 1) {
    if (!move(fieldsOf(s, j), k, k + delta)) return
    const sel = selection.value
    if (sel.kind === 'step' && sel.section === s && sel.step === j && sel.field !== undefined) {
      if (sel.field === k) selection.value = { ...sel, field: k + delta }
      else if (sel.field === k + delta) selection.value = { ...sel, field: k }
    }
  }

  // ----- keeping a field consistent when its kind, quantity or rule type changes -----
  function applyKind(field: ChecklistField, kind: FieldKind) {
    field.kind = kind
    if (MEASURED.includes(kind)) {
      const quantity: QuantityKind = kind === 'timer' ? 'time' : (field.quantity ?? (kind === 'time_series' ? 'pressure_differential' : 'temperature'))
      if (field.quantity !== quantity || !isUnitOf(quantity, field.unit)) {
        field.quantity = quantity
        field.unit = displayUnit(quantity, definition.value?.unitSystem ?? 'IP')
      }
    } else {
      delete field.quantity
      delete field.unit
    }
    if (kind === 'choice') {
      if (!field.choices || field.choices.length < 2) field.choices = [{ value: 'ok', label: 'OK' }, { value: 'not_ok', label: 'Not OK' }]
    } else {
      delete field.choices
    }
    if (kind !== 'number') delete field.computed
    const allowed = RULES_FOR_KIND[kind]
    if (field.rule && !allowed.includes(field.rule.type)) delete field.rule
    if (!field.rule && (kind === 'yes_no' || kind === 'choice' || kind === 'time_series')) {
      field.rule = defaultRule(allowed[0])
      if (kind === 'choice' && field.rule.type === 'choice') field.rule.pass = [field.choices![0].value]
    }
  }
  function setFieldKind(field: ChecklistField, kind: FieldKind) {
    if ((FIELD_KINDS as readonly string[]).includes(kind)) applyKind(field, kind)
  }
  /** A new quantity brings the unit the template's unit system shows for it. */
  function setFieldQuantity(field: ChecklistField, quantity: QuantityKind) {
    field.quantity = quantity
    if (!isUnitOf(quantity, field.unit)) field.unit = displayUnit(quantity, definition.value.unitSystem ?? 'IP')
  }
  function setRuleType(field: ChecklistField, type: RuleType | null) {
    if (type === null) delete field.rule
    else field.rule = defaultRule(type, field.rule)
  }
  function setComputed(field: ChecklistField, on: boolean) {
    if (on) field.computed = { expression: field.computed?.expression ?? '' }
    else delete field.computed
  }

  // ----- reading what is selected -----
  const selectedSection = computed(() => (selection.value.kind === 'definition' ? undefined : sections()[selection.value.section]))
  const selectedStep = computed(() => (selection.value.kind === 'step' ? stepsOf(selection.value.section)[selection.value.step] : undefined))

  function select(next: EditorSelection) {
    selection.value = next
  }

  // ----- validation -----
  let sequence = 0
  async function validate(): Promise<ValidationIssue[]> {
    const mine = ++sequence
    validating.value = true
    const json = JSON.stringify(definition.value)
    const result = await validateChecklistDefinition(JSON.parse(json))
    if (mine === sequence) {
      issues.value = result.errors
      validating.value = false
      options.onValidated?.(json, result.errors)
    }
    return result.errors
  }

  const allIssues = computed(() => {
    const known = new Set(issues.value.map((i) => `${i.path}\u0000${i.message}`))
    return [...issues.value, ...serverIssues.value.filter((i) => !known.has(`${i.path}\u0000${i.message}`))]
  })
  /** The first message for exactly this path, for the form item that edits it. */
  function issueAt(path: string): string | undefined {
    const issue = allIssues.value.find((i) => i.path === path)
    return issue ? readableMessage(issue) : undefined
  }
  function issueCountUnder(prefix: string): number {
    return issuesUnder(allIssues.value, prefix).length
  }

  function replace(next: ChecklistDefinition) {
    definition.value = plainDefinition(next)
    serverIssues.value = []
    selection.value = definition.value.sections?.[0]?.steps?.length ? { kind: 'step', section: 0, step: 0 } : { kind: 'definition' }
  }

  let timer: ReturnType<typeof setTimeout> | undefined
  const delay = options.validateDelayMs ?? 200
  watch(
    definition,
    () => {
      serverIssues.value = []
      clearTimeout(timer)
      timer = setTimeout(() => void validate(), delay)
    },
    { deep: true },
  )

  return {
    definition,
    selection,
    selectedSection,
    selectedStep,
    issues,
    serverIssues,
    allIssues,
    validating,
    select,
    replace,
    validate,
    issueAt,
    issueCountUnder,
    addSection,
    removeSection,
    moveSection,
    addStep,
    removeStep,
    moveStep,
    addField,
    duplicateField,
    removeField,
    moveField,
    setFieldKind,
    setFieldQuantity,
    setRuleType,
    setComputed,
  }
}

export type TemplateWorkingCopy = ReturnType<typeof useTemplateWorkingCopy>
