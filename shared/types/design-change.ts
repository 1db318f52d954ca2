import type { RunState } from './run'

/** A run that an equipment or project edit reaches: one in progress (re-judged) or submitted (its signature voided). */
export interface AffectedRun {
  runId: string
  state: RunState
  equipmentTag: string
  /** The checklist and version, e.g. "Centrifugal chiller start-up v3". */
  checklist: string
  /** Printed name on the performer's live signature (submitted runs), or null. */
  performer: string | null
  /** When the performer signed (ISO), or null. */
  signedAt: string | null
}

/** What an edit did to runs: which were re-judged with the new values, which had the performer's signature voided. */
export interface DesignChangeOutcome {
  rejudged: AffectedRun[]
  voided: AffectedRun[]
}

/** `409 affects_signed_runs`: the edit would void these runs' performer signatures; resend with `confirmVoid: true`. */
export interface SignedRunsRefusal {
  runs: AffectedRun[]
}
