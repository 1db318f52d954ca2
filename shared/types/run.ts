import type { ChecklistDefinition } from '../schemas/checklist'
import type { FieldEntry } from '../schemas/reading'
import type { FieldEvaluation } from '../rules/evaluate'
import type { AttachmentSummary } from './api'
import type { SignatureRecord } from './signature'
import type { Disposition } from '../record/disposition'
import type { RecordException } from '../record/exceptions'
import type { ByOthersItem } from '../record/counting'
import type { RunSupersedes } from '../record/supersession'

/** A run's states: in_progress → submitted (performer signed) → accepted, or returned to the technician. */
export type RunState = 'in_progress' | 'submitted' | 'accepted' | 'returned'
export const EDITABLE_RUN_STATES: readonly RunState[] = ['in_progress', 'returned']

export type FindingSeverity = 'minor' | 'major' | 'critical'
export type FindingStatus = 'open' | 'resolved'

/** The counts of a run by the one counting rule (shared/record/counting.ts `countRun`). */
export interface RunProgress {
  /** Every check: judged, recorded, or with a disposition (an optional field left blank is not a check). */
  checks: number
  /** Checks with an acceptance criterion: pass + marginal + fail + incomplete. */
  judged: number
  /** The same as `checks` (what the runner's progress counts towards). */
  required: number
  /** Checks with an outcome other than incomplete. */
  answered: number
  pass: number
  marginal: number
  fail: number
  incomplete: number
  /** Values with no acceptance criterion: shown neutrally, never a pass. */
  recorded: number
  notApplicable: number
  byOthers: number
  verifiedEarlier: number
  deferred: number
  notDone: number
}

export interface RunSummary {
  id: string
  projectId: string
  projectCode: string
  projectName: string
  equipmentId: string
  equipmentTag: string
  equipmentKind: string
  templateId: string
  templateName: string
  templateVersionNumber: number
  state: RunState
  /** Optimistic-locking version of the run itself (state changes); readings carry their own. */
  version: number
  startedAt: string
  startedByName: string | null
  updatedAt: string
  progress: RunProgress
  openFindings: number
}

/** One field of a run: what was entered and the server's authoritative verdict. Every field of the version has one. */
export interface RunReading {
  fieldId: string
  entry: FieldEntry | null
  /** Why the field has no reading of its own (not applicable, by others, verified earlier, deferred, not done). */
  disposition: Disposition | null
  /** True when a disposition is set (kept for records made before dispositions existed). */
  notApplicable: boolean
  /** The disposition's reason. */
  naReason: string | null
  /** Why a fail is accepted without a finding. */
  justification: string | null
  evaluation: FieldEvaluation
  /** Per-field optimistic-locking version; 0 when nobody has touched the field. */
  version: number
  updatedAt: string | null
  updatedByName: string | null
}

export interface RunStepState {
  stepId: string
  note: string
  disposition: Disposition | null
  notApplicable: boolean
  naReason: string | null
  version: number
  updatedAt: string | null
  updatedByName: string | null
}

export interface FindingSummary {
  id: string
  runId: string
  stepId: string
  fieldId: string | null
  severity: FindingSeverity
  description: string
  status: FindingStatus
  resolution: string | null
  resolvedAt: string | null
  resolvedByName: string | null
  createdAt: string
  createdByName: string | null
  attachmentIds: string[]
  /** Edit version: send it back with an edit; one made on an older version is refused (409 `edit_conflict`). Not part of the signed snapshot. */
  version: number
}

export interface RunAttachment extends AttachmentSummary {
  stepId: string
  fieldId: string | null
  findingId: string | null
  /** `GET` URLs of the file and (images only) its thumbnail. */
  url: string
  thumbnailUrl: string | null
}

export interface RunDetail extends RunSummary {
  unitSystem: 'IP' | 'SI'
  /** The site's barometric pressure, kPa, from the project (stated, or from its elevation, else sea level): gauge readings are read against it. */
  siteBarometricKpa: number
  definition: ChecklistDefinition
  /** The equipment's design point in canonical SI (`{ value, unit }`), as `evaluateField` takes it. */
  designPoint: Record<string, unknown>
  readings: Record<string, RunReading>
  steps: Record<string, RunStepState>
  findings: FindingSummary[]
  attachments: RunAttachment[]
  /** Signatures on the run, voided ones included (they stay on record). */
  signatures: SignatureRecord[]
}

/** Answer of `PUT /api/runs/:runId/readings/:fieldId`: the field, and every field again (computed ones follow). */
export interface ReadingSaved {
  reading: RunReading
  /** The readings this save changed: the saved one and every reading whose verdict followed it (computed fields). */
  readings: Record<string, RunReading>
  progress: RunProgress
  /** True when this change id had been applied before (a retry after a lost answer). */
  duplicate: boolean
}

/** Body of a 409 `reading_conflict`: what is on the server now, so the person can choose. */
export interface ReadingConflict {
  error: { code: 'reading_conflict' | 'step_conflict'; message: string; fields: Record<string, string> }
  current: RunReading | RunStepState
}

export interface ReviewItem {
  sectionId: string
  stepId: string
  fieldId: string
  label: string
  verdict: 'fail' | 'marginal' | 'incomplete'
  message: string
  findingIds: string[]
  justification: string | null
}

export interface RunReview {
  counts: RunProgress
  /** Every fail and marginal, with its finding(s) or justification. */
  problems: ReviewItem[]
  /** Required fields with no value and not marked not applicable. */
  missingRequired: ReviewItem[]
  openFindings: FindingSummary[]
  /** What is not closed: listed in the acceptance dialog, acknowledged by the acceptor, printed on the report. */
  exceptions: RecordException[]
  /** Ids of open critical findings: acceptance waits until they are resolved. */
  blockingFindings: string[]
  /** What others did, for the performer's statement ("… except the items recorded as done by others"). */
  byOthers: ByOthersItem[]
  /** Fails with neither a finding nor a justification, and missing required values, block signing. */
  canSign: boolean
  blockers: string[]
  /** SHA-256 of the run's canonical snapshot now: send it back when signing, so a run that changed meanwhile is refused. */
  snapshotSha256: string
  /**
   * What accepting this run supersedes among the earlier accepted reports of the same equipment and checklist (how many
   * of whose checks), and what it carries over from where: shown before the performer signs and before acceptance.
   */
  supersession: RunSupersedes
}
