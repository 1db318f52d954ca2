import { isRefrigerant, saturationPressureKpaAbs } from '../engineering/refrigerant'
import type { ChecklistField } from '../schemas/checklist'
import { DESIGN_POINT_QUANTITIES, isDesignPointKey, type AnyDesignPoint, type DesignPointKey } from '../schemas/design-point'
import type { FieldEntry } from '../schemas/reading'
import { formatNumber, formatQuantity, MINUS } from '../units/format'
import { fromCanonical, isUnitOf, STANDARD_ATMOSPHERE_PA, toCanonical, unitLabel, type QuantityKind } from '../units/quantities'
import { physicalBoundsProblem } from './physical'

/*
 * Plausibility of a typed value: is it so far from what this machine can read that it is more likely a slipped
 * decimal point (368 psig typed for 36.8 psig, 4450 gpm for 445) than a measurement? It never judges pass or fail and
 * never refuses: the runner asks the technician to confirm, and the value is kept as typed if they say so.
 *
 * The band is a judgement of common practice, not a standard (docs/REFERENCES.md §Plausibility of a typed value):
 *
 * - Quantities with a true zero (pressures, flows, currents, power…) are judged by ratio: plausible between
 *   reference ÷ factor and reference × factor. A factor of 3 or less keeps the band apart from its tenfold images
 *   (3 < √10), so at most one decimal shift can land back inside it; a larger factor is used where a machine in
 *   service can honestly read that far from its design (part-load current and power, pressure drop that goes with
 *   the square of flow, a variable-speed drive's frequency).
 * - Gauge pressure is judged as absolute pressure (gauge + one standard atmosphere): a ratio of gauge readings near
 *   zero or below atmospheric means nothing, a ratio of absolute pressures does.
 * - Temperature has no true zero in °F or °C, so a ratio means nothing: it is plausible within a fixed difference
 *   of the reference. A slipped point moves a plant-room temperature by tens of degrees (44 °F → 4.4 °F, 35 °C → 3.5 °C),
 *   far beyond how far a running water loop sits from its design temperature.
 * - Against the field's own limits (no design value), the band starts at the limit, so a reading just beyond a limit
 *   is a fail to record, not a question. Quantities whose faults are real multiples of the limit (vibration,
 *   misalignment) get a wider factor, so a bad bearing is not talked down as a typing slip.
 */

type Scale = { by: 'ratio'; factor: number } | { by: 'difference'; kelvin: number }

/** How far from its reference a typed value of each quantity kind may be before the runner asks (common practice). */
export const PLAUSIBILITY_SCALES: Readonly<Record<QuantityKind, Scale>> = {
  // Refrigerant pressures follow the water temperatures: a cold condenser-water day or part load moves them by tens
  // of percent, not threefold.
  pressure_gauge: { by: 'ratio', factor: 3 },
  pressure_absolute: { by: 'ratio', factor: 3 },
  // Pressure drop and pump head go with the square of flow: half to double the design flow is a quarter to four times.
  pressure_differential: { by: 'ratio', factor: 4 },
  // Balanced flows sit within ±10 % of design; a variable-flow plant turns down to about a third, not further.
  volumetric_flow: { by: 'ratio', factor: 3 },
  // A motor at light load draws a fraction of full-load amps and power; a quarter is still a reading.
  current: { by: 'ratio', factor: 4 },
  power: { by: 'ratio', factor: 4 },
  cooling_capacity: { by: 'ratio', factor: 4 },
  // Supply voltage is held within ±10 % of the rating; two thirds or one and a half times is another supply altogether.
  voltage: { by: 'ratio', factor: 1.5 },
  // A variable-speed drive runs down to about 25 Hz on a 60 Hz motor.
  frequency: { by: 'ratio', factor: 2.5 },
  rotational_speed: { by: 'ratio', factor: 3 },
  specific_power: { by: 'ratio', factor: 3 },
  efficiency: { by: 'ratio', factor: 3 },
  time: { by: 'ratio', factor: 3 },
  percent: { by: 'ratio', factor: 3 },
  temperature_difference: { by: 'ratio', factor: 3 },
  // A failing bearing or an unaligned coupling reads several times the limit: only a slip reads far beyond that.
  vibration_velocity: { by: 'ratio', factor: 5 },
  alignment_offset: { by: 'ratio', factor: 5 },
  alignment_angularity: { by: 'ratio', factor: 5 },
  // 20 K = 36 °F either side of the reference.
  temperature: { by: 'difference', kelvin: 20 },
}

