import * as yup from 'yup'

/**
 * Why a check of a run has no reading of its own (docs/REFERENCES.md §Record keeping). One word used to carry all
 * of these; each now has its own count and its own wording in the record:
 * - `not_applicable`: the item does not exist on this machine (an air-cooled starter has no coolant level).
 * - `by_others`: someone else did it (the manufacturer's start-up engineer made the first start): who, the reference of
 *   their record, and whether it was witnessed.
 * - `verified_earlier`: done and recorded in an earlier report of this equipment, named by its number; carried over.
 * - `deferred`: to be done later (seasonal load, a part on order), with the reason and a due date; an open item.
 * - `not_done`: not done because it was unsafe or impossible, with the reason; an exception of the record.
 */
export const DISPOSITION_KINDS = ['not_applicable', 'by_others', 'verified_earlier', 'deferred', 'not_done'] as const
export type DispositionKind = (typeof DISPOSITION_KINDS)[number]

export interface Disposition {
  kind: DispositionKind
  /** Why (required for not applicable, deferred and not done; a remark otherwise). */
  reason: string | null
  /** by_others: who did it (person and firm). */
  by: string | null
  /** by_others: the reference of their record (e.g. the manufacturer's start-up report number). */
  reference: string | null
  /** by_others: whether our technician witnessed it. */
  witnessed: boolean | null
  /** verified_earlier: the number of the report where the check was done. */
  reportNumber: string | null
  /** deferred: the date it is due, YYYY-MM-DD. */
  dueDate: string | null
}

/** The words every screen, report, CSV and answer uses: label, count heading, and the short tag of one item. */
export const DISPOSITION_WORDS: Record<DispositionKind, { label: string; count: string; option: string }> = {
  not_applicable: { label: 'Not applicable', count: 'Not applicable', option: 'Not applicable: does not exist on this machine' },
  by_others: { label: 'Done by others', count: 'Done by others', option: 'Done by others (e.g. the manufacturer’s start-up engineer)' },
  verified_earlier: { label: 'Verified earlier', count: 'Carried over', option: 'Verified in an earlier report' },
  deferred: { label: 'Deferred', count: 'Deferred', option: 'Deferred: to be done later, with a due date' },
  not_done: { label: 'Not done', count: 'Not done', option: 'Not done: unsafe or not possible now' },
}

const text = (max: number) => yup.string().trim().max(max, `\${path} must be at most ${max} characters`).nullable().default(null)
const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/

/** A report number as issued (SP-2026-0042) or as another firm writes it: letters, digits and - / . only. */
const REPORT_NUMBER = /^[A-Za-z0-9][A-Za-z0-9/._-]{0,63}$/

function realDate(s: string): boolean {
  if (!ISO_DATE.test(s)) return false
  const d = new Date(`${s}T00:00:00Z`)
  return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === s
}

/**
 * A disposition as sent with a reading or a step change. Each kind asks for what makes it a record: a reason, who
 * and their reference, the earlier report, or a due date; a missing one is a 400 naming the field.
 */
export const dispositionSchema = yup
  .object({
    kind: yup
      .mixed<DispositionKind>()
      .required('${path} is required')
      .oneOf([...DISPOSITION_KINDS], `\${path} must be one of ${DISPOSITION_KINDS.join(', ')}`),
    reason: text(2000),
    by: text(200),
    reference: text(200),
    witnessed: yup.boolean().strict().nullable().default(null),
    reportNumber: text(64).test('report-number', '${path} is not a report number', (v) => !v || REPORT_NUMBER.test(v)),
    dueDate: yup.string().nullable().default(null).test('date', '${path} must be a date (YYYY-MM-DD)', (v) => !v || realDate(v)),
  })
  .noUnknown('${path} has unknown keys: ${unknown}')
  .test('complete', function (d) {
    if (!d) return true
    const base = this.path ? `${this.path}.` : ''
    const need = (key: keyof Disposition, message: string) => this.createError({ path: `${base}${key}`, message })
    const has = (v: string | null | undefined) => typeof v === 'string' && v.trim().length > 0
    switch (d.kind) {
      case 'not_applicable':
        return has(d.reason) || need('reason', 'Say why this does not exist on this machine')
      case 'by_others':
        if (!has(d.by)) return need('by', 'Say who did it (person and firm)')
        if (!has(d.reference)) return need('reference', 'Give the reference of their record (e.g. their start-up report number)')
        if (typeof d.witnessed !== 'boolean') return need('witnessed', 'Say whether you witnessed it')
        return true
      case 'verified_earlier':
        return has(d.reportNumber) || need('reportNumber', 'Give the number of the report where this was done')
      case 'deferred':
        if (!has(d.reason)) return need('reason', 'Say why it is deferred')
        if (!has(d.dueDate)) return need('dueDate', 'Give the date it is due')
        return true
      case 'not_done':
        return has(d.reason) || need('reason', 'Say why it was not done (unsafe or not possible)')
    }
    return true
  })

/** A disposition with only the details its kind keeps (the rest null), so two equal records compare equal. */
export function normalizeDisposition(d: Partial<Disposition> & { kind: DispositionKind }): Disposition {
  const t = (v: string | null | undefined) => (typeof v === 'string' && v.trim() ? v.trim() : null)
  const base: Disposition = { kind: d.kind, reason: t(d.reason), by: null, reference: null, witnessed: null, reportNumber: null, dueDate: null }
  if (d.kind === 'by_others') return { ...base, by: t(d.by), reference: t(d.reference), witnessed: typeof d.witnessed === 'boolean' ? d.witnessed : null }
  if (d.kind === 'verified_earlier') return { ...base, reportNumber: t(d.reportNumber) }
  if (d.kind === 'deferred') return { ...base, dueDate: t(d.dueDate) }
  return base
}

/**
 * The disposition of a reading or step as kept: the structured one, or (records made before dispositions existed)
 * the old "not applicable" flag and its reason.
 */
export function dispositionOf(x: { disposition?: Disposition | null; notApplicable?: boolean; naReason?: string | null } | null | undefined): Disposition | null {
  if (!x) return null
  if (x.disposition) return x.disposition
  if (x.notApplicable) return normalizeDisposition({ kind: 'not_applicable', reason: x.naReason ?? null })
  return null
}

/** One line for a disposition as the record prints it: "Done by others: A. Tech, Example Chillers Ltd, report MS-118 (witnessed)". */
export function describeDisposition(d: Disposition): string {
  const w = DISPOSITION_WORDS[d.kind].label
  switch (d.kind) {
    case 'by_others':
      return `${w}: ${d.by ?? 'someone else'}${d.reference ? `, their record ${d.reference}` : ''}${d.witnessed === true ? ' (witnessed)' : d.witnessed === false ? ' (not witnessed)' : ''}${d.reason ? `. ${d.reason}` : ''}`
    case 'verified_earlier':
      return `Carried over from ${d.reportNumber ?? 'an earlier report'}${d.reason ? `. ${d.reason}` : ''}`
    case 'deferred':
      return `${w} until ${d.dueDate ?? 'a later date'}${d.reason ? `: ${d.reason}` : ''}`
    default:
      return `${w}${d.reason ? `: ${d.reason}` : ''}`
  }
}
