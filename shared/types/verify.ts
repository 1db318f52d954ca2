/** The answers of the public Verify page (`/api/verify`). */

import type { ReportSupersession } from '../record/supersession'

/**
 * `genuine_partly_superseded`: later start-ups of the same equipment and checklist performed some of its checks again;
 * for the others it is still the current record. `genuine_superseded`: every check it performed has a newer result.
 */
export type VerifyOutcome = 'genuine_current' | 'genuine_partly_superseded' | 'genuine_superseded' | 'altered' | 'unknown'

/** What anyone may learn about a report: everything else stays with the people who have access to the project. */
export interface PublicReportFacts {
  reportNumber: string
  equipmentTag: string
  projectName: string
  acceptedAt: string | null
  /** The same instant in the site's time zone, as the report prints it ("2026-10-05 15:01 CDT"). */
  acceptedAtLocal: string | null
  verdict: 'pass' | 'marginal' | 'fail'
}

export interface VerifyAnswer {
  outcome: VerifyOutcome
  /** One plain sentence for the page's headline. */
  headline: string
  reasons: string[]
  report: PublicReportFacts | null
  /** The newest report of the same equipment and checklist, when this one was superseded as a whole. */
  supersededBy: PublicReportFacts | null
  /** Supersession by check (shared/record/supersession.ts), for a genuine report; null otherwise. */
  supersession: ReportSupersession | null
  sha256: string | null
  /** False when only a report number was looked up: no file was compared, so nothing about a copy is proven. */
  fileChecked: boolean
}
