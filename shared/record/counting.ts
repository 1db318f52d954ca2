import type { ChecklistDefinition, ChecklistField } from '../schemas/checklist'
import type { RunProgress } from '../types/run'

export type FieldPlace = { field: ChecklistField; stepId: string; sectionId: string }

/** Where each field of a checklist version lives (its step and section), in checklist order. */
export function fieldPlaces(definition: ChecklistDefinition): Map<string, FieldPlace> {
  const places = new Map<string, FieldPlace>()
  for (const section of definition.sections) {
    for (const step of section.steps) for (const field of step.fields) places.set(field.id, { field, stepId: step.id, sectionId: section.id })
  }
  return places
}

/** The little of a reading that counting needs: its verdict and whether it was marked not applicable. */
export interface CountedReading {
  fieldId: string
  verdict: string
  notApplicable: boolean
}

/** Counts by verdict over the fields that count: not-applicable ones (field or step) apart. */
export function progressOf(definition: ChecklistDefinition, readings: Iterable<CountedReading>, naSteps: ReadonlySet<string>): RunProgress {
  const places = fieldPlaces(definition)
  const p: RunProgress = { required: 0, answered: 0, pass: 0, marginal: 0, fail: 0, incomplete: 0, notApplicable: 0 }
  for (const r of readings) {
    const place = places.get(r.fieldId)
    if (!place) continue
    if (r.notApplicable || naSteps.has(place.stepId)) {
      p.notApplicable += 1
      continue
    }
    const required = place.field.required !== false
    if (r.verdict === 'incomplete') {
      if (required) {
        p.required += 1
        p.incomplete += 1
      }
      continue
    }
    if (required) {
      p.required += 1
      p.answered += 1
    }
    p[r.verdict as 'pass' | 'marginal' | 'fail'] += 1
  }
  return p
}
