import { array, boolean, lazy, mixed, object, string, ValidationError, type InferType, type TestContext } from 'yup'
import { EngineeringError } from '../engineering/errors'
import { DESIGN_SCOPE_NAME, EXPRESSION_FUNCTIONS, parseExpression } from '../rules/expression'
import { isUnitOf, QUANTITY_KINDS, UNIT_SYSTEMS, unitsOf, type QuantityKind, type UnitSystem } from '../units/quantities'
import { DESIGN_POINT_KEYS, DESIGN_POINT_QUANTITIES, finiteNumber, isDesignPointKey } from './design-point'

export const FIELD_KINDS = ['number', 'yes_no', 'choice', 'text', 'timer', 'time_series', 'photo'] as const
export type FieldKind = (typeof FIELD_KINDS)[number]

export const RULE_TYPES = ['range', 'nominal', 'nominal_pct', 'design', 'design_offset', 'design_reference', 'rated_at_load', 'yes_no', 'choice', 'ramp'] as const
export type RuleType = (typeof RULE_TYPES)[number]

/** Which rule types each field kind accepts. */
export const RULES_FOR_KIND: Readonly<Record<FieldKind, readonly RuleType[]>> = {
  number: ['range', 'nominal', 'nominal_pct', 'design', 'design_offset', 'design_reference', 'rated_at_load'],
  timer: ['range', 'nominal', 'nominal_pct', 'design', 'design_offset'],
  yes_no: ['yes_no'],
  choice: ['choice'],
  time_series: ['ramp'],
  text: [],
  photo: [],
}

const MEASURED_KINDS: readonly FieldKind[] = ['number', 'timer', 'time_series']

// Field ids are names in computed-field expressions, so they must be identifiers the parser reads as symbols.
const FIELD_ID = /^[A-Za-z][A-Za-z0-9_]{0,63}$/
const OTHER_ID = /^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$/
const RESERVED = new Set([
  DESIGN_SCOPE_NAME, ...Object.keys(EXPRESSION_FUNCTIONS),
  'to', 'in', 'and', 'or', 'not', 'xor', 'mod', 'end', 'true', 'false', 'null', 'undefined', 'NaN', 'Infinity',
])

const finite = finiteNumber
const nonNegative = () => finite().min(0, '${path} must not be negative')
const positive = () => finite().moreThan(0, '${path} must be greater than zero')
const ruleType = (t: RuleType) => string().required('${path} is required').oneOf([t])

type Issue = { path: string; message: string }

function report(ctx: TestContext, issues: Issue[]): true | ValidationError {
  if (issues.length === 0) return true
  return new ValidationError(issues.map((i) => ctx.createError({ path: i.path, message: i.message })))
}

function bandCheck(ctx: TestContext, r: Record<string, number | undefined>, names: { min: string; max: string; warnMin: string; warnMax: string }) {
  const p = ctx.path
  const issues: Issue[] = []
  const { min, max, warnMin, warnMax } = { min: r[names.min], max: r[names.max], warnMin: r[names.warnMin], warnMax: r[names.warnMax] }
  if ([min, max, warnMin, warnMax].every((v) => v === undefined)) issues.push({ path: p, message: `${p} needs at least one limit` })
  if (min !== undefined && max !== undefined && max < min) issues.push({ path: `${p}.${names.max}`, message: `${p}.${names.max} must not be below ${names.min}` })
  if (warnMin !== undefined && min !== undefined && warnMin < min) issues.push({ path: `${p}.${names.warnMin}`, message: `${p}.${names.warnMin} must lie inside the limits (not below ${names.min})` })
  if (warnMin !== undefined && max !== undefined && warnMin > max) issues.push({ path: `${p}.${names.warnMin}`, message: `${p}.${names.warnMin} must lie inside the limits (not above ${names.max})` })
  if (warnMax !== undefined && max !== undefined && warnMax > max) issues.push({ path: `${p}.${names.warnMax}`, message: `${p}.${names.warnMax} must lie inside the limits (not above ${names.max})` })
  if (warnMax !== undefined && min !== undefined && warnMax < min) issues.push({ path: `${p}.${names.warnMax}`, message: `${p}.${names.warnMax} must lie inside the limits (not below ${names.min})` })
  if (warnMin !== undefined && warnMax !== undefined && warnMax < warnMin) issues.push({ path: `${p}.${names.warnMax}`, message: `${p}.${names.warnMax} must not be below ${names.warnMin}` })
  return report(ctx, issues)
}

