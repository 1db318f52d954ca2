import type { ChecklistDefinition } from '../schemas/checklist'
import type { FindingSeverity } from '../types/run'
import { countRun, countedOf, fieldPlaces, type CountedReading, type RunCount } from './counting'
import { describeDisposition, type Disposition } from './disposition'

/**
 * Exceptions of a record (docs/REFERENCES.md §Record keeping): what is not closed when the owner's representative
 * accepts. Every fail that is not closed by resolved findings, every marginal with neither a justification nor a
 * resolved finding, every deferred or not-done item, and every open finding. The acceptance dialog lists them and the
 * acceptor acknowledges them by id; the report's cover says "Accepted with N exceptions" and its recommendations give
 * each one's follow-up. Critical findings block acceptance.
 */
export type ExceptionKind = 'fail' | 'marginal' | 'deferred' | 'not_done' | 'finding'

export interface RecordException {
  /** Stable id the acceptor acknowledges: `field:<fieldId>`, `step:<stepId>` or `finding:<findingId>`. */
  id: string
  kind: ExceptionKind
  /** The most severe open finding on it, if any. */
  severity: FindingSeverity | null
  stepId: string
  fieldId: string | null
  /** "Section › Step › Field". */
  where: string
  /** What it is, in one line. */
  detail: string
  /** What must still happen. */
  followUp: string
  findingIds: string[]
  dueDate: string | null
}

export const SEVERITY_WORDS: Record<FindingSeverity, { label: string; meaning: string }> = {
  minor: { label: 'Minor', meaning: 'Minor — note it and fix it at a convenient time; acceptance lists it as an exception while open' },
  major: { label: 'Major', meaning: 'Major — fix before acceptance, or the owner’s representative accepts it open as an acknowledged exception' },
  critical: { label: 'Critical', meaning: 'Critical — the machine must not run, and acceptance waits, until it is resolved' },
}

const RANK: Record<FindingSeverity, number> = { minor: 1, major: 2, critical: 3 }

interface FindingLike {
  id: string
  stepId: string
  fieldId: string | null
  severity: FindingSeverity
  status: 'open' | 'resolved'
  description: string
}

interface ReadingLike {
  fieldId: string
  justification?: string | null
  evaluation: { verdict: string; message: string; display?: unknown; answer?: unknown }
  disposition?: Disposition | null
  notApplicable?: boolean
  naReason?: string | null
}

export interface ExceptionSource {
  definition: ChecklistDefinition
  readings: Readonly<Record<string, ReadingLike>>
  steps: Readonly<Record<string, { stepId: string; disposition?: Disposition | null; notApplicable?: boolean; naReason?: string | null }>>
  findings: readonly FindingLike[]
}

function worst(findings: FindingLike[]): FindingSeverity | null {
  let w: FindingSeverity | null = null
  for (const f of findings) if (!w || RANK[f.severity] > RANK[w]) w = f.severity
  return w
}

/** The exceptions of a run, in checklist order, then findings not tied to a listed item. */
export function exceptionsOf(run: ExceptionSource, count?: RunCount): RecordException[] {
  const c = count ?? countRun(run.definition, countedOf(run).readings as CountedReading[], countedOf(run).steps)
  const places = fieldPlaces(run.definition)
  const titles = new Map<string, string>()
  for (const section of run.definition.sections) for (const step of section.steps) titles.set(step.id, `${section.title} › ${step.title}`)
  const out: RecordException[] = []
  const covered = new Set<string>()
  const seenSteps = new Set<string>()
  for (const r of c.results.values()) {
    const place = places.get(r.fieldId)!
    const label = place.field.label
    const where = `${titles.get(r.stepId)} › ${label}`
    const reading = run.readings[r.fieldId]
    const onField = run.findings.filter((f) => f.fieldId === r.fieldId)
    const open = onField.filter((f) => f.status === 'open')
    const closedByFindings = onField.length > 0 && open.length === 0
    const refs = onField.map((f) => f.id)
    if (r.outcome === 'fail' && !closedByFindings) {
      const justification = reading?.justification?.trim()
      out.push({
        id: `field:${r.fieldId}`,
        kind: 'fail',
        severity: worst(open),
        stepId: r.stepId,
        fieldId: r.fieldId,
        where,
        detail: reading?.evaluation.message ?? `${label} failed`,
        followUp: open.length
          ? `Resolve the finding${open.length > 1 ? 's' : ''} and re-test ${label.toLowerCase()}; record the re-test in a new run.`
          : `Accepted on the justification “${justification ?? 'none given'}”; re-test ${label.toLowerCase()} and record it in a new run.`,
        findingIds: refs,
        dueDate: null,
      })
      open.forEach((f) => covered.add(f.id))
    } else if (r.outcome === 'marginal' && !reading?.justification?.trim() && !closedByFindings) {
      out.push({
        id: `field:${r.fieldId}`,
        kind: 'marginal',
        severity: worst(open),
        stepId: r.stepId,
        fieldId: r.fieldId,
        where,
        detail: reading?.evaluation.message ?? `${label} is marginal`,
        followUp: open.length ? `Resolve the finding${open.length > 1 ? 's' : ''} on ${label.toLowerCase()}.` : `Investigate ${label.toLowerCase()} and watch it in the daily log; no justification was recorded.`,
        findingIds: refs,
        dueDate: null,
      })
      open.forEach((f) => covered.add(f.id))
    } else if ((r.outcome === 'deferred' || r.outcome === 'not_done') && r.disposition) {
      // A step's disposition is one exception for the step, not one per field.
      if (r.dispositionFrom === 'step' || r.dispositionFrom === 'input') {
        if (r.dispositionFrom === 'input' || seenSteps.has(r.stepId)) continue
        seenSteps.add(r.stepId)
      }
      const d = r.disposition
      const whole = r.dispositionFrom === 'step'
      out.push({
        id: whole ? `step:${r.stepId}` : `field:${r.fieldId}`,
        kind: r.outcome,
        severity: null,
        stepId: r.stepId,
        fieldId: whole ? null : r.fieldId,
        where: whole ? (titles.get(r.stepId) as string) : where,
        detail: describeDisposition(d),
        followUp: r.outcome === 'deferred' ? `Carry out and record by ${d.dueDate ?? 'the agreed date'}.` : 'Carry out when it is safe and possible, and record it in a new run.',
        findingIds: [],
        dueDate: d.dueDate,
      })
    }
  }
  for (const f of run.findings) {
    if (f.status !== 'open' || covered.has(f.id)) continue
    const field = f.fieldId ? places.get(f.fieldId)?.field : undefined
    out.push({
      id: `finding:${f.id}`,
      kind: 'finding',
      severity: f.severity,
      stepId: f.stepId,
      fieldId: f.fieldId,
      where: [titles.get(f.stepId) ?? f.stepId, field?.label].filter(Boolean).join(' › '),
      detail: f.description,
      followUp: `Resolve this ${f.severity} finding and record how.`,
      findingIds: [f.id],
      dueDate: null,
    })
  }
  return out
}

/** Open critical findings: acceptance waits until they are resolved. */
export function blockingFindings<F extends FindingLike>(findings: readonly F[]): F[] {
  return findings.filter((f) => f.status === 'open' && f.severity === 'critical')
}

/** "Accepted with 3 exceptions" / "Accepted" — the cover's words for an accepted record. */
export function acceptanceWords(exceptions: number): string {
  return exceptions === 0 ? 'Accepted' : `Accepted with ${exceptions} exception${exceptions === 1 ? '' : 's'}`
}
