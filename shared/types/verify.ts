/** The answers of the public Verify page (`/api/verify`). */

export type VerifyOutcome = 'genuine_current' | 'genuine_superseded' | 'altered' | 'unknown'

/** What anyone may learn about a report: DESIGN.md keeps everything else to people with access. */
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
  /** The newer report of the same equipment and checklist, when this one was superseded. */
  supersededBy: PublicReportFacts | null
  sha256: string | null
  /** False when only a report number was looked up: no file was compared, so nothing about a copy is proven. */
  fileChecked: boolean
}
