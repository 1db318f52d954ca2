import { requireBarometricKpa } from '../engineering/atmosphere'
import { ahriTolerancePct } from '../engineering/efficiency'
import { EngineeringError, type EngineeringErrorCode } from '../engineering/errors'
import type { ChecklistDefinition, ChecklistField, FieldRule, RampRule, RatedAtLoadRule } from '../schemas/checklist'
import { DESIGN_POINT_QUANTITIES, isDesignPointKey, type AnyDesignPoint, type DesignPointKey } from '../schemas/design-point'
import type { FieldEntry, SeriesEntry } from '../schemas/reading'
import { distinguishingDecimals, enteredDecimals, formatNumber, signedText } from '../units/format'
import {
  canonicalUnit,
  convert,
  convertDifference,
  displayUnit,
  isReciprocalUnit,
  isUnitOf,
  toCanonical,
  unitLabel,
  unitSpec,
  type QuantityKind,
  type UnitSystem,
} from '../units/quantities'
import { parseExpression } from './expression'
import { deviationText } from '../format/deviation'
import { problemInProjectUnits } from './problem-units'
import { judgeRamp, type RampJudgement } from './series'
import { classify, type LimitSet, type Verdict } from './verdict'

export interface EvaluationContext {
  /** Entries of the other fields of the run, by field id (needed by computed fields). */
  readings?: Readonly<Record<string, FieldEntry | null | undefined>>
  /** The equipment's design point, of any kind (needed by design-relative rules and `design.*` in expressions). */
  designPoint?: AnyDesignPoint | null
  /** The project's unit system: messages and display values use it. */
  unitSystem: UnitSystem
  /** The checklist the field belongs to (needed by computed fields to find the fields they read). */
  definition?: ChecklistDefinition
  /**
   * The site's barometric pressure, kPa (the project's setting): gauge pressures are read against it. A reading of the
   * run's `siteBarometric` field overrides it; without either, the standard sea-level atmosphere.
   */
  siteBarometricKpa?: number | null
}

export interface LimitsUsed {
  /** Limits in the project's display unit. */
  display: LimitSet & { unit: string }
  /** The same limits in canonical SI. */
  canonical: LimitSet & { unit: string }
  /** Where the limits came from, in words ("design 1200 gpm, −10 % to +10 %"). */
  basis?: string
}

export interface FieldEvaluation {
  fieldId: string
  verdict: Verdict
  /** Plain English in the project's unit system: "Oil pressure 18 psid is below the minimum 25 psid". */
  message: string
  required: boolean
  computed: boolean
  /** The value in canonical SI, for storage; null for non-numeric fields and when there is no value. */
  canonical: { value: number; unit: string } | null
  /** The value in the project's display unit, rounded text included. */
  display: { value: number; unit: string; text: string } | null
  /** The answer of a yes/no, choice, text or photo field. */
  answer?: boolean | string | string[]
  limits: LimitsUsed | null
  /** Time-series judgement, in the display unit. */
  series?: RampJudgement & { unit: string }
  /** Why a value could not be judged (missing design value, a calculation that refused its inputs). */
  problem?: { code: EngineeringErrorCode; message: string }
  /** Set when a timer's value was taken from a capture's drive start rather than its own entry: the capture's label. */
  takenFrom?: string
}

interface ResolvedRule {
  limits: LimitSet
  basis?: string
  /** Set when the rule says this value is recorded, not judged, and why ("at 62 % load: …"). */
  notJudged?: string
}

const fieldIndexCache = new WeakMap<ChecklistDefinition, Map<string, ChecklistField>>()

function fieldIndex(definition: ChecklistDefinition): Map<string, ChecklistField> {
  let index = fieldIndexCache.get(definition)
  if (!index) {
    index = new Map()
    for (const section of definition.sections) for (const step of section.steps) for (const f of step.fields) index.set(f.id, f)
    fieldIndexCache.set(definition, index)
  }
  return index
}

const siteFieldCache = new WeakMap<ChecklistDefinition, ChecklistField | null>()

/** The definition's field that records the site's barometric pressure on the day, if it has one (looked up once). */
function siteBarometricField(definition: ChecklistDefinition): ChecklistField | null {
  let field = siteFieldCache.get(definition)
  if (field === undefined) {
    field = [...fieldIndex(definition).values()].find((f) => f.siteBarometric) ?? null
    siteFieldCache.set(definition, field)
  }
  return field
}

