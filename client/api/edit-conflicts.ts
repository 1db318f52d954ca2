import type { AffectedRun, DesignChangeOutcome } from '@shared/types/design-change'
import { ApiError } from './http'

export type { AffectedRun, DesignChangeOutcome } from '@shared/types/design-change'

/** A 409 `edit_conflict`: someone changed the record after it was opened here. `current` is the record as it is now. */
export interface EditConflict<T> {
  message: string
  current: T
}

/** The conflict an error carries, or null when it is another error. */
export function editConflictOf<T>(err: unknown): EditConflict<T> | null {
  if (!(err instanceof ApiError) || err.code !== 'edit_conflict' || !err.details.current) return null
  return { message: err.message, current: err.details.current as T }
}

/** The submitted runs an edit would void the signatures of (409 `affects_signed_runs`), or null for any other error. */
export function signedRunsOf(err: unknown): AffectedRun[] | null {
  if (!(err instanceof ApiError) || err.code !== 'affects_signed_runs') return null
  return Array.isArray(err.details.runs) ? (err.details.runs as AffectedRun[]) : []
}

/** "CH-2 · Centrifugal chiller start-up v3 · signed by Ada Tech on Dec 1, 4:42 PM". */
export function signedRunLine(run: AffectedRun): string {
  const when = run.signedAt ? new Date(run.signedAt).toLocaleString('en-US', { month: 'short', day: 'numeric', year: 'numeric', hour: 'numeric', minute: '2-digit' }) : null
  return [run.equipmentTag, run.checklist, run.performer ? `signed by ${run.performer}${when ? ` on ${when}` : ''}` : null].filter(Boolean).join(' · ')
}

/** What an edit did to runs, in words for a success message ("" when it reached none). */
export function outcomeText(runs: DesignChangeOutcome | undefined): string {
  if (!runs) return ''
  const parts: string[] = []
  if (runs.rejudged.length) parts.push(`${runs.rejudged.length} run${runs.rejudged.length === 1 ? '' : 's'} in progress re-judged`)
  if (runs.voided.length) parts.push(`${runs.voided.length} signature${runs.voided.length === 1 ? '' : 's'} voided and the run${runs.voided.length === 1 ? '' : 's'} returned to the technician`)
  return parts.join('; ')
}
