import type { RecordEquipment, RecordProject } from './record'
import type { RunDetail } from './run'
import type { SignatureRecord } from './signature'

export type { SignatureMeaning, SignatureRecord } from './signature'

/** Everything the handover report prints; the renderer reads nothing else. */
export interface ReportInput {
  reportNumber: string
  organizationName: string
  paper: 'A4' | 'Letter'
  /** The project and the equipment as the signed snapshot names them. */
  project: RecordProject
  equipment: RecordEquipment
  run: RunDetail
  signatures: SignatureRecord[]
  /** SHA-256 of the signed snapshot the report is rendered from: the hash both signatures carry. */
  snapshotSha256: string
  /** Absolute URL printed under the QR code, e.g. https://startproof.example/verify/<reportNumber>. */
  verifyUrl: string
  /** SHA-256 (hex) of the report content (canonical JSON of this input without this field), printed in the verification block. */
  contentSha256: string
  generatedAtUtc: string
  /**
   * A re-test: what it superseded among the earlier reports of the same equipment and checklist, and what it carried
   * over from where, in words (shared/record/supersession.ts), as kept with the report at acceptance. Absent for a first
   * report that carries nothing over.
   */
  supersedes?: string | null
  /** Photos of the run as data URLs, by run attachment id (only images; PDFs are listed by name). */
  photoDataUrls: Record<string, string>
}