function quantityOf(field: ChecklistField): { kind: QuantityKind; unit: string } {
  if (!field.quantity || !field.unit || !isUnitOf(field.quantity, field.unit)) {
    throw new EngineeringError('INVALID_ENTRY', `Field ${field.id} has no valid quantity and unit`, { fieldId: field.id })
  }
  return { kind: field.quantity, unit: field.unit }
}

/** A design-point value by key, whichever kind of equipment the design point belongs to. */
function designQuantity(context: EvaluationContext, key: DesignPointKey): { value: number; unit: string } | undefined {
  return context.designPoint?.[key]
}

function designValue(context: EvaluationContext, key: DesignPointKey, unit: string, kind: QuantityKind): number {
  const q = designQuantity(context, key)
  if (!q) throw new EngineeringError('MISSING_DESIGN_VALUE', `The equipment's design point has no ${humanKey(key)}`, { key })
  return convert(q.value, q.unit, unit, kind)
}

function humanKey(key: string): string {
  return key.replace(/([A-Z])/g, ' $1').toLowerCase().replace('kw per ton', 'kW/ton')
}

function fmtIn(value: number, unit: string, kind: QuantityKind, extra = 0): string {
  const spec = unitSpec(kind, unit)
  return `${formatNumber(value, spec.decimals + extra)} ${spec.label}`
}


/** Limits of a numeric rule in the field's unit, with a description of their origin in the display unit. */
function resolveRule(rule: FieldRule, field: ChecklistField, context: EvaluationContext, shown: string): ResolvedRule {
  const { kind, unit } = quantityOf(field)
  const abs = (v: number) => fmtIn(convert(v, unit, shown, kind), shown, kind)
  const diff = (v: number) => fmtIn(convertDifference(v, unit, shown, kind), shown, kind)
  switch (rule.type) {
    case 'range':
      return { limits: { min: rule.min, max: rule.max, warnMin: rule.warnMin, warnMax: rule.warnMax } }
    case 'nominal': {
      const n = rule.nominal
      const w = rule.warnTolerance
      return {
        limits: { min: n - rule.tolerance, max: n + rule.tolerance, warnMin: w === undefined ? undefined : n - w, warnMax: w === undefined ? undefined : n + w },
        basis: `nominal ${abs(n)} ± ${diff(rule.tolerance)}`,
      }
    }
    case 'nominal_pct': {
      const n = rule.nominal
      const t = (Math.abs(n) * rule.tolerancePct) / 100
      const w = rule.warnTolerancePct === undefined ? undefined : (Math.abs(n) * rule.warnTolerancePct) / 100
      return {
        limits: { min: n - t, max: n + t, warnMin: w === undefined ? undefined : n - w, warnMax: w === undefined ? undefined : n + w },
        basis: `nominal ${abs(n)} ± ${formatNumber(rule.tolerancePct, 1)} %`,
      }
    }
    case 'design': {
      const d = designValue(context, rule.key as DesignPointKey, unit, kind)
      const at = (pct: number | undefined, sign: -1 | 1) => (pct === undefined ? undefined : d + (sign * Math.abs(d) * pct) / 100)
      const parts = [rule.lowerPct === undefined ? null : signedText(-rule.lowerPct, `${formatNumber(rule.lowerPct, 1)} %`), rule.upperPct === undefined ? null : signedText(rule.upperPct, `${formatNumber(rule.upperPct, 1)} %`)]
      return {
        limits: { min: at(rule.lowerPct, -1), max: at(rule.upperPct, 1), warnMin: at(rule.warnLowerPct, -1), warnMax: at(rule.warnUpperPct, 1) },
        basis: `design ${abs(d)}${describeSides(parts)}`,
      }
    }
    case 'design_offset': {
      const d = designValue(context, rule.key as DesignPointKey, unit, kind)
      const at = (offset: number | undefined, sign: -1 | 1) => (offset === undefined ? undefined : d + sign * offset)
      const parts = [rule.lower === undefined ? null : signedText(-rule.lower, diff(rule.lower)), rule.upper === undefined ? null : signedText(rule.upper, diff(rule.upper))]
      return {
        limits: { min: at(rule.lower, -1), max: at(rule.upper, 1), warnMin: at(rule.warnLower, -1), warnMax: at(rule.warnUpper, 1) },
        basis: `design ${abs(d)}${describeSides(parts)}`,
      }
    }
    case 'design_reference': {
      const d = designValue(context, rule.key as DesignPointKey, unit, kind)
      return { limits: {}, basis: `design ${abs(d)}`, notJudged: '' }
    }
    case 'rated_at_load':
      return resolveRatedAtLoad(rule, field, context, shown)
    default:
      throw new EngineeringError('INVALID_ENTRY', `Rule ${rule.type} does not apply to a ${field.kind} field`, { fieldId: field.id })
  }
}

