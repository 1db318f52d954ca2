import { EngineeringError, type ErrorQuantity, type ErrorRange } from '../engineering/errors'
import { distinguishingDecimals, formatNumber } from '../units/format'
import { convert, displayUnit, isQuantityKind, isUnitOf, unitSpec, type UnitSystem } from '../units/quantities'

/*
 * A calculation's refusal said again in the project's units. Engineering functions take plain numbers in fixed units
 * (psig, °F, kPa (abs)) and word their errors in those; a checklist judged for a project is read in the project's
 * unit system, so "got 2638.5956837373687 kPa (abs)" in an I-P project becomes "368 psig is outside …" — the digits
 * each unit is printed with, a true minus, and enough digits that a value never prints equal to the limit it is past
 * (docs/REFERENCES.md §Units, conversions and printed digits). The code and details stay as they were.
 */

function isQuantity(q: unknown): q is ErrorQuantity {
  const x = q as ErrorQuantity | null
  return !!x && isQuantityKind(x.kind) && typeof x.value === 'number' && Number.isFinite(x.value) && isUnitOf(x.kind, x.unit)
}

function isRange(r: unknown): r is ErrorRange {
  const x = r as ErrorRange | null
  return !!x && isQuantityKind(x.kind) && Number.isFinite(x.min) && Number.isFinite(x.max) && isUnitOf(x.kind, x.unit)
}

/** A plain number with three significant digits at most ("2639", "0.0123", "−10"), for a value whose unit is not known. */
export function sensibleNumber(value: number): string {
  if (value === 0) return '0'
  const magnitude = Math.floor(Math.log10(Math.abs(value)))
  return formatNumber(value, Math.max(0, 2 - magnitude))
}

function reworded(err: EngineeringError, system: UnitSystem): string | null {
  const d = err.details ?? {}
  if (isQuantity(d.reading) && isRange(d.covers) && typeof d.subject === 'string') {
    const reading = d.reading
    const covers = d.covers
    const unit = displayUnit(reading.kind, system)
    const rangeUnit = displayUnit(covers.kind, system)
    const value = convert(reading.value, reading.unit, unit, reading.kind)
    const min = convert(covers.min, covers.unit, rangeUnit, covers.kind)
    const max = convert(covers.max, covers.unit, rangeUnit, covers.kind)
    const extra = covers.kind === reading.kind ? distinguishingDecimals(value, [min, max], unitSpec(reading.kind, unit).decimals) : 0
    const q = (v: number, u: string, kind: ErrorRange['kind'], more = 0) => `${formatNumber(v, unitSpec(kind, u).decimals + more)} ${unitSpec(kind, u).label}`
    const range = (r: ErrorRange, u: string, more = 0) =>
      `${q(convert(r.min, r.unit, u, r.kind), u, r.kind, more)} to ${q(convert(r.max, r.unit, u, r.kind), u, r.kind, more)}`
    const also = isRange(d.coversAlso) ? `, ${range(d.coversAlso, displayUnit(d.coversAlso.kind, system))}` : ''
    return `${q(value, unit, reading.kind, extra)} is outside ${d.subject} (${range(covers, rangeUnit, extra)}${also})`
  }
  // requireNonNegative / requirePositive: a named number with no unit; only its digits are tidied.
  if (err.code === 'NEGATIVE_VALUE' && typeof d.name === 'string' && typeof d.value === 'number' && Number.isFinite(d.value)) {
    return `${d.name} cannot be negative, got ${sensibleNumber(d.value)}`
  }
  return null
}

/** `err` with its message in the project's units and sensible digits (the same error when there is nothing to reword). */
export function problemInProjectUnits(err: EngineeringError, system: UnitSystem): EngineeringError {
  const message = reworded(err, system)
  return message === null || message === err.message ? err : new EngineeringError(err.code, message, err.details)
}