/** What the runner needs to read the design point and the template. */
export interface PlausibilityContext {
  designPoint?: AnyDesignPoint | null
}

export interface PlausibilityReference {
  /** Where the reference comes from: a design-point value (or one derived from it) or the field's own limit. */
  source: 'design' | 'limit'
  /** "the design condenser pressure", "the maximum". */
  name: string
  /** The reference in the entry's unit. */
  value: number
  /** "36.8 psig": in the entry's unit, rounded as that unit is printed. */
  text: string
}

export interface PlausibilityQuestion {
  fieldId: string
  /** The value as typed, with its unit: `text` keeps the digits typed ("368 psig"). */
  entered: { value: number; unit: string; digits: string; text: string }
  reference: PlausibilityReference
  /** The plausible band in the entry's unit; a side left out is open. */
  band: { min?: number; max?: number; unit: string }
  /** The typed digits with the decimal point moved, when that lands inside the band. */
  suggestion: { value: number; unit: string; digits: string; text: string; shift: number } | null
  /** "368 psig is about ten times the design condenser pressure (36.8 psig)." */
  message: string
  /** "Did you mean 36.8 psig?" when there is a suggestion. */
  question: string | null
}

type Side = 'evaporator' | 'condenser' | 'oil'

interface Candidate {
  name: string
  /** On the judging scale: canonical SI, gauge pressure made absolute. */
  scaled: number
  side?: Side
}

/** "the design …" for each design-point value, as a message names it. */
const DESIGN_NAMES: Readonly<Record<DesignPointKey, string>> = {
  capacity: 'the design capacity',
  evaporatorEnteringWaterTemp: 'the design entering chilled-water temperature',
  evaporatorLeavingWaterTemp: 'the design leaving chilled-water temperature',
  evaporatorWaterFlow: 'the design chilled-water flow',
  evaporatorPressureDrop: 'the design evaporator pressure drop',
  condenserEnteringWaterTemp: 'the design entering condenser-water temperature',
  condenserLeavingWaterTemp: 'the design leaving condenser-water temperature',
  condenserWaterFlow: 'the design condenser-water flow',
  condenserPressureDrop: 'the design condenser pressure drop',
  designKwPerTon: 'the design kW/ton',
  inputPower: 'the design input power',
  voltage: 'the rated voltage',
  frequency: 'the rated frequency',
  fullLoadAmps: 'the full-load amps',
  oilPressureSetpoint: 'the oil pressure setpoint',
  chilledWaterSetpointMin: 'the lowest allowed chilled-water setpoint',
  chilledWaterSetpointMax: 'the highest allowed chilled-water setpoint',
  pumpDesignFlow: 'the design flow',
  pumpDesignHead: 'the design head',
  motorRatedPower: 'the motor rated power',
  motorRatedSpeed: 'the rated speed',
}

function sideOfKey(key: DesignPointKey): Side | undefined {
  if (key.startsWith('evaporator') || key.startsWith('chilledWater')) return 'evaporator'
  if (key.startsWith('condenser')) return 'condenser'
  if (key.startsWith('oil')) return 'oil'
  return undefined
}

const SIDE_WORDS: ReadonlyArray<readonly [Side, readonly string[]]> = [
  ['evaporator', ['evaporator', 'evaporating', 'evap', 'chilled', 'chw', 'suction']],
  ['condenser', ['condenser', 'condensing', 'cond', 'cw', 'discharge']],
  ['oil', ['oil']],
]

/** Which part of the machine a field reads, from the words of its id and label; null when it names none or several. */
function sideOfField(field: ChecklistField): Side | null {
  const words = new Set(`${field.id.replace(/([a-z0-9])([A-Z])/g, '$1 $2')} ${field.label}`.toLowerCase().split(/[^a-z0-9]+/))
  const sides = SIDE_WORDS.filter(([, list]) => list.some((w) => words.has(w))).map(([side]) => side)
  return sides.length === 1 ? sides[0] : null
}

/** A value of `kind` in `unit` on the scale it is judged on. */
function scaled(value: number, unit: string, kind: QuantityKind): number {
  const si = toCanonical(value, unit, kind)
  return kind === 'pressure_gauge' ? si + STANDARD_ATMOSPHERE_PA : si
}

function unscaled(value: number, unit: string, kind: QuantityKind): number {
  return fromCanonical(kind === 'pressure_gauge' ? value - STANDARD_ATMOSPHERE_PA : value, unit, kind)
}