/**
 * A rated quantity at the measured load: the AHRI 550/590 tolerance at that load (ahriTolerancePct, the design range
 * from the design entering and leaving chilled water) applied below or above the design value; recorded instead when
 * the test conditions say the value cannot be judged (docs/REFERENCES.md §Test conditions and rating tolerances).
 */
function resolveRatedAtLoad(rule: RatedAtLoadRule, field: ChecklistField, context: EvaluationContext, shown: string): ResolvedRule {
  const { kind, unit } = quantityOf(field)
  const abs = (v: number) => fmtIn(convert(v, unit, shown, kind), shown, kind)
  const d = designValue(context, rule.key as DesignPointKey, unit, kind)
  const index = context.definition ? fieldIndex(context.definition) : new Map<string, ChecklistField>()
  if (rule.onlyWhen) {
    const condition = index.get(rule.onlyWhen.field)
    const answer = (context.readings?.[rule.onlyWhen.field] as { value?: unknown } | null | undefined)?.value
    if (answer === undefined || answer === null || answer === '') {
      throw new EngineeringError('MISSING_CONTEXT', `it needs ${condition?.label.toLowerCase() ?? rule.onlyWhen.field} in the test conditions`, { field: rule.onlyWhen.field })
    }
    if (!rule.onlyWhen.values.includes(String(answer))) {
      const words = condition?.choices?.find((c) => c.value === answer)?.label ?? String(answer)
      return { limits: {}, basis: `design ${abs(d)}`, notJudged: `not judged: ${lowerFirst(words)}` }
    }
  }
  const loadField = index.get(rule.loadField)
  if (!loadField) throw new EngineeringError('MISSING_CONTEXT', `the load field ${rule.loadField} is not in the checklist`, { field: rule.loadField })
  const load = loadField.computed ? computeValue(loadField, context, []) : (() => {
    const entry = context.readings?.[rule.loadField]
    return isEmpty(entry) ? { missing: [loadField.label] } : { value: numberEntry(loadField, entry as FieldEntry).value }
  })()
  if ('missing' in load) throw new EngineeringError('MISSING_CONTEXT', `it needs ${joinLabels(load.missing)}`, { field: rule.loadField })
  if ('error' in load) throw load.error
  const loadPct = load.value
  const loadText = `${formatNumber(loadPct, 0)} % load`
  if (rule.minLoadPct !== undefined && loadPct < rule.minLoadPct) {
    return { limits: {}, basis: `design ${abs(d)}`, notJudged: `not judged at ${loadText}: below ${formatNumber(rule.minLoadPct, 0)} % compare it with the manufacturer's part-load rating` }
  }
  const entering = designValue(context, 'evaporatorEnteringWaterTemp', 'degF', 'temperature')
  const leaving = designValue(context, 'evaporatorLeavingWaterTemp', 'degF', 'temperature')
  const tolerance = ahriTolerancePct(Math.min(Math.max(loadPct, 1), 100), entering - leaving)
  const warn = (tolerance * (rule.warnSharePct ?? 50)) / 100
  const sign = rule.side === 'below' ? -1 : 1
  const at = (pct: number) => d + (sign * Math.abs(d) * pct) / 100
  const limits: LimitSet = rule.side === 'below' ? { min: at(tolerance), warnMin: at(warn) } : { max: at(tolerance), warnMax: at(warn) }
  const ahri = `the AHRI 550/590 tolerance at ${loadText}`
  return {
    limits,
    basis: isReciprocalUnit(kind, shown)
      ? `design ${abs(d)}, not below design ÷ ${formatNumber(1 + tolerance / 100, 3)}: ${ahri} is ${formatNumber(tolerance, 1)} % on ${unitLabel(kind, unit)}`
      : `design ${abs(d)}, ${sign < 0 ? '−' : '+'}${formatNumber(tolerance, 1)} %: ${ahri}`,
  }
}

const lowerFirst = (s: string) => (s ? s[0].toLowerCase() + s.slice(1) : s)

function describeSides(parts: Array<string | null>): string {
  const [low, high] = parts
  if (low && high) return `, ${low} to ${high}`
  if (low) return `, ${low}`
  if (high) return `, ${high}`
  return ''
}

