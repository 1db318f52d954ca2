import { DESIGN_POINT_LABELS, DESIGN_POINT_QUANTITIES, designPointKeysFor, isDesignPointKey, type DesignPointKey, type EquipmentKind } from '../schemas/design-point'
import { canonicalUnit, displayUnit, formatQuantity, fromCanonical, toCanonical, unitLabel, type UnitSystem } from '../units'

export interface DesignPointRow {
  key: DesignPointKey
  label: string
  unit: string
  /** How the unit is written for people (°F, tons, ft of water). */
  unitLabel: string
  /** The value in the project's unit system, or null when the design point leaves it out. */
  value: number | null
  text: string
}

// Water-side pressure drops and pump head are read in feet of water in I-P practice, not psid.
const PREFERRED_UNITS: Partial<Record<DesignPointKey, Record<UnitSystem, string>>> = {
  pumpDesignHead: { IP: 'ftH2O', SI: 'kPad' },
  evaporatorPressureDrop: { IP: 'ftH2O', SI: 'kPad' },
  condenserPressureDrop: { IP: 'ftH2O', SI: 'kPad' },
  // Motor nameplates in I-P are rated in horsepower (NEMA MG 1); 1 hp = 745.7 W (NIST SP 811).
  motorRatedPower: { IP: 'hp', SI: 'kW' },
}

/** The unit a design-point value is shown and entered in for a unit system. */
export function designPointUnit(key: DesignPointKey, system: UnitSystem): string {
  return PREFERRED_UNITS[key]?.[system] ?? displayUnit(DESIGN_POINT_QUANTITIES[key], system)
}

/** A stored (canonical SI) design point as rows in the project's unit system, in the kind's order. */
export function designPointRows(designPoint: Record<string, unknown>, kind: EquipmentKind, system: UnitSystem): DesignPointRow[] {
  return designPointKeysFor(kind).filter(isDesignPointKey).map((key) => {
    const quantity = DESIGN_POINT_QUANTITIES[key]
    const unit = designPointUnit(key, system)
    const stored = designPoint[key] as { value: number; unit: string } | undefined
    const value = stored ? fromCanonical(stored.value, unit, quantity) : null
    return { key, label: DESIGN_POINT_LABELS[key], unit, unitLabel: unitLabel(quantity, unit), value, text: value === null ? '—' : formatQuantity(value, unit, quantity) }
  })
}

/** Turns form values (numbers in the project's units) into the `{ value, unit }` entries the API expects. */
export function designPointInput(values: Record<string, number | null | undefined>, kind: EquipmentKind, system: UnitSystem): Record<string, { value: number; unit: string }> {
  const out: Record<string, { value: number; unit: string }> = {}
  for (const key of designPointKeysFor(kind).filter(isDesignPointKey)) {
    const v = values[key]
    if (typeof v === 'number' && Number.isFinite(v)) out[key] = { value: v, unit: designPointUnit(key, system) }
  }
  return out
}

/** Rounds a converted value for an input box without losing what matters. */
export function roundForInput(value: number | null): number | null {
  return value === null ? null : Number(value.toPrecision(6))
}

/** The design point as stored: every numeric value converted to its canonical SI unit, other entries as given. */
export function canonicalDesignPoint(entered: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = {}
  for (const [key, value] of Object.entries(entered)) {
    if (value === undefined) continue
    if (isDesignPointKey(key) && value && typeof value === 'object' && 'value' in value && 'unit' in value) {
      const kind = DESIGN_POINT_QUANTITIES[key]
      const q = value as { value: number; unit: string }
      out[key] = { value: toCanonical(q.value, q.unit, kind), unit: canonicalUnit(kind) }
    } else {
      out[key] = value
    }
  }
  return out
}
