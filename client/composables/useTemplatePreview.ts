import { conditionRuleWords, evaluateField, resolveRampRule, type FieldEvaluation } from '@shared/rules'
import type { ChecklistDefinition, ChecklistField } from '@shared/schemas/checklist'
import { DESIGN_POINT_QUANTITIES, type AnyDesignPoint, type DesignPoint, type DesignPointKey } from '@shared/schemas/design-point'
import type { FieldEntry } from '@shared/schemas/reading'
import type { LimitSet } from '@shared/rules'
import { convert, convertDifference, displayUnit, formatNumber, formatQuantity, isUnitOf, kindLabel, unitLabel, type UnitSystem } from '@shared/units'

/** Invented machines whose design points let the preview judge design-relative rules. */
export const SAMPLE_DESIGN_POINTS: ReadonlyArray<{ id: string; label: string; unitSystem: UnitSystem; designPoint: DesignPoint }> = [
  {
    id: 'chiller-500-tons',
    label: '500-ton chiller, 54 → 44 °F (I-P)',
    unitSystem: 'IP',
    designPoint: {
      refrigerant: 'R-134a',
      capacity: { value: 500, unit: 'TR' },
      evaporatorEnteringWaterTemp: { value: 54, unit: 'degF' },
      evaporatorLeavingWaterTemp: { value: 44, unit: 'degF' },
      evaporatorWaterFlow: { value: 1200, unit: 'gpm' },
      evaporatorPressureDrop: { value: 18, unit: 'ftH2O' },
      condenserEnteringWaterTemp: { value: 85, unit: 'degF' },
      condenserLeavingWaterTemp: { value: 94.3, unit: 'degF' },
      condenserWaterFlow: { value: 1500, unit: 'gpm' },
      condenserPressureDrop: { value: 20, unit: 'ftH2O' },
      designKwPerTon: { value: 0.576, unit: 'kWPerTon' },
      inputPower: { value: 288, unit: 'kW' },
      voltage: { value: 460, unit: 'V' },
      frequency: { value: 60, unit: 'Hz' },
      fullLoadAmps: { value: 420, unit: 'A' },
      oilPressureSetpoint: { value: 35, unit: 'psid' },
    },
  },
  {
    id: 'chiller-1750-kw',
    label: '1750 kW chiller, 12 → 7 °C (SI)',
    unitSystem: 'SI',
    designPoint: {
      refrigerant: 'R-1233zd(E)',
      capacity: { value: 1750, unit: 'kW' },
      evaporatorEnteringWaterTemp: { value: 12, unit: 'degC' },
      evaporatorLeavingWaterTemp: { value: 7, unit: 'degC' },
      evaporatorWaterFlow: { value: 83.6, unit: 'Lps' },
      evaporatorPressureDrop: { value: 55, unit: 'kPad' },
      condenserEnteringWaterTemp: { value: 30, unit: 'degC' },
      condenserLeavingWaterTemp: { value: 35, unit: 'degC' },
      condenserWaterFlow: { value: 100, unit: 'Lps' },
      condenserPressureDrop: { value: 60, unit: 'kPad' },
      designKwPerTon: { value: 0.165, unit: 'kWPerKW' },
      inputPower: { value: 289, unit: 'kW' },
      voltage: { value: 400, unit: 'V' },
      frequency: { value: 50, unit: 'Hz' },
      fullLoadAmps: { value: 505, unit: 'A' },
      oilPressureSetpoint: { value: 240, unit: 'kPad' },
    },
  },
]

/** "evaporatorWaterFlow" → "evaporator water flow". */
export function designKeyLabel(key: string): string {
  return key.replace(/([A-Z])/g, ' $1').toLowerCase().replace('kw per ton', 'kW/ton').trim()
}

export function designValueText(designPoint: DesignPoint | null | undefined, key: DesignPointKey): string | null {
  const q = designPoint?.[key] as { value: number; unit: string } | undefined
  if (!q) return null
  try {
    return formatQuantity(q.value, q.unit, DESIGN_POINT_QUANTITIES[key])
  } catch {
    return `${q.value} ${q.unit}`
  }
}

export interface PreviewContext {
  definition: ChecklistDefinition
  designPoint: DesignPoint | null
  unitSystem: UnitSystem
  readings?: Record<string, FieldEntry | null | undefined>
}