const SWAPPED = { min: 'max', max: 'min', warnMin: 'warnMax', warnMax: 'warnMin' } as const

function swapSides(limits: LimitSet): LimitSet {
  const out: LimitSet = {}
  for (const k of ['min', 'max', 'warnMin', 'warnMax'] as const) if (limits[k] !== undefined) out[SWAPPED[k]] = limits[k]
  return out
}

function mapLimits(limits: LimitSet, f: (v: number) => number): LimitSet {
  const out: LimitSet = {}
  for (const k of ['min', 'max', 'warnMin', 'warnMax'] as const) if (limits[k] !== undefined) out[k] = f(limits[k] as number)
  return out
}

function numericMessage(label: string, value: number, limits: LimitSet, unit: string, kind: QuantityKind, verdict: ReturnType<typeof classify>, basis?: string, typedExtra = 0): string {
  const base = unitSpec(kind, unit).decimals
  const present = Object.values(limits).filter((v): v is number => v !== undefined)
  const extra = distinguishingDecimals(value, present, base)
  const q = (v: number) => fmtIn(v, unit, kind, extra)
  const n = (v: number) => formatNumber(v, base + extra)
  const v = fmtIn(value, unit, kind, Math.max(extra, typedExtra))
  const tail = basis ? ` (${basis})` : ''
  switch (verdict.breached) {
    case 'min':
      return `${label} ${v} is below the minimum ${q(limits.min as number)}${tail}`
    case 'max':
      return `${label} ${v} is above the maximum ${q(limits.max as number)}${tail}`
    case 'warnMin':
      return `${label} ${v} is within limits but below the warning level ${q(limits.warnMin as number)}${limits.min !== undefined ? ` (minimum ${q(limits.min)}${basis ? `; ${basis}` : ''})` : tail}`
    case 'warnMax':
      return `${label} ${v} is within limits but above the warning level ${q(limits.warnMax as number)}${limits.max !== undefined ? ` (maximum ${q(limits.max)}${basis ? `; ${basis}` : ''})` : tail}`
  }
  const low = limits.min ?? limits.warnMin
  const high = limits.max ?? limits.warnMax
  if (low !== undefined && high !== undefined) return `${label} ${v} is within ${n(low)} to ${q(high)}${tail}`
  if (low !== undefined) return `${label} ${v} is at or above the minimum ${q(low)}${tail}`
  if (high !== undefined) return `${label} ${v} is at or below the maximum ${q(high)}${tail}`
  return `${label} ${v} recorded`
}

function incomplete(field: ChecklistField, computed: boolean, message: string, problem?: EngineeringError): FieldEvaluation {
  return {
    fieldId: field.id,
    verdict: 'incomplete',
    message,
    required: field.required !== false,
    computed,
    canonical: null,
    display: null,
    limits: null,
    ...(problem ? { problem: { code: problem.code, message: problem.message } } : {}),
  }
}

function isEmpty(entry: FieldEntry | null | undefined): boolean {
  if (entry === null || entry === undefined) return true
  const v = (entry as { value?: unknown }).value
  return v === undefined || v === null || (typeof v === 'string' && v.trim() === '') || (Array.isArray(v) && v.length === 0)
}

function notRecorded(field: ChecklistField): string {
  return field.required === false ? `${field.label} was not recorded (optional)` : `${field.label} has not been recorded`
}

function numberEntry(field: ChecklistField, entry: FieldEntry): { value: number; unit: string } {
  const e = entry as { value?: unknown; unit?: unknown }
  const { kind } = quantityOf(field)
  if (typeof e.value !== 'number' || !Number.isFinite(e.value)) {
    throw new EngineeringError('NON_FINITE', `${field.label} must be a finite number, got ${String(e.value)}`, { fieldId: field.id })
  }
  if (typeof e.unit !== 'string') throw new EngineeringError('UNIT_MISMATCH', `${field.label} needs a unit`, { fieldId: field.id })
  unitSpec(kind, e.unit)
  return { value: e.value, unit: e.unit }
}

type ComputeResult = { value: number } | { missing: string[] } | { error: EngineeringError }