function designScaled(designPoint: AnyDesignPoint | null | undefined, key: DesignPointKey, kind: QuantityKind): number | null {
  const q = designPoint?.[key]
  if (!q || typeof q.value !== 'number' || !Number.isFinite(q.value) || !isUnitOf(kind, q.unit)) return null
  return scaled(q.value, q.unit, kind)
}

/**
 * Refrigerant pressures at design, which no design point states: the saturation pressure of the machine's refrigerant
 * at the design leaving chilled-water and leaving condenser-water temperatures. The approach (a few °F) moves them by a
 * few percent, nothing against a factor of three.
 */
function refrigerantPressures(designPoint: AnyDesignPoint | null | undefined): Candidate[] {
  const dp = designPoint as { refrigerant?: unknown } | null | undefined
  if (!dp || !isRefrigerant(dp.refrigerant)) return []
  const out: Candidate[] = []
  for (const [key, side, name] of [
    ['evaporatorLeavingWaterTemp', 'evaporator', 'the design evaporator pressure'],
    ['condenserLeavingWaterTemp', 'condenser', 'the design condenser pressure'],
  ] as const) {
    const kelvin = designScaled(designPoint, key, 'temperature')
    if (kelvin === null) continue
    try {
      out.push({ name, side, scaled: saturationPressureKpaAbs(dp.refrigerant, kelvin - 273.15) * 1000 })
    } catch {
      // A design temperature outside the shipped table: no derived pressure, no question.
    }
  }
  return out
}

/** The design values a field is related to: the key of its rule, else the design values of its quantity on its side. */
function designCandidates(field: ChecklistField, kind: QuantityKind, designPoint: AnyDesignPoint | null | undefined): Candidate[] {
  const rule = field.rule
  if (rule && (rule.type === 'design' || rule.type === 'design_offset')) {
    if (!isDesignPointKey(rule.key)) return []
    const v = designScaled(designPoint, rule.key, kind)
    return v === null ? [] : [{ name: DESIGN_NAMES[rule.key], scaled: v }]
  }
  if (rule) return []
  const all: Candidate[] = []
  for (const key of Object.keys(DESIGN_POINT_QUANTITIES) as DesignPointKey[]) {
    if (DESIGN_POINT_QUANTITIES[key] !== kind) continue
    const v = designScaled(designPoint, key, kind)
    if (v !== null) all.push({ name: DESIGN_NAMES[key], scaled: v, side: sideOfKey(key) })
  }
  if (kind === 'pressure_gauge' || kind === 'pressure_absolute') all.push(...refrigerantPressures(designPoint))
  const side = sideOfField(field)
  return side === null ? all : all.filter((c) => c.side === side || c.side === undefined)
}

interface Limits {
  min?: number
  max?: number
}

/** The field's own fail limits (the warning levels where a side has none), on the judging scale. */
function ownLimits(field: ChecklistField, unit: string, kind: QuantityKind): Limits | null {
  const rule = field.rule
  if (!rule) return null
  let low: number | undefined
  let high: number | undefined
  switch (rule.type) {
    case 'range':
      low = rule.min ?? rule.warnMin
      high = rule.max ?? rule.warnMax
      break
    case 'nominal':
      low = rule.nominal - rule.tolerance
      high = rule.nominal + rule.tolerance
      break
    case 'nominal_pct':
      low = rule.nominal - (Math.abs(rule.nominal) * rule.tolerancePct) / 100
      high = rule.nominal + (Math.abs(rule.nominal) * rule.tolerancePct) / 100
      break
    default:
      return null
  }
  const out: Limits = {}
  if (low !== undefined) out.min = scaled(low, unit, kind)
  if (high !== undefined) out.max = scaled(high, unit, kind)
  return out.min === undefined && out.max === undefined ? null : out
}

function bandAroundDesign(candidates: Candidate[], scale: Scale): Limits {
  let min = Infinity
  let max = -Infinity
  for (const c of candidates) {
    const low = scale.by === 'ratio' ? c.scaled / scale.factor : c.scaled - scale.kelvin
    const high = scale.by === 'ratio' ? c.scaled * scale.factor : c.scaled + scale.kelvin
    min = Math.min(min, low)
    max = Math.max(max, high)
  }
  return { min, max }
}

/** The band beyond the limits: a ratio away from a limit on its own side of zero, or a fixed difference. */
function bandAroundLimits(limits: Limits, scale: Scale): Limits {
  const out: Limits = {}
  const { min, max } = limits
  if (scale.by === 'difference') {
    if (min !== undefined) out.min = min - scale.kelvin
    if (max !== undefined) out.max = max + scale.kelvin
    return out
  }
  const f = scale.factor
  if (min !== undefined && min !== 0) out.min = min > 0 ? min / f : min * f
  if (max !== undefined && max !== 0) out.max = max > 0 ? max * f : max / f
  return out
}