export type PreviewResult = { ok: true; evaluation: FieldEvaluation } | { ok: false; message: string }

/** evaluateField for a definition that may still be invalid: a field it cannot judge yet says why instead of throwing. */
export function previewEvaluate(field: ChecklistField, entry: FieldEntry | null | undefined, ctx: PreviewContext): PreviewResult {
  try {
    return { ok: true, evaluation: evaluateField(field, entry, { definition: ctx.definition, designPoint: ctx.designPoint, unitSystem: ctx.unitSystem, readings: ctx.readings }) }
  } catch (err) {
    return { ok: false, message: err instanceof Error ? err.message : String(err) }
  }
}

/** The unit the technician types in: the project's unit for the field's quantity. */
export function entryUnit(field: ChecklistField, unitSystem: UnitSystem): string | null {
  if (!field.quantity) return null
  try {
    return displayUnit(field.quantity, unitSystem)
  } catch {
    return null
  }
}

export function entryUnitLabel(field: ChecklistField, unitSystem: UnitSystem): string {
  const unit = entryUnit(field, unitSystem)
  if (!unit || !field.quantity) return ''
  try {
    return unitLabel(field.quantity, unit)
  } catch {
    return unit
  }
}

function limitsInWords(limits: LimitSet, fmt: (v: number) => string): string {
  const passLow = limits.warnMin ?? limits.min
  const passHigh = limits.warnMax ?? limits.max
  const parts: string[] = []
  if (passLow !== undefined && passHigh !== undefined) parts.push(`pass ${fmt(passLow)} to ${fmt(passHigh)}`)
  else if (passLow !== undefined) parts.push(`pass at or above ${fmt(passLow)}`)
  else if (passHigh !== undefined) parts.push(`pass at or below ${fmt(passHigh)}`)
  const warn = [limits.warnMin !== undefined ? `below ${fmt(limits.warnMin)}` : null, limits.warnMax !== undefined ? `above ${fmt(limits.warnMax)}` : null].filter(Boolean)
  if (warn.length) parts.push(`marginal ${warn.join(' or ')}`)
  const fail = [limits.min !== undefined ? `below ${fmt(limits.min)}` : null, limits.max !== undefined ? `above ${fmt(limits.max)}` : null].filter(Boolean)
  if (fail.length) parts.push(`fail ${fail.join(' or ')}`)
  return parts.join('; ')
}

const cap = (s: string) => (s ? s[0].toUpperCase() + s.slice(1) : s)

/**
 * The acceptance rule of a field in the technician's words and units, e.g.
 * "Pass 1140 to 1260 gpm; marginal below 1140 or above 1260 gpm; fail below 1080 or above 1320 gpm (design 1200 gpm, −10 % to +10 %)".
 */
