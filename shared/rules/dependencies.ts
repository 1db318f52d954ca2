import type { ChecklistDefinition, ChecklistField } from '../schemas/checklist'
import { parseExpression } from './expression'

/**
 * The fields one field's verdict reads besides its own entry: the inputs of its computed expression, the load field
 * and the test-condition field of a rated-at-load rule, and the capture a timer takes its drive start from. (The
 * run's own barometric reading is read by every field; `dependentFields` handles it.)
 */
export function fieldInputs(field: ChecklistField): string[] {
  const inputs = new Set<string>()
  if (field.computed) for (const ref of parseExpression(field.computed.expression).fieldRefs) inputs.add(ref)
  const rule = field.rule as { type?: string; loadField?: string; onlyWhen?: { field: string } } | undefined
  if (rule?.type === 'rated_at_load') {
    if (rule.loadField) inputs.add(rule.loadField)
    if (rule.onlyWhen?.field) inputs.add(rule.onlyWhen.field)
  }
  if (field.fromDriveStart) inputs.add(field.fromDriveStart)
  inputs.delete(field.id)
  return [...inputs]
}

interface Graph {
  all: string[]
  /** Field id → the fields that read it directly. */
  readers: Map<string, string[]>
  siteBarometric: Set<string>
  dependents: Map<string, ReadonlySet<string>>
}

const graphs = new WeakMap<ChecklistDefinition, Graph>()

function graphOf(definition: ChecklistDefinition): Graph {
  let graph = graphs.get(definition)
  if (graph) return graph
  const all: string[] = []
  const readers = new Map<string, string[]>()
  const siteBarometric = new Set<string>()
  for (const section of definition.sections) {
    for (const step of section.steps) {
      for (const field of step.fields) {
        all.push(field.id)
        if (field.siteBarometric) siteBarometric.add(field.id)
        let inputs: string[]
        try {
          inputs = fieldInputs(field)
        } catch {
          // An expression that does not parse is judged (as an error) on every evaluation; it reads nothing.
          inputs = []
        }
        for (const input of inputs) readers.set(input, [...(readers.get(input) ?? []), field.id])
      }
    }
  }
  graph = { all, readers, siteBarometric, dependents: new Map() }
  graphs.set(definition, graph)
  return graph
}

/**
 * The fields whose verdict can change when `fieldId`'s entry (or its not-applicable state) changes: the field itself
 * and every field that reads it, directly or through other computed fields. The run's barometric reading moves the
 * gauge-to-absolute conversions and saturation temperatures of the whole run, so it makes every field a dependent.
 * Kept per definition object (a published version never changes).
 */
export function dependentFields(definition: ChecklistDefinition, fieldId: string): ReadonlySet<string> {
  const graph = graphOf(definition)
  const known = graph.dependents.get(fieldId)
  if (known) return known
  let out: Set<string>
  if (graph.siteBarometric.has(fieldId)) out = new Set(graph.all)
  else {
    out = new Set([fieldId])
    const todo = [fieldId]
    while (todo.length) {
      for (const reader of graph.readers.get(todo.pop()!) ?? []) {
        if (!out.has(reader)) {
          out.add(reader)
          todo.push(reader)
        }
      }
    }
  }
  graph.dependents.set(fieldId, out)
  return out
}
