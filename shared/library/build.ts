import type { ChecklistField, FieldRule } from '../schemas/checklist'
import type { QuantityKind } from '../units/quantities'

// Small constructors so the templates read as lists of checks. Each returns a plain ChecklistField: the
// definitions stay data, exactly as they are stored in a template version.

interface Extra {
  help?: string
  cautions?: string[]
  required?: boolean
}

function withExtra(field: ChecklistField, extra: Extra): ChecklistField {
  const out: ChecklistField = { ...field, required: extra.required ?? true }
  if (extra.help) out.help = extra.help
  if (extra.cautions?.length) out.cautions = extra.cautions
  return out
}

/** A measured number in `unit` of `quantity`, judged by `rule` when one is given. */
export function measured(id: string, label: string, quantity: QuantityKind, unit: string, rule?: FieldRule, extra: Extra = {}): ChecklistField {
  return withExtra({ id, label, kind: 'number', quantity, unit, required: true, ...(rule ? { rule } : {}) }, extra)
}

/** A number computed from other fields by `expression` (see shared/rules/expression.ts), judged by `rule`. */
export function computed(id: string, label: string, quantity: QuantityKind, unit: string, expression: string, rule?: FieldRule, extra: Extra = {}): ChecklistField {
  return withExtra({ id, label, kind: 'number', quantity, unit, required: true, computed: { expression }, ...(rule ? { rule } : {}) }, extra)
}

/** A stopwatch reading in seconds. */
export function timer(id: string, label: string, rule: FieldRule, extra: Extra = {}): ChecklistField {
  return withExtra({ id, label, kind: 'timer', quantity: 'time', unit: 's', required: true, rule }, extra)
}

/** A question whose answer must be `expected` (yes by default). */
export function yesNo(id: string, label: string, extra: Extra & { expected?: boolean } = {}): ChecklistField {
  return withExtra({ id, label, kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: extra.expected ?? true } }, extra)
}

/**
 * A choice among `choices` ([value, label]); `pass` choices pass, `marginal` ones are marginal, the rest fail. With no
 * `pass` choices the field has no criterion: its answer is recorded (a test condition, not a check).
 */
export function choice(id: string, label: string, choices: Array<[string, string]>, pass: string[], marginal: string[] = [], extra: Extra = {}): ChecklistField {
  return withExtra(
    {
      id, label, kind: 'choice', required: true,
      choices: choices.map(([value, text]) => ({ value, label: text })),
      ...(pass.length ? { rule: { type: 'choice' as const, pass, ...(marginal.length ? { marginal } : {}) } } : {}),
    },
    extra,
  )
}

/** Free text. */
export function text(id: string, label: string, extra: Extra = {}): ChecklistField {
  return withExtra({ id, label, kind: 'text', required: true }, extra)
}

/** Photos attached to the field. */
export function photo(id: string, label: string, extra: Extra = {}): ChecklistField {
  return withExtra({ id, label, kind: 'photo', required: true }, extra)
}

/** Readings against seconds from a start command, judged by their shape. */
export function series(id: string, label: string, quantity: QuantityKind, unit: string, rule: FieldRule, extra: Extra = {}): ChecklistField {
  return withExtra({ id, label, kind: 'time_series', quantity, unit, required: true, rule }, extra)
}