function computeValue(field: ChecklistField, context: EvaluationContext, trail: string[]): ComputeResult {
  if (!context.definition) throw new EngineeringError('MISSING_CONTEXT', `Computed field ${field.id} needs the checklist definition in the context`, { fieldId: field.id })
  if (trail.includes(field.id)) return { error: new EngineeringError('INVALID_EXPRESSION', `Circular computation: ${[...trail, field.id].join(' → ')}`) }
  const index = fieldIndex(context.definition)
  const parsed = parseExpression(field.computed!.expression)
  const values: Record<string, number> = {}
  const missing: string[] = []
  for (const ref of parsed.fieldRefs) {
    const source = index.get(ref)
    if (!source) return { error: new EngineeringError('INVALID_EXPRESSION', `${field.label} refers to unknown field ${ref}`) }
    const { kind, unit } = quantityOf(source)
    if (source.computed) {
      const inner = computeValue(source, context, [...trail, field.id])
      if ('value' in inner) values[ref] = inner.value
      else if ('missing' in inner) missing.push(...inner.missing.filter((m) => !missing.includes(m)))
      else return inner
      continue
    }
    const entry = context.readings?.[ref]
    if (isEmpty(entry)) {
      if (!missing.includes(source.label)) missing.push(source.label)
      continue
    }
    const e = numberEntry(source, entry as FieldEntry)
    values[ref] = convert(e.value, e.unit, unit, kind)
  }
  if (missing.length) return { missing }
  const design: Record<string, number | string> = {}
  const system = context.definition.unitSystem ?? 'IP'
  for (const key of parsed.designRefs) {
    if (key === 'refrigerant') {
      const dp = context.designPoint
      if (dp && 'refrigerant' in dp && dp.refrigerant) design.refrigerant = dp.refrigerant
      continue
    }
    if (!isDesignPointKey(key)) continue
    const q = designQuantity(context, key)
    if (q) design[key] = convert(q.value, q.unit, displayUnit(DESIGN_POINT_QUANTITIES[key], system), DESIGN_POINT_QUANTITIES[key])
  }
  try {
    return { value: parsed.evaluate(values, design, { atmosphereKpa: siteAtmosphereKpa(context) }) }
  } catch (err) {
    if (err instanceof EngineeringError) return { error: err }
    throw err
  }
}

/**
 * The atmosphere the run's gauge pressures are read against, kPa: the run's own barometric reading (a field marked
 * `siteBarometric`), else the project's site value, else undefined (the standard sea-level atmosphere).
 */
export function siteAtmosphereKpa(context: Pick<EvaluationContext, 'definition' | 'readings' | 'siteBarometricKpa'>): number | undefined {
  const f = context.definition ? siteBarometricField(context.definition) : null
  const entry = f ? context.readings?.[f.id] : null
  if (f && !isEmpty(entry)) {
    const e = numberEntry(f, entry as FieldEntry)
    return requireBarometricKpa(convert(e.value, e.unit, 'kPaa', 'pressure_absolute'))
  }
  return typeof context.siteBarometricKpa === 'number' ? context.siteBarometricKpa : undefined
}

function joinLabels(labels: string[]): string {
  return labels.length <= 1 ? labels.join('') : `${labels.slice(0, -1).join(', ')} and ${labels[labels.length - 1]}`
}

/**
 * The unit a field is judged and worded in: its own unit (hours stay hours, feet of water stay feet of water) in a
 * project written in the template's unit system, and for times in any project; the project's display unit otherwise
 * (docs/REFERENCES.md §Units, conversions and printed digits).
 */
export function judgedUnit(field: ChecklistField, context: Pick<EvaluationContext, 'unitSystem' | 'definition'>): string {
  const { kind, unit } = quantityOf(field)
  if (kind === 'time') return unit
  const templateSystem = context.definition?.unitSystem ?? 'IP'
  return context.unitSystem === templateSystem ? unit : displayUnit(kind, context.unitSystem)
}

/** ", +1.2 °F" or ", −3.4 %": how far a recorded value lies from the design value of its rule, in the shown unit. */
function deviationWords(field: ChecklistField, valueInFieldUnit: number, context: EvaluationContext, shown: string): string {
  const rule = field.rule
  if (!rule || (rule.type !== 'design_reference' && rule.type !== 'rated_at_load')) return ''
  const { kind, unit } = quantityOf(field)
  const d = designValue(context, rule.key as DesignPointKey, unit, kind)
  const text = deviationText(convert(valueInFieldUnit, unit, shown, kind), convert(d, unit, shown, kind), kind, shown)
  return text ? `, ${text}` : ''
}

