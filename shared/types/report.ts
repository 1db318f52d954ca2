import type { RecordEquipment, RecordProject } from '../record/snapshot'
import type { RunDetail } from './run'

/** DESIGN.md §7 and 21 CFR Part 11 §11.50: a signature states who, in which role, when, and what it means. */
export type SignatureMeaning = 'performed_by' | 'accepted_by'

export interface SignatureRecord {
  id: string
  meaning: SignatureMeaning
  /** The words printed beside the signature: "Performed by" / "Accepted by". */
  meaningLabel: string
  signerId: string
  printedName: string
  role: string
  signedAtUtc: string
  /** The same instant in the project's time zone, written out, e.g. "2026-12-01 16:42 CST". */
  signedAtLocal: string
  timeZone: string
  /** The drawn signature as a PNG data URL (signature_pad). */
  imageDataUrl: string
  /** SHA-256 (hex) of the canonical snapshot of the run that was signed. */
  snapshotSha256: string
  voided: boolean
  voidedAt: string | null
  voidReason: string | null
}

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
  /** Photos of the run as data URLs, by run attachment id (only images; PDFs are listed by name). */
  photoDataUrls: Record<string, string>
}
