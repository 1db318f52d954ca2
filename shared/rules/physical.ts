import { BAROMETRIC_RANGE_KPA } from '../engineering/atmosphere'
import type { ChecklistField } from '../schemas/checklist'
import type { FieldEntry } from '../schemas/reading'
import { formatQuantity } from '../units/format'
import { isUnitOf, toCanonical, type QuantityKind } from '../units/quantities'

// Canonical SI: K, Pa, m³/s, s, A, V, W, Hz, rad/s, m/s, m.
const ABSOLUTE_ZERO_MARGIN_K = 0
// Plant-room readings outside −40 °C … 150 °C are typing errors, not measurements: nothing on a water-cooled chiller,
// its oil or its pumps runs there (common practice; the shipped water and refrigerant tables stop well inside it).
const PLAUSIBLE_K = { min: 233.15, max: 423.15 }
// A gauge reading cannot be lower than a perfect vacuum: −101.325 kPa (g), i.e. −14.696 psig.
const FULL_VACUUM_GAUGE_PA = -101_325

const CANNOT_BE_NEGATIVE: readonly QuantityKind[] = [
  'volumetric_flow', 'time', 'current', 'voltage', 'frequency', 'rotational_speed', 'vibration_velocity', 'pressure_absolute', 'cooling_capacity', 'power',
]

/**
 * Why an entered value cannot be a real measurement (negative flow, absolute pressure below vacuum, a temperature
 * outside what a plant room holds), or null. Limits in the checklist judge good from bad; this refuses the impossible.
 */
export function physicalBoundsProblem(field: ChecklistField, entry: FieldEntry | null | undefined): string | null {
  if (!entry || !field.quantity || (field.kind !== 'number' && field.kind !== 'timer' && field.kind !== 'time_series')) return null
  const kind = field.quantity
  const e = entry as { value?: unknown; unit?: unknown }
  if (typeof e.unit !== 'string' || !isUnitOf(kind, e.unit)) return null
  const values = field.kind === 'time_series' && Array.isArray(e.value) ? (e.value as Array<[number, number]>).map((p) => p[1]) : [e.value]
  if (field.kind === 'time_series' && Array.isArray(e.value) && (e.value as Array<[number, number]>).some((p) => p[0] < 0)) {
    return `${field.label}: time cannot be negative`
  }
  for (const value of values) {
    if (typeof value !== 'number' || !Number.isFinite(value)) continue
    const si = toCanonical(value, e.unit, kind)
    const shown = formatQuantity(value, e.unit, kind)
    if (CANNOT_BE_NEGATIVE.includes(kind) && si < 0) return `${field.label} ${shown} cannot be negative`
    if (kind === 'pressure_gauge' && si < FULL_VACUUM_GAUGE_PA) return `${field.label} ${shown} is below a perfect vacuum`
    if (field.siteBarometric && (si < BAROMETRIC_RANGE_KPA.min * 1000 || si > BAROMETRIC_RANGE_KPA.max * 1000)) {
      return `${field.label} ${shown} is outside ${BAROMETRIC_RANGE_KPA.min}–${BAROMETRIC_RANGE_KPA.max} kPa (17.7–32.5 inHg), the barometric pressure of any inhabited site`
    }
    if (kind === 'temperature') {
      if (si <= ABSOLUTE_ZERO_MARGIN_K) return `${field.label} ${shown} is below absolute zero`
      if (si < PLAUSIBLE_K.min || si > PLAUSIBLE_K.max) return `${field.label} ${shown} is outside −40 °C to 150 °C (−40 °F to 302 °F), beyond anything measured on this plant`
    }
  }
  return null
}
