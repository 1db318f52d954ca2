import type { ChecklistField } from '@shared/schemas/checklist'
import { displayUnit, unitLabel, type UnitSystem } from '@shared/units'

/**
 * The unit the technician types in: the field's own unit when the template is written in the project's unit system;
 * otherwise the project's unit for the quantity. Times stay in the field's unit (hours of heater time stay hours).
 */
export function entryUnitFor(field: ChecklistField, projectSystem: UnitSystem, templateSystem: UnitSystem): string | null {
  if (!field.quantity || !field.unit) return null
  if (projectSystem === templateSystem || field.quantity === 'time') return field.unit
  try {
    return displayUnit(field.quantity, projectSystem)
  } catch {
    return field.unit
  }
}

export function entryUnitLabelFor(field: ChecklistField, unit: string | null): string {
  if (!unit || !field.quantity) return ''
  try {
    return unitLabel(field.quantity, unit)
  } catch {
    return unit
  }
}

/** Which timer a timer field needs: the soft-starter ramp (start command → full speed) or the plain stopwatch. */
export function isStarterRampField(field: ChecklistField): boolean {
  return field.kind === 'timer' && /starter|full speed/i.test(`${field.id} ${field.label}`)
}