/** The inner band a suggested shift must land in: a factor of at most 2, or half the temperature difference. */
function closer(scale: Scale): Scale {
  return scale.by === 'ratio' ? { by: 'ratio', factor: Math.min(scale.factor, 2) } : { by: 'difference', kelvin: scale.kelvin / 2 }
}

const inside = (v: number, band: Limits) => (band.min === undefined || v >= band.min) && (band.max === undefined || v <= band.max)

/** The typed text as digits: true minus, decimal point; null when it is not a plain decimal number. */
function plainDigits(typed: string): { sign: string; int: string; frac: string; point: boolean } | null {
  const m = /^([-+]?)(\d*)(\.?)(\d*)$/.exec(typed.trim().replace(/\u2212/g, '-').replace(',', '.'))
  if (!m || (m[2] === '' && m[4] === '')) return null
  return { sign: m[1] === '-' ? '-' : '', int: m[2], frac: m[4], point: m[3] === '.' }
}

function digitsText(sign: string, int: string, frac: string): string {
  const body = frac ? `${int}.${frac}` : int
  return sign === '-' && /[1-9]/.test(body) ? `${MINUS}${body}` : body
}

/**
 * The typed digits with the decimal point moved `places` to the right (left when negative): "368" → "36.8", "4450" →
 * "445", "3.68" → "36.8". Zeros the shift moves past the point of a number typed without one are dropped (they only
 * held places); digits typed after a point are kept.
 */
export function shiftDecimalPoint(typed: string, places: number): { digits: string; value: number } | null {
  const d = plainDigits(typed)
  if (!d) return null
  let all = d.int + d.frac
  let at = d.int.length + places
  if (at < 0) {
    all = '0'.repeat(-at) + all
    at = 0
  }
  if (at > all.length) all += '0'.repeat(at - all.length)
  const int = all.slice(0, at).replace(/^0+(?=\d)/, '') || '0'
  let frac = all.slice(at)
  if (!d.point) frac = frac.replace(/0+$/, '')
  const value = Number(`${d.sign}${int}${frac ? `.${frac}` : ''}`)
  return Number.isFinite(value) ? { digits: digitsText(d.sign, int, frac), value } : null
}

const SMALL = ['', 'one', 'two', 'three', 'four', 'five', 'six', 'seven', 'eight', 'nine']
const PARTS = ['', '', 'half', 'a third', 'a quarter', 'a fifth', 'a sixth', 'a seventh', 'an eighth', 'a ninth']

/** "about ten times", "about a third of", "about 40 times": how a value stands against its reference, in words. */
function ratioWords(ratio: number): string {
  const near = (target: number) => ratio >= target * 0.75 && ratio <= target * 1.25
  if (ratio >= 1) {
    if (near(10)) return 'about ten times'
    if (near(100)) return 'about a hundred times'
    if (near(1000)) return 'about a thousand times'
    const n = Math.round(ratio)
    return n < 10 ? `about ${SMALL[n]} times` : `about ${formatNumber(ratio, 0)} times`
  }
  const inverse = 1 / ratio
  const nearInverse = (target: number) => inverse >= target * 0.75 && inverse <= target * 1.25
  if (nearInverse(10)) return 'about a tenth of'
  if (nearInverse(100)) return 'about a hundredth of'
  if (nearInverse(1000)) return 'about a thousandth of'
  const n = Math.round(inverse)
  if (n >= 2 && n < 10) return `about ${PARTS[n]} of`
  return `about ${formatNumber(ratio * 100, ratio * 100 < 1 ? 2 : 0)} % of`
}

/** The unit a difference of temperatures in `unit` is printed in. */
function differenceUnit(unit: string): string {
  return unit === 'degF' ? 'deltaF' : unit === 'degC' ? 'deltaC' : 'K'
}

function relation(value: number, reference: number, unit: string, kind: QuantityKind, scale: Scale): string {
  if (scale.by === 'difference') {
    const delta = value - reference
    const shown = formatQuantity(Math.abs(delta), differenceUnit(unit), 'temperature_difference')
    return `${shown} ${delta > 0 ? 'above' : 'below'}`
  }
  // Words in the entry's own unit, as the technician typed it (368 psig against 36.8 psig is "ten times").
  if (value > 0 && reference > 0) return ratioWords(value / reference)
  if (kind === 'pressure_gauge' || value * reference < 0 || reference === 0) return value > reference ? 'far above' : 'far below'
  return ratioWords(value / reference)
}

