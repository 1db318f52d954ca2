import { EngineeringError, type EngineeringErrorCode } from '../engineering/errors'
import type { ChecklistDefinition, ChecklistField, FieldRule, RampRule } from '../schemas/checklist'
import { DESIGN_POINT_QUANTITIES, isDesignPointKey, type AnyDesignPoint, type DesignPointKey } from '../schemas/design-point'
import type { FieldEntry, SeriesEntry } from '../schemas/reading'
import { distinguishingDecimals, formatNumber } from '../units/format'
import {
  canonicalUnit,
  convert,
  convertDifference,
  displayUnit,
  isUnitOf,
  toCanonical,
  unitSpec,
  type QuantityKind,
  type UnitSystem,
} from '../units/quantities'
import { parseExpression } from './expression'
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
}

interface ResolvedRule {
  limits: LimitSet
  basis?: string
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
      const parts = [rule.lowerPct === undefined ? null : `−${formatNumber(rule.lowerPct, 1)} %`, rule.upperPct === undefined ? null : `+${formatNumber(rule.upperPct, 1)} %`]
      return {
        limits: { min: at(rule.lowerPct, -1), max: at(rule.upperPct, 1), warnMin: at(rule.warnLowerPct, -1), warnMax: at(rule.warnUpperPct, 1) },
        basis: `design ${abs(d)}${describeSides(parts)}`,
      }
    }
    case 'design_offset': {
      const d = designValue(context, rule.key as DesignPointKey, unit, kind)
      const at = (offset: number | undefined, sign: -1 | 1) => (offset === undefined ? undefined : d + sign * offset)
      const parts = [rule.lower === undefined ? null : `−${diff(rule.lower)}`, rule.upper === undefined ? null : `+${diff(rule.upper)}`]
      return {
        limits: { min: at(rule.lower, -1), max: at(rule.upper, 1), warnMin: at(rule.warnLower, -1), warnMax: at(rule.warnUpper, 1) },
        basis: `design ${abs(d)}${describeSides(parts)}`,
      }
    }
    default:
      throw new EngineeringError('INVALID_ENTRY', `Rule ${rule.type} does not apply to a ${field.kind} field`, { fieldId: field.id })
  }
}

function describeSides(parts: Array<string | null>): string {
  const [low, high] = parts
  if (low && high) return `, ${low} to ${high}`
  if (low) return `, ${low}`
  if (high) return `, ${high}`
  return ''
}

function mapLimits(limits: LimitSet, f: (v: number) => number): LimitSet {
  const out: LimitSet = {}
  for (const k of ['min', 'max', 'warnMin', 'warnMax'] as const) if (limits[k] !== undefined) out[k] = f(limits[k] as number)
  return out
}

function numericMessage(label: string, value: number, limits: LimitSet, unit: string, kind: QuantityKind, verdict: ReturnType<typeof classify>, basis?: string): string {
  const base = unitSpec(kind, unit).decimals
  const present = Object.values(limits).filter((v): v is number => v !== undefined)
  const extra = distinguishingDecimals(value, present, base)
  const q = (v: number) => fmtIn(v, unit, kind, extra)
  const n = (v: number) => formatNumber(v, base + extra)
  const tail = basis ? ` (${basis})` : ''
  const v = q(value)
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
    return { value: parsed.evaluate(values, design) }
  } catch (err) {
    if (err instanceof EngineeringError) return { error: err }
    throw err
  }
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

function evaluateNumber(field: ChecklistField, entry: FieldEntry | null | undefined, context: EvaluationContext): FieldEvaluation {
  const { kind, unit } = quantityOf(field)
  const computed = Boolean(field.computed)
  let valueInFieldUnit: number
  if (computed) {
    const result = computeValue(field, context, [])
    if ('missing' in result) return incomplete(field, true, `${field.label} cannot be computed until ${joinLabels(result.missing)} ${result.missing.length > 1 ? 'are' : 'is'} recorded`)
    if ('error' in result) {
      const problem = problemInProjectUnits(result.error, context.unitSystem)
      return incomplete(field, true, `${field.label} cannot be computed: ${problem.message}`, problem)
    }
    valueInFieldUnit = result.value
  } else {
    if (isEmpty(entry)) return incomplete(field, false, notRecorded(field))
    const e = numberEntry(field, entry as FieldEntry)
    valueInFieldUnit = convert(e.value, e.unit, unit, kind)
  }
  const shown = judgedUnit(field, context)
  const canonicalValue = toCanonical(valueInFieldUnit, unit, kind)
  const displayValue = convert(valueInFieldUnit, unit, shown, kind)
  const base: FieldEvaluation = {
    fieldId: field.id,
    verdict: 'pass',
    message: '',
    required: field.required !== false,
    computed,
    canonical: { value: canonicalValue, unit: canonicalUnit(kind) },
    display: { value: displayValue, unit: shown, text: fmtIn(displayValue, shown, kind) },
    limits: null,
  }
  if (!field.rule) return { ...base, verdict: 'recorded', message: `${field.label} ${base.display!.text} recorded` }
  let resolved: ResolvedRule
  try {
    resolved = resolveRule(field.rule, field, context, shown)
  } catch (err) {
    if (err instanceof EngineeringError && err.code === 'MISSING_DESIGN_VALUE') {
      return { ...base, verdict: 'incomplete', message: `${field.label} ${base.display!.text} cannot be judged: ${err.message}`, problem: { code: err.code, message: err.message } }
    }
    throw err
  }
  const canonicalLimits = mapLimits(resolved.limits, (v) => toCanonical(v, unit, kind))
  const displayLimits = mapLimits(resolved.limits, (v) => convert(v, unit, shown, kind))
  const c = classify(canonicalValue, canonicalLimits)
  return {
    ...base,
    verdict: c.verdict,
    message: numericMessage(field.label, displayValue, displayLimits, shown, kind, c, resolved.basis),
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

/** Every field of a checklist evaluated against the run's readings, by field id. */
export function evaluateChecklist(definition: ChecklistDefinition, context: Omit<EvaluationContext, 'definition'>): Record<string, FieldEvaluation> {
  const out: Record<string, FieldEvaluation> = {}
  const full = { ...context, definition }
  for (const section of definition.sections) {
    for (const step of section.steps) for (const field of step.fields) out[field.id] = evaluateField(field, context.readings?.[field.id], full)
  }
  return out
}