/** Fail below `min` or above `max`; marginal below `warnMin` or above `warnMax` (inside the limits). One-sided when a bound is left out. */
export const rangeRuleSchema = object({
  type: ruleType('range'),
  min: finite().optional(),
  max: finite().optional(),
  warnMin: finite().optional(),
  warnMax: finite().optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('band', function (r) {
    return bandCheck(this, r as unknown as Record<string, number | undefined>, { min: 'min', max: 'max', warnMin: 'warnMin', warnMax: 'warnMax' })
  })

/** `nominal ± tolerance` in the field's unit; marginal outside `± warnTolerance`. */
export const nominalRuleSchema = object({
  type: ruleType('nominal'),
  nominal: finite().required('${path} is required'),
  tolerance: positive().required('${path} is required'),
  warnTolerance: positive().optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('warn-inside', function (r) {
    if (r.warnTolerance === undefined || r.tolerance === undefined || r.warnTolerance <= r.tolerance) return true
    return this.createError({ path: `${this.path}.warnTolerance`, message: `${this.path}.warnTolerance must not exceed tolerance` })
  })

/** `nominal ± tolerancePct %` of the nominal; marginal outside `± warnTolerancePct %`. */
export const nominalPctRuleSchema = object({
  type: ruleType('nominal_pct'),
  nominal: finite().required('${path} is required'),
  tolerancePct: positive().required('${path} is required'),
  warnTolerancePct: positive().optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('warn-inside', function (r) {
    if (r.warnTolerancePct === undefined || r.tolerancePct === undefined || r.warnTolerancePct <= r.tolerancePct) return true
    return this.createError({ path: `${this.path}.warnTolerancePct`, message: `${this.path}.warnTolerancePct must not exceed tolerancePct` })
  })

const designKey = () =>
  string()
    .required('${path} is required')
    .test('design-key', '${path} "${value}" is not a design-point value', (k) => k === undefined || isDesignPointKey(k))

function designBandCheck(ctx: TestContext, r: Record<string, unknown>, lower: string, upper: string) {
  const get = (k: string) => r[k] as number | undefined
  const issues: Issue[] = []
  const p = ctx.path
  if ([lower, upper, `warn${cap(lower)}`, `warn${cap(upper)}`].every((k) => get(k) === undefined)) issues.push({ path: p, message: `${p} needs at least one limit` })
  for (const side of [lower, upper]) {
    const outer = get(side)
    const inner = get(`warn${cap(side)}`)
    if (outer !== undefined && inner !== undefined && inner > outer) {
      issues.push({ path: `${p}.warn${cap(side)}`, message: `${p}.warn${cap(side)} must lie inside the limits (not beyond ${side})` })
    }
  }
  return report(ctx, issues)
}
const cap = (s: string) => s[0].toUpperCase() + s.slice(1)

/** Limits as percent below and above the equipment's design value, e.g. flow within −10 %/+10 % of design. */
export const designRuleSchema = object({
  type: ruleType('design'),
  key: designKey(),
  lowerPct: nonNegative().max(100, '${path} must be at most 100').optional(),
  upperPct: nonNegative().optional(),
  warnLowerPct: nonNegative().max(100, '${path} must be at most 100').optional(),
  warnUpperPct: nonNegative().optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('band', function (r) {
    return designBandCheck(this, r, 'lowerPct', 'upperPct')
  })

/** Limits as offsets below and above the design value, in the field's unit (e.g. leaving water within 1 °F of design). */
export const designOffsetRuleSchema = object({
  type: ruleType('design_offset'),
  key: designKey(),
  lower: nonNegative().optional(),
  upper: nonNegative().optional(),
  warnLower: nonNegative().optional(),
  warnUpper: nonNegative().optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('band', function (r) {
    return designBandCheck(this, r, 'lower', 'upper')
  })

/**
 * No acceptance limit: the value is recorded with its deviation from the design value, for readings the building or
 * the tower sets rather than the machine (entering chilled water, condenser water).
 */
export const designReferenceRuleSchema = object({
  type: ruleType('design_reference'),
  key: designKey(),
}).exact('${path} has unknown keys: ${properties}')

/**
 * A rated quantity (capacity, kW/ton) judged against its design value with the AHRI 550/590 test tolerance at the
 * load measured in `loadField` (percent of design capacity): `side` below (capacity must not fall short) or above
 * (kW/ton must not exceed). Marginal beyond `warnSharePct` percent of the tolerance. With `onlyWhen`, judged only
 * when that choice field holds one of `values` (e.g. the machine was at full capacity), else recorded; below
 * `minLoadPct` recorded. The full-load range ΔT comes from the design entering and leaving chilled water.
 */
export const ratedAtLoadRuleSchema = object({
  type: ruleType('rated_at_load'),
  key: designKey(),
  side: string().required('${path} is required').oneOf(['below', 'above'], '${path} must be below or above'),
  loadField: string().required('${path} is required').matches(FIELD_ID, '${path} must be a field id'),
  warnSharePct: positive().max(100, '${path} must be at most 100').optional(),
  minLoadPct: positive().max(100, '${path} must be at most 100').optional(),
  onlyWhen: object({
    field: string().required('${path} is required').matches(FIELD_ID, '${path} must be a field id'),
    values: array(string().required()).required('${path} is required').min(1, '${path} needs at least one value'),
  })
    .exact('${path} has unknown keys: ${properties}')
    .default(undefined)
    .optional(),
}).exact('${path} has unknown keys: ${properties}')

/** A yes/no answer that must equal `expected`. */
export const yesNoRuleSchema = object({
  type: ruleType('yes_no'),
  expected: boolean().required('${path} is required'),
}).exact('${path} has unknown keys: ${properties}')

/** Choices that pass, choices that are marginal; every other choice fails. */
export const choiceRuleSchema = object({
  type: ruleType('choice'),
  pass: array(string().required()).min(1, '${path} needs at least one choice').required('${path} is required'),
  marginal: array(string().required()).optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('disjoint', function (r) {
    const both = (r.marginal ?? []).filter((c) => r.pass?.includes(c))
    return both.length === 0 || this.createError({ path: `${this.path}.marginal`, message: `${this.path}.marginal repeats passing choices: ${both.join(', ')}` })
  })

/**
 * A rise such as oil pressure after the pump starts: reach `setpoint` within `reachWithinS` seconds (and not before
 * `reachNotBeforeS`), stay at or above it for `holdS` seconds before the drive starts, never fall below `floor` after.
 * With `setpointKey` the setpoint is the equipment's own design value (the machine's oil pressure setpoint) and the
 * floors are percentages below it (`floorBelowPct`, `warnFloorBelowPct`), in whatever unit the project uses.
 */
export const rampRuleSchema = object({
  type: ruleType('ramp'),
  setpoint: finite().optional(),
  setpointKey: string().optional().test('design-key', '${path} "${value}" is not a design-point value', (k) => k === undefined || isDesignPointKey(k)),
  floorBelowPct: nonNegative().max(100, '${path} must be at most 100').optional(),
  warnFloorBelowPct: nonNegative().max(100, '${path} must be at most 100').optional(),
  reachWithinS: positive().required('${path} is required'),
  reachNotBeforeS: nonNegative().optional(),
  holdS: nonNegative().optional(),
  floor: finite().optional(),
  warnFloor: finite().optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('ramp-order', function (r) {
    const p = this.path
    const issues: Issue[] = []
    if (r.setpoint === undefined && r.setpointKey === undefined) issues.push({ path: `${p}.setpoint`, message: `${p}.setpoint is required (or setpointKey, to take it from the design point)` })
    if (r.setpointKey !== undefined && (r.setpoint !== undefined || r.floor !== undefined || r.warnFloor !== undefined)) issues.push({ path: `${p}.setpointKey`, message: `${p}.setpointKey takes the setpoint from the design point: give floorBelowPct and warnFloorBelowPct instead of setpoint, floor and warnFloor` })
    if (r.setpointKey === undefined && (r.floorBelowPct !== undefined || r.warnFloorBelowPct !== undefined)) issues.push({ path: `${p}.floorBelowPct`, message: `${p}.floorBelowPct and warnFloorBelowPct need setpointKey` })
    if (r.floorBelowPct !== undefined && r.warnFloorBelowPct !== undefined && r.warnFloorBelowPct > r.floorBelowPct) issues.push({ path: `${p}.warnFloorBelowPct`, message: `${p}.warnFloorBelowPct must lie inside the limits (not below the floor)` })
    if (r.reachNotBeforeS !== undefined && r.reachWithinS !== undefined && r.reachNotBeforeS > r.reachWithinS) issues.push({ path: `${p}.reachNotBeforeS`, message: `${p}.reachNotBeforeS must not exceed reachWithinS` })
    if (r.floor !== undefined && r.setpoint !== undefined && r.floor > r.setpoint) issues.push({ path: `${p}.floor`, message: `${p}.floor must not be above the setpoint` })
    if (r.warnFloor !== undefined && r.setpoint !== undefined && r.warnFloor > r.setpoint) issues.push({ path: `${p}.warnFloor`, message: `${p}.warnFloor must not be above the setpoint` })
    if (r.warnFloor !== undefined && r.floor !== undefined && r.warnFloor < r.floor) issues.push({ path: `${p}.warnFloor`, message: `${p}.warnFloor must lie inside the limits (not below floor)` })
    return report(this, issues)
  })

export type RangeRule = InferType<typeof rangeRuleSchema> & { type: 'range' }
export type NominalRule = InferType<typeof nominalRuleSchema> & { type: 'nominal' }
export type NominalPctRule = InferType<typeof nominalPctRuleSchema> & { type: 'nominal_pct' }
export type DesignRule = InferType<typeof designRuleSchema> & { type: 'design' }
export type DesignOffsetRule = InferType<typeof designOffsetRuleSchema> & { type: 'design_offset' }
export type DesignReferenceRule = InferType<typeof designReferenceRuleSchema> & { type: 'design_reference' }
export type RatedAtLoadRule = InferType<typeof ratedAtLoadRuleSchema> & { type: 'rated_at_load'; side: 'below' | 'above' }
export type YesNoRule = InferType<typeof yesNoRuleSchema> & { type: 'yes_no' }
export type ChoiceRule = InferType<typeof choiceRuleSchema> & { type: 'choice' }
export type RampRule = InferType<typeof rampRuleSchema> & { type: 'ramp' }
export type FieldRule = RangeRule | NominalRule | NominalPctRule | DesignRule | DesignOffsetRule | DesignReferenceRule | RatedAtLoadRule | YesNoRule | ChoiceRule | RampRule

const RULE_SCHEMAS = {
  range: rangeRuleSchema,
  nominal: nominalRuleSchema,
  nominal_pct: nominalPctRuleSchema,
  design: designRuleSchema,
  design_offset: designOffsetRuleSchema,
  design_reference: designReferenceRuleSchema,
  rated_at_load: ratedAtLoadRuleSchema,
  yes_no: yesNoRuleSchema,
  choice: choiceRuleSchema,
  ramp: rampRuleSchema,
} as const

const unknownRuleSchema = object({
  type: string().required('${path} is required').oneOf([...RULE_TYPES], `\${path} must be one of ${RULE_TYPES.join(', ')}`),
})

/** Any acceptance rule, chosen by its `type`. */
export const fieldRuleSchema = lazy((rule: unknown) => {
  if (rule === undefined) return mixed().optional()
  const type = (rule as { type?: unknown } | null)?.type
  return typeof type === 'string' && Object.hasOwn(RULE_SCHEMAS, type) ? RULE_SCHEMAS[type as RuleType] : unknownRuleSchema
})

const text = () => string().trim()

export const fieldSchema = object({
  id: string()
    .required('${path} is required')
    .matches(FIELD_ID, '${path} must start with a letter and use only letters, digits and _')
    .test('reserved', '${path} "${value}" is a reserved word in expressions', (v) => v === undefined || !RESERVED.has(v)),
  label: text().required('${path} is required'),
  kind: mixed<FieldKind>()
    .required('${path} is required')
    .oneOf([...FIELD_KINDS], `\${path} must be one of ${FIELD_KINDS.join(', ')}`),
  quantity: mixed<QuantityKind>()
    .oneOf([...QUANTITY_KINDS], `\${path} must be one of ${QUANTITY_KINDS.join(', ')}`)
    .optional(),
  unit: string().optional(),
  help: text().optional(),
  cautions: array(text().required()).optional(),
  required: boolean().default(true),
  choices: array(object({ value: string().required('${path} is required'), label: text().required('${path} is required') })).optional(),
  rule: fieldRuleSchema,
  /** This reading is the site's barometric pressure on the day: the run's gauge pressures are read against it. */
  siteBarometric: boolean().optional(),
  /**
   * A timer whose value is the drive start marked in that time-series capture (seconds from its start) when the
   * capture has one; the timer's own entry is the fallback. One timing, one place.
   */
  fromDriveStart: string().optional(),
  computed: object({ expression: string().required('${path} is required') })
    .exact('${path} has unknown keys: ${properties}')
    .default(undefined)
    .optional(),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('field-consistency', function (f: unknown) {
    return report(this, fieldIssues(this.path, f as FieldLike))
  })

// Hand-written shapes for the schema's own tests: the inferred types depend on the schemas being defined.
interface FieldLike {
  id: string
  label: string
  kind: FieldKind
  quantity?: QuantityKind
  unit?: string
  required?: boolean
  choices?: Array<{ value: string; label: string }>
  computed?: { expression: string }
  rule?: FieldRule
  siteBarometric?: boolean
  fromDriveStart?: string
}
interface DefinitionLike {
  sections: Array<{ id: string; steps: Array<{ id: string; fields: FieldLike[] }> }>
}

function fieldIssues(p: string, f: FieldLike): Issue[] {
  const issues: Issue[] = []
  if (!f || !(FIELD_KINDS as readonly string[]).includes(f.kind)) return issues
  const measured = MEASURED_KINDS.includes(f.kind)
  if (measured) {
    if (!f.quantity) issues.push({ path: `${p}.quantity`, message: `${p}.quantity is required for a ${f.kind} field` })
    else if (f.kind === 'timer' && f.quantity !== 'time') issues.push({ path: `${p}.quantity`, message: `${p}.quantity must be time for a timer field` })
    if (!f.unit) issues.push({ path: `${p}.unit`, message: `${p}.unit is required for a ${f.kind} field` })
    else if (f.quantity && (QUANTITY_KINDS as readonly string[]).includes(f.quantity) && !isUnitOf(f.quantity, f.unit)) {
      issues.push({ path: `${p}.unit`, message: `${p}.unit "${f.unit}" does not measure ${f.quantity} (use ${unitsOf(f.quantity).map((u) => u.id).join(', ')})` })
    }
  } else {
    if (f.quantity !== undefined) issues.push({ path: `${p}.quantity`, message: `${p}.quantity is only for measured fields` })
    if (f.unit !== undefined) issues.push({ path: `${p}.unit`, message: `${p}.unit is only for measured fields` })
  }
  if (f.kind === 'choice') {
    const values = (f.choices ?? []).map((c) => c?.value)
    if (values.length < 2) issues.push({ path: `${p}.choices`, message: `${p}.choices needs at least two choices` })
    const dup = values.find((v, i) => values.indexOf(v) !== i)
    if (dup !== undefined) issues.push({ path: `${p}.choices`, message: `${p}.choices repeats "${dup}"` })
  } else if (f.choices !== undefined) {
    issues.push({ path: `${p}.choices`, message: `${p}.choices is only for choice fields` })
  }
  if (f.computed !== undefined) {
    if (f.kind !== 'number') issues.push({ path: `${p}.computed`, message: `${p}.computed is only for number fields` })
    if (typeof f.computed?.expression === 'string') {
      try {
        parseExpression(f.computed.expression)
      } catch (err) {
        if (!(err instanceof EngineeringError)) throw err
        issues.push({ path: `${p}.computed.expression`, message: err.message })
      }
    }
  }
  if (f.siteBarometric && (f.kind !== 'number' || f.quantity !== 'pressure_absolute' || f.computed)) {
    issues.push({ path: `${p}.siteBarometric`, message: `${p}.siteBarometric is only for an entered absolute-pressure number field` })
  }
  const rule = f.rule as FieldRule | undefined
  if (rule && typeof rule === 'object' && (RULE_TYPES as readonly string[]).includes(rule.type)) {
    if (!RULES_FOR_KIND[f.kind].includes(rule.type)) {
      const allowed = RULES_FOR_KIND[f.kind]
      issues.push({ path: `${p}.rule.type`, message: `${p}.rule.type ${rule.type} does not apply to a ${f.kind} field${allowed.length ? ` (use ${allowed.join(', ')})` : ''}` })
    } else if (f.quantity === 'temperature' && (rule.type === 'nominal_pct' || rule.type === 'design')) {
      issues.push({ path: `${p}.rule.type`, message: `${p}.rule.type ${rule.type}: a percent of a temperature scale means nothing; use nominal or design_offset` })
    }
    if ((rule.type === 'design' || rule.type === 'design_offset' || rule.type === 'design_reference' || rule.type === 'rated_at_load') && isDesignPointKey(rule.key) && f.quantity && DESIGN_POINT_QUANTITIES[rule.key] !== f.quantity) {
      issues.push({ path: `${p}.rule.key`, message: `${p}.rule.key ${rule.key} is a ${DESIGN_POINT_QUANTITIES[rule.key]} value but the field measures ${f.quantity}` })
    }
    if (rule.type === 'choice' && f.choices) {
      const values = new Set(f.choices.map((c) => c?.value))
      ;(['pass', 'marginal'] as const).forEach((list) =>
        (rule[list] ?? []).forEach((c, i) => {
          if (!values.has(c)) issues.push({ path: `${p}.rule.${list}[${i}]`, message: `${p}.rule.${list}[${i}] "${c}" is not one of the field's choices` })
        }),
      )
    }
  }
  return issues
}

export const stepSchema = object({
  id: string().required('${path} is required').matches(OTHER_ID, '${path} must use only letters, digits, _, . and -'),
  title: text().required('${path} is required'),
  help: text().optional(),
  /**
   * A pre-work safety step (permits, lockout, arc flash): its items cannot be set aside with a disposition, and a "No"
   * stops the run, with `stop` said to the technician, instead of becoming a fail.
   */
  safety: boolean().optional(),
  stop: text().optional(),
  cautions: array(text().required()).optional(),
  fields: array(fieldSchema).required('${path} is required').min(1, '${path} needs at least one field'),
}).exact('${path} has unknown keys: ${properties}')

export const sectionSchema = object({
  id: string().required('${path} is required').matches(OTHER_ID, '${path} must use only letters, digits, _, . and -'),
  title: text().required('${path} is required'),
  steps: array(stepSchema).required('${path} is required').min(1, '${path} needs at least one step'),
}).exact('${path} has unknown keys: ${properties}')

/** A checklist template version's definition: sections → steps → fields, with cross-reference checks. */
export const checklistDefinitionSchema = object({
  title: text().required('${path} is required'),
  /** The system the template is written in: design values inside expressions are given in its units. */
  unitSystem: mixed<UnitSystem>()
    .oneOf([...UNIT_SYSTEMS], `\${path} must be one of ${UNIT_SYSTEMS.join(', ')}`)
    .default('IP'),
  sections: array(sectionSchema).required('${path} is required').min(1, '${path} needs at least one section'),
})
  .exact('${path} has unknown keys: ${properties}')
  .test('cross-references', function (def: unknown) {
    return report(this, crossReferenceIssues(def as DefinitionLike))
  })

export type ChecklistField = Omit<InferType<typeof fieldSchema>, 'rule'> & { rule?: FieldRule }
export type ChecklistStep = Omit<InferType<typeof stepSchema>, 'fields'> & { fields: ChecklistField[] }
export type ChecklistSection = Omit<InferType<typeof sectionSchema>, 'steps'> & { steps: ChecklistStep[] }
export type ChecklistDefinition = Omit<InferType<typeof checklistDefinitionSchema>, 'sections'> & { sections: ChecklistSection[] }

/** Every field of a definition with its schema path, in order. */
export function listFields<F extends FieldLike = ChecklistField>(def: { sections: Array<{ steps: Array<{ fields: F[] }> }> }): Array<{ field: F; path: string }> {
  const out: Array<{ field: F; path: string }> = []
  ;(Array.isArray(def?.sections) ? def.sections : []).forEach((section, i) =>
    (Array.isArray(section?.steps) ? section.steps : []).forEach((step, j) =>
      (Array.isArray(step?.fields) ? step.fields : []).forEach((field, k) => {
        if (field && typeof field === 'object') out.push({ field, path: `sections[${i}].steps[${j}].fields[${k}]` })
      }),
    ),
  )
  return out
}

function crossReferenceIssues(def: DefinitionLike): Issue[] {
  const issues: Issue[] = []
  const seen = new Map<string, string>()
  const note = (id: unknown, path: string, what: string) => {
    if (typeof id !== 'string') return
    const key = `${what}:${id}`
    const first = seen.get(key)
    if (first) issues.push({ path, message: `${path} duplicate ${what} id "${id}" (first used at ${first})` })
    else seen.set(key, path)
  }
  ;(Array.isArray(def?.sections) ? def.sections : []).forEach((section, i) => {
    note(section?.id, `sections[${i}].id`, 'section')
    ;(Array.isArray(section?.steps) ? section.steps : []).forEach((step, j) => note(step?.id, `sections[${i}].steps[${j}].id`, 'step'))
  })
  const fields = listFields(def)
  fields.forEach(({ field, path }) => note(field.id, `${path}.id`, 'field'))

  const byId = new Map(fields.map((f) => [f.field.id, f]))
  for (const { field, path } of fields) {
    const rule = field.rule
    if (rule?.type !== 'rated_at_load') continue
    const load = byId.get(rule.loadField)
    if (!load || load.field.kind !== 'number' || load.field.id === field.id) issues.push({ path: `${path}.rule.loadField`, message: `${path}.rule.loadField "${rule.loadField}" must be another number field (the load in percent)` })
    else if (load.field.quantity !== 'percent') issues.push({ path: `${path}.rule.loadField`, message: `${path}.rule.loadField "${rule.loadField}" must measure percent` })
    if (rule.onlyWhen) {
      const cond = byId.get(rule.onlyWhen.field)
      if (!cond || cond.field.kind !== 'choice') issues.push({ path: `${path}.rule.onlyWhen.field`, message: `${path}.rule.onlyWhen.field "${rule.onlyWhen.field}" must be a choice field` })
      else {
        const values = new Set((cond.field.choices ?? []).map((c) => c.value))
        rule.onlyWhen.values.forEach((v, i) => {
          if (!values.has(v)) issues.push({ path: `${path}.rule.onlyWhen.values[${i}]`, message: `${path}.rule.onlyWhen.values[${i}] "${v}" is not a choice of ${rule.onlyWhen!.field}` })
        })
      }
    }
  }
  for (const { field, path } of fields) {
    if (field.fromDriveStart === undefined) continue
    const source = byId.get(field.fromDriveStart)
    if (field.kind !== 'timer') issues.push({ path: `${path}.fromDriveStart`, message: `${path}.fromDriveStart is only for timer fields` })
    else if (!source || source.field.kind !== 'time_series') issues.push({ path: `${path}.fromDriveStart`, message: `${path}.fromDriveStart "${field.fromDriveStart}" must be a time-series field` })
  }
  const dependsOn = new Map<string, string[]>()
  for (const { field, path } of fields) {
    const expression = field.computed?.expression
    if (typeof expression !== 'string') continue
    let parsed
    try {
      parsed = parseExpression(expression)
    } catch {
      continue // reported by the field's own test
    }
    const at = `${path}.computed.expression`
    for (const ref of parsed.fieldRefs) {
      const target = byId.get(ref)
      if (!target) issues.push({ path: at, message: `${at} refers to unknown field "${ref}"` })
      else if (target.field.kind !== 'number' && target.field.kind !== 'timer') issues.push({ path: at, message: `${at} refers to "${ref}", a ${target.field.kind} field, but only number and timer fields have values to compute with` })
      else if (ref === field.id) issues.push({ path: at, message: `${at} refers to its own field` })
    }
    for (const key of parsed.designRefs) {
      if (key !== 'refrigerant' && !isDesignPointKey(key)) issues.push({ path: at, message: `${at} refers to unknown design value "design.${key}" (have: refrigerant, ${DESIGN_POINT_KEYS.join(', ')})` })
    }
    dependsOn.set(field.id, parsed.fieldRefs.filter((r) => r !== field.id && byId.has(r)))
  }
  // A cycle of computed fields can never be evaluated: report the first field found on one.
  const state = new Map<string, 'visiting' | 'done'>()
  const visit = (id: string, trail: string[]): string[] | null => {
    if (state.get(id) === 'done') return null
    if (state.get(id) === 'visiting') return [...trail.slice(trail.indexOf(id)), id]
    state.set(id, 'visiting')
    for (const next of dependsOn.get(id) ?? []) {
      const cycle = visit(next, [...trail, id])
      if (cycle) return cycle
    }
    state.set(id, 'done')
    return null
  }
  for (const id of dependsOn.keys()) {
    const cycle = visit(id, [])
    if (cycle) {
      const at = `${byId.get(cycle[0])!.path}.computed.expression`
      issues.push({ path: at, message: `${at} is part of a circular computation: ${cycle.join(' → ')}` })
      break
    }
  }
  return issues
}

export interface ChecklistValidation {
  valid: boolean
  value?: ChecklistDefinition
  errors: Issue[]
}

/** The definition checked against the schema and its cross-references, every problem reported with its path. */
export async function validateChecklistDefinition(input: unknown): Promise<ChecklistValidation> {
  try {
    const value = (await checklistDefinitionSchema.validate(input, { abortEarly: false })) as ChecklistDefinition
    return { valid: true, value, errors: [] }
  } catch (err) {
    if (!ValidationError.isError(err)) throw err
    const inner = err.inner.length ? err.inner : [err]
    return { valid: false, errors: inner.map((e) => ({ path: e.path ?? '', message: e.message })) }
  }
}