export function describeRule(field: ChecklistField, ctx: PreviewContext): string {
  const rule = field.rule
  if (field.kind === 'text') return 'Recorded as written; not judged.'
  if (field.kind === 'photo') return 'At least one photo is attached; not judged.'
  if (!rule) return field.computed ? 'Computed and recorded; not judged.' : 'Recorded; not judged.'
  try {
    switch (rule.type) {
      case 'yes_no':
        return `Must be answered ${rule.expected ? 'Yes' : 'No'}; the other answer fails.`
      case 'choice': {
        const label = (v: string) => field.choices?.find((c) => c.value === v)?.label ?? v
        const marginal = rule.marginal?.length ? `; marginal: ${rule.marginal.map(label).join(', ')}` : ''
        return `Pass: ${rule.pass.map(label).join(', ') || '(none chosen)'}${marginal}; any other choice fails.`
      }
      case 'ramp': {
        if (!field.quantity || !isUnitOf(field.quantity, field.unit)) return 'Needs a quantity and unit before the rule can be read.'
        const shown = displayUnit(field.quantity, ctx.unitSystem)
        const fmt = (v: number) => formatQuantity(convert(v, field.unit!, shown, field.quantity!), shown, field.quantity!)
        if (rule.setpointKey && !ctx.designPoint?.[rule.setpointKey as keyof DesignPoint]) {
          const below = [rule.floorBelowPct !== undefined ? `never fall more than ${formatNumber(rule.floorBelowPct, 1)} % below it afterwards` : null, rule.warnFloorBelowPct !== undefined ? `marginal more than ${formatNumber(rule.warnFloorBelowPct, 1)} % below it` : null].filter(Boolean)
          return cap([`Reach the machine's ${rule.setpointKey.replace(/([A-Z])/g, ' $1').toLowerCase()} (from its design point) within ${formatNumber(rule.reachWithinS, 1)} s of the start command`, ...(rule.holdS ? [`hold at or above it for ${formatNumber(rule.holdS, 1)} s before the drive starts`] : []), ...below].join('; ')) + '.'
        }
        const r = resolveRampRule(rule, field, ctx.designPoint as AnyDesignPoint | null)
        const parts = [`Reach ${fmt(r.setpoint)} within ${formatNumber(rule.reachWithinS, 1)} s of the start command`]
        if (rule.reachNotBeforeS !== undefined) parts[0] += ` (not sooner than ${formatNumber(rule.reachNotBeforeS, 1)} s)`
        if (rule.holdS) parts.push(`hold at or above it for ${formatNumber(rule.holdS, 1)} s before the drive starts`)
        if (r.floor !== undefined) parts.push(`never fall below ${fmt(r.floor)} afterwards`)
        if (r.warnFloor !== undefined) parts.push(`marginal below ${fmt(r.warnFloor)}`)
        return cap(parts.join('; ')) + '.'
      }
      case 'design_reference':
      case 'rated_at_load':
        return `${cap(conditionRuleWords(rule))}.`
      default: {
        // The limits exactly as a run would use them: evaluate a stand-in reading of the same field.
        if (!field.quantity || !isUnitOf(field.quantity, field.unit)) return 'Needs a quantity and unit before the limits can be read.'
        const standIn: ChecklistField = { ...field, computed: undefined }
        const result = evaluateField(standIn, { value: 0, unit: field.unit! }, { definition: ctx.definition, designPoint: ctx.designPoint, unitSystem: ctx.unitSystem })
        if (result.problem) return `${result.problem.message}: add it to the sample design point to see the limits.`
        if (!result.limits) return 'Recorded; not judged.'
        const { unit, ...limits } = result.limits.display
        const fmt = (v: number) => formatQuantity(v, unit, field.quantity!)
        const words = cap(limitsInWords(limits, fmt))
        return result.limits.basis ? `${words} (${result.limits.basis}).` : `${words}.`
      }
    }
  } catch (err) {
    return `The rule cannot be read yet: ${err instanceof Error ? err.message : String(err)}`
  }
}

/** "temperature in °F" — the quantity and the unit the rule values are written in. */
export function quantityInWords(field: ChecklistField): string {
  if (!field.quantity) return ''
  try {
    return field.unit && isUnitOf(field.quantity, field.unit) ? `${kindLabel(field.quantity)} in ${unitLabel(field.quantity, field.unit)}` : kindLabel(field.quantity)
  } catch {
    return field.quantity
  }
}

/** A difference in the field's unit shown in another unit of the same quantity, for tolerance hints. */
export function differenceIn(value: number, field: ChecklistField, to: string): number {
  return convertDifference(value, field.unit!, to, field.quantity!)
}

/** An example oil-pressure style ramp for a ramp rule: rises to the setpoint, holds, then the drive starts. */
export function exampleRamp(field: ChecklistField, unitSystem: UnitSystem, designPoint?: DesignPoint | null): { points: Array<[number, number]>; driveStartS: number } | null {
  const rule = field.rule
  if (rule?.type !== 'ramp' || !field.quantity || !isUnitOf(field.quantity, field.unit)) return null
  const shown = displayUnit(field.quantity, unitSystem)
  let setpoint: number
  try {
    setpoint = resolveRampRule(rule, field, designPoint as AnyDesignPoint | null).setpoint
  } catch {
    return null
  }
  const sp = convert(setpoint, field.unit!, shown, field.quantity)
  const reach = Math.max(1, Math.round(rule.reachWithinS * 0.6))
  const hold = rule.holdS ?? 10
  const round = (v: number) => Math.round(v * 10) / 10
  const points: Array<[number, number]> = [
    [0, 0],
    [Math.round(reach / 3), round(sp * 0.45)],
    [Math.round((2 * reach) / 3), round(sp * 0.8)],
    [reach, round(sp * 1.04)],
    [reach + Math.round(hold / 2), round(sp * 1.1)],
    [reach + hold + 2, round(sp * 1.1)],
  ]
  return { points, driveStartS: reach + hold + 2 }
}