/** The drive start marked in the capture a timer takes its value from (`fromDriveStart`), when it has one. */
function driveStartOf(field: ChecklistField, context: EvaluationContext): { seconds: number; label: string } | null {
  if (field.kind !== 'timer' || !field.fromDriveStart || !context.definition) return null
  const source = fieldIndex(context.definition).get(field.fromDriveStart)
  const entry = context.readings?.[field.fromDriveStart] as SeriesEntry | null | undefined
  const s = entry?.driveStartS
  if (!source || typeof s !== 'number' || !Number.isFinite(s) || s < 0) return null
  return { seconds: s, label: source.label }
}

function evaluateNumber(field: ChecklistField, entry: FieldEntry | null | undefined, context: EvaluationContext): FieldEvaluation {
  const { kind, unit } = quantityOf(field)
  const computed = Boolean(field.computed)
  let valueInFieldUnit: number
  let takenFrom: string | undefined
  let typed: { value: number; unit: string } | null = null
  if (computed) {
    const result = computeValue(field, context, [])
    if ('missing' in result) return incomplete(field, true, `${field.label} cannot be computed until ${joinLabels(result.missing)} ${result.missing.length > 1 ? 'are' : 'is'} recorded`)
    if ('error' in result) {
      const problem = problemInProjectUnits(result.error, context.unitSystem)
      return incomplete(field, true, `${field.label} cannot be computed: ${problem.message}`, problem)
    }
    valueInFieldUnit = result.value
  } else {
    const fromCapture = driveStartOf(field, context)
    if (fromCapture) {
      valueInFieldUnit = convert(fromCapture.seconds, 's', unit, kind)
      takenFrom = fromCapture.label
    } else {
      if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
      const e = numberEntry(field, entry as FieldEntry)
      valueInFieldUnit = convert(e.value, e.unit, unit, kind)
      typed = e
    }
  }
  // A vacuum typed in inches of mercury on an I-P gauge field reads back in inches of mercury vacuum, not as −psig.
  const shown = kind === 'pressure_gauge' && typed?.unit === 'inHgVac' && judgedUnit(field, context) === 'psig' ? 'inHgVac' : judgedUnit(field, context)
  const canonicalValue = toCanonical(valueInFieldUnit, unit, kind)
  const displayValue = typed && typed.unit === shown ? typed.value : convert(valueInFieldUnit, unit, shown, kind)
  // The digits it was typed with: 12.59 stays 12.59, 146.5 kPa stays 146.5 kPa (when it is shown in the unit typed).
  const typedExtra = typed && typed.unit === shown ? Math.min(4, Math.max(0, enteredDecimals(typed.value) - unitSpec(kind, shown).decimals)) : 0
  const base: FieldEvaluation = {
    fieldId: field.id,
    verdict: 'pass',
    message: '',
    required: field.required !== false,
    computed,
    canonical: { value: canonicalValue, unit: canonicalUnit(kind) },
    display: { value: displayValue, unit: shown, text: fmtIn(displayValue, shown, kind, typedExtra) },
    limits: null,
    ...(takenFrom ? { takenFrom } : {}),
  }
  if (!field.rule) return { ...base, verdict: 'recorded', message: `${field.label} ${base.display!.text} recorded` }
  let resolved: ResolvedRule
  try {
    resolved = resolveRule(field.rule, field, context, shown)
  } catch (err) {
    if (err instanceof EngineeringError && (err.code === 'MISSING_DESIGN_VALUE' || (field.rule.type === 'rated_at_load' && err.code !== 'INVALID_ENTRY'))) {
      return { ...base, verdict: 'incomplete', message: `${field.label} ${base.display!.text} cannot be judged: ${err.message}`, problem: { code: err.code, message: err.message } }
    }
    throw err
  }
  if (resolved.notJudged !== undefined) {
    // Recorded, not judged: the design value and the deviation from it are kept for the reader.
    const reference = resolved.basis ? ` (${resolved.basis}${deviationWords(field, valueInFieldUnit, context, shown)})` : ''
    return {
      ...base,
      verdict: 'recorded',
      message: `${field.label} ${base.display!.text} recorded${reference}${resolved.notJudged ? `; ${resolved.notJudged}` : ''}`,
      limits: { display: { unit: shown }, canonical: { unit: canonicalUnit(kind) }, ...(resolved.basis ? { basis: resolved.basis } : {}) },
    }
  }
  const canonicalLimits = mapLimits(resolved.limits, (v) => toCanonical(v, unit, kind))
  // A unit that runs the other way (COP against kW/ton, inches of vacuum against gauge pressure): a maximum becomes a
  // minimum, so the limits and the breached side swap.
  const reciprocal = isReciprocalUnit(kind, shown) || unitSpec(kind, shown).sign === -1
  const displayLimits = reciprocal ? swapSides(mapLimits(resolved.limits, (v) => convert(v, unit, shown, kind))) : mapLimits(resolved.limits, (v) => convert(v, unit, shown, kind))
  const judged = classify(canonicalValue, canonicalLimits)
  const c = reciprocal && judged.breached ? { ...judged, breached: SWAPPED[judged.breached] } : judged
  return {
    ...base,
    verdict: c.verdict,
    message: `${numericMessage(field.label, displayValue, displayLimits, shown, kind, c, resolved.basis, typedExtra)}${takenFrom ? `; taken from the drive start marked on ${lowerFirst(takenFrom)}` : ''}`,
    limits: {
      display: { ...displayLimits, unit: shown },
      canonical: { ...canonicalLimits, unit: canonicalUnit(kind) },
      ...(resolved.basis ? { basis: resolved.basis } : {}),
    },
  }
}