/**
 * Whether a typed number is far outside what the equipment makes plausible, and the decimal shift that would put it
 * back; null when it is plausible, cannot be judged (no design value and no limits), is computed, or is not a
 * measurement at all (physicalBoundsProblem refuses that instead). `typed` is the text as typed, for its digits.
 */
export function plausibilityQuestion(field: ChecklistField, entry: FieldEntry | null | undefined, context: PlausibilityContext, typed?: string): PlausibilityQuestion | null {
  if ((field.kind !== 'number' && field.kind !== 'timer') || field.computed || !field.quantity || !field.unit) return null
  const e = entry as { value?: unknown; unit?: unknown } | null | undefined
  if (!e || typeof e.value !== 'number' || !Number.isFinite(e.value) || typeof e.unit !== 'string') return null
  const kind = field.quantity
  if (!isUnitOf(kind, e.unit) || !isUnitOf(kind, field.unit)) return null
  if (physicalBoundsProblem(field, entry)) return null
  const scale = PLAUSIBILITY_SCALES[kind]
  const value = e.value
  const unit = e.unit
  const v = scaled(value, unit, kind)
  // The digits typed, when they are the number judged ("36.80" keeps its zero); otherwise the number itself.
  const text = typed !== undefined && Number(typed.trim().replace(/\u2212/g, '-').replace(',', '.')) === value ? typed : String(value)

  const candidates = designCandidates(field, kind, context.designPoint).filter((c) => scale.by === 'difference' || c.scaled > 0)
  let band: Limits
  let reference: Omit<PlausibilityReference, 'text'> & { scaled: number }
  if (candidates.length) {
    band = bandAroundDesign(candidates, scale)
    // Named after the design value nearest the reading (by ratio, or by difference for a temperature).
    const distance = (c: Candidate) => (scale.by === 'ratio' ? Math.abs(Math.log(Math.max(v, 1e-300) / c.scaled)) : Math.abs(v - c.scaled))
    const nearest = candidates.reduce((a, b) => (distance(b) < distance(a) ? b : a))
    reference = { source: 'design', name: nearest.name, scaled: nearest.scaled, value: unscaled(nearest.scaled, unit, kind) }
  } else {
    const limits = ownLimits(field, field.unit, kind)
    if (!limits) return null
    band = bandAroundLimits(limits, scale)
    const above = limits.max !== undefined && v > limits.max
    const limit = above ? limits.max! : (limits.min ?? limits.max!)
    reference = { source: 'limit', name: above || limits.min === undefined ? 'the maximum' : 'the minimum', scaled: limit, value: unscaled(limit, unit, kind) }
  }
  if (inside(v, band)) return null
  // A shift is offered only when it lands close to the reference (within half the band), so a light-load 100 A against
  // 420 A full-load amps is asked about but never "corrected" to 1000 A.
  const close = candidates.length ? bandAroundDesign(candidates, closer(scale)) : bandAroundLimits(ownLimits(field, field.unit, kind)!, closer(scale))

  const digits = plainDigits(text)
  const typedDigits = digits ? digitsText(digits.sign, digits.int || '0', digits.frac) : formatNumber(value, 6)
  const label = unitLabel(kind, unit)
  const enteredText = `${typedDigits} ${label}`
  let suggestion: PlausibilityQuestion['suggestion'] = null
  for (const places of [-1, 1, -2, 2]) {
    const shifted = shiftDecimalPoint(text, places)
    if (!shifted || !inside(scaled(shifted.value, unit, kind), close)) continue
    if (physicalBoundsProblem(field, { value: shifted.value, unit })) continue
    suggestion = { value: shifted.value, unit, digits: shifted.digits, text: `${shifted.digits} ${label}`, shift: 10 ** places }
    break
  }
  const referenceText = formatQuantity(reference.value, unit, kind)
  const message = `${enteredText} is ${relation(value, reference.value, unit, kind, scale)} ${reference.name} (${referenceText}).`
  return {
    fieldId: field.id,
    entered: { value, unit, digits: typedDigits, text: enteredText },
    reference: { source: reference.source, name: reference.name, value: reference.value, text: referenceText },
    band: {
      ...(band.min !== undefined && Number.isFinite(band.min) ? { min: unscaled(band.min, unit, kind) } : {}),
      ...(band.max !== undefined && Number.isFinite(band.max) ? { max: unscaled(band.max, unit, kind) } : {}),
      unit,
    },
    suggestion,
    message,
    question: suggestion ? `Did you mean ${suggestion.text}?` : null,
  }
}
