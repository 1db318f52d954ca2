/** As 21 CFR Part 11 §11.50 asks of a signed record: a signature states who, in which role, when, and what it means. */
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
  /** Acceptance: the exceptions (shared/record/exceptions.ts ids) the signer acknowledged; null for a performer. */
  acknowledgedExceptions: string[] | null
  voided: boolean
  voidedAt: string | null
  voidReason: string | null
}