/**
 * A ramp rule's setpoint and floors in the field's unit: as written, or from the equipment's design value
 * (`setpointKey`) with the floors that many percent below it, so the rule follows the machine's own setpoint in
 * either unit system. A design point without the value throws MISSING_DESIGN_VALUE.
 */
export function resolveRampRule(rule: RampRule, field: ChecklistField, designPoint: AnyDesignPoint | null | undefined): { setpoint: number; floor?: number; warnFloor?: number; basis?: string } {
  if (rule.setpointKey === undefined || !isDesignPointKey(rule.setpointKey)) return { setpoint: rule.setpoint as number, floor: rule.floor, warnFloor: rule.warnFloor }
  const { kind, unit } = quantityOf(field)
  const setpoint = designValue({ designPoint, unitSystem: 'SI' }, rule.setpointKey, unit, kind)
  const below = (pct: number | undefined) => (pct === undefined ? undefined : setpoint * (1 - pct / 100))
  return { setpoint, floor: below(rule.floorBelowPct), warnFloor: below(rule.warnFloorBelowPct), basis: `the ${humanKey(rule.setpointKey)} on the design point` }
}

function evaluateSeries(field: ChecklistField, entry: FieldEntry | null | undefined, context: EvaluationContext): FieldEvaluation {
  if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
  const { kind, unit } = quantityOf(field)
  const e = entry as SeriesEntry
  if (typeof e.unit !== 'string') throw new EngineeringError('UNIT_MISMATCH', `${field.label} needs a unit`, { fieldId: field.id })
  unitSpec(kind, e.unit)
  const shown = displayUnit(kind, context.unitSystem)
  const points = e.value.map(([t, v]) => [t, convert(v, e.unit, shown, kind)] as [number, number])
  const fmt = (v: number) => fmtIn(v, shown, kind)
  const base: FieldEvaluation = { ...incomplete(field, false, ''), verdict: 'pass' }
  if (!field.rule || field.rule.type !== 'ramp') {
    return { ...base, verdict: 'recorded', message: `${field.label} recorded (${points.length} points)` }
  }
  const r = field.rule
  let resolved: ReturnType<typeof resolveRampRule>
  try {
    resolved = resolveRampRule(r, field, context.designPoint)
  } catch (err) {
    if (err instanceof EngineeringError && err.code === 'MISSING_DESIGN_VALUE') {
      return { ...base, verdict: 'incomplete', message: `${field.label} cannot be judged: ${err.message}`, problem: { code: err.code, message: err.message } }
    }
    throw err
  }
  const toShown = (v: number | undefined) => (v === undefined ? undefined : convert(v, unit, shown, kind))
  const judgement = judgeRamp(
    points,
    { setpoint: toShown(resolved.setpoint)!, reachWithinS: r.reachWithinS, reachNotBeforeS: r.reachNotBeforeS, holdS: r.holdS, floor: toShown(resolved.floor), warnFloor: toShown(resolved.warnFloor) },
    { driveStartS: e.driveStartS, format: fmt },
  )
  const displayLimits: LimitSet = { min: toShown(resolved.floor), warnMin: toShown(resolved.warnFloor) }
  const canonicalLimits = mapLimits({ min: resolved.floor, warnMin: resolved.warnFloor }, (v) => toCanonical(v, unit, kind))
  return {
    ...base,
    verdict: judgement.verdict,
    message: `${field.label} ${joinLabels(judgement.findings)}`,
    limits: {
      display: { ...displayLimits, unit: shown },
      canonical: { ...canonicalLimits, unit: canonicalUnit(kind) },
      basis: `setpoint ${fmt(toShown(resolved.setpoint)!)}${resolved.basis ? ` (${resolved.basis})` : ''} within ${formatNumber(r.reachWithinS, 1)} s${r.holdS ? `, hold ${formatNumber(r.holdS, 1)} s` : ''}`,
    },
    series: { ...judgement, unit: shown },
  }
}

function answerText(value: boolean): string {
  return value ? 'Yes' : 'No'
}

/**
 * The verdict on one field of a run: takes the field definition, its entry (`{ value, unit }` for numbers,
 * `{ value: boolean }`, `{ value: string }`, `{ value: attachmentIds }`, or a series), the other readings and the
 * design point, and returns pass / marginal / fail / incomplete with the limits used and a plain message.
 */
export function evaluateField(field: ChecklistField, entry: FieldEntry | null | undefined, context: EvaluationContext): FieldEvaluation {
  switch (field.kind) {
    case 'number':
    case 'timer':
      return evaluateNumber(field, entry, context)
    case 'time_series':
      return evaluateSeries(field, entry, context)
    case 'yes_no': {
      if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
      const value = (entry as { value: unknown }).value
      if (typeof value !== 'boolean') throw new EngineeringError('INVALID_ENTRY', `${field.label} must be answered yes or no`, { fieldId: field.id })
      const base = { ...incomplete(field, false, ''), answer: value }
      if (field.rule?.type !== 'yes_no') return { ...base, verdict: 'recorded', message: `${field.label}: ${answerText(value)}` }
      if (field.rule.expected !== value) {
        return { ...base, verdict: 'fail', message: `${field.label}: ${answerText(value)}; ${answerText(field.rule.expected)} is required` }
      }
      return { ...base, verdict: 'pass', message: `${field.label}: ${answerText(value)}` }
    }
    case 'choice': {
      if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
      const value = (entry as { value: unknown }).value
      const choice = (field.choices ?? []).find((c) => c.value === value)
      if (!choice) throw new EngineeringError('INVALID_ENTRY', `${field.label} has no choice "${String(value)}"`, { fieldId: field.id })
      const base = { ...incomplete(field, false, ''), answer: choice.value }
      if (field.rule?.type !== 'choice') return { ...base, verdict: 'recorded', message: `${field.label}: ${choice.label}` }
      if (field.rule.pass.includes(choice.value)) return { ...base, verdict: 'pass', message: `${field.label}: ${choice.label}` }
      if (field.rule.marginal?.includes(choice.value)) return { ...base, verdict: 'marginal', message: `${field.label}: ${choice.label} is acceptable with reservations` }
      const accepted = (field.choices ?? []).filter((c) => field.rule?.type === 'choice' && field.rule.pass.includes(c.value)).map((c) => c.label)
      return { ...base, verdict: 'fail', message: `${field.label}: ${choice.label} is not acceptable (acceptable: ${accepted.join(', ')})` }
    }
    case 'text': {
      if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
      const value = (entry as { value: unknown }).value
      if (typeof value !== 'string') throw new EngineeringError('INVALID_ENTRY', `${field.label} must be text`, { fieldId: field.id })
      return { ...incomplete(field, false, ''), verdict: 'recorded', answer: value, message: `${field.label} recorded` }
    }
    case 'photo': {
      if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
      const value = (entry as { value: unknown }).value
      if (!Array.isArray(value) || !value.every((v) => typeof v === 'string')) {
        throw new EngineeringError('INVALID_ENTRY', `${field.label} must list attachment ids`, { fieldId: field.id })
      }
      return { ...incomplete(field, false, ''), verdict: 'recorded', answer: value, message: `${field.label}: ${value.length} photo${value.length === 1 ? '' : 's'} attached` }
    }
  }
}

/**
 * Every field of a checklist evaluated against the run's readings, by field id; with `only`, just those fields (the
 * dependents of a changed one, shared/rules/dependencies.ts), each judged exactly as in the full evaluation.
 */
export function evaluateChecklist(definition: ChecklistDefinition, context: Omit<EvaluationContext, 'definition'>, only?: ReadonlySet<string>): Record<string, FieldEvaluation> {
  const out: Record<string, FieldEvaluation> = {}
  const full = { ...context, definition }
  for (const section of definition.sections) {
    for (const step of section.steps) {
      for (const field of step.fields) if (!only || only.has(field.id)) out[field.id] = evaluateField(field, context.readings?.[field.id], full)
    }
  }
  return out
}
