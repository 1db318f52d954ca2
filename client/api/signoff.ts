import type { SignatureMeaning, SignatureRecord } from '@shared/types/report'
import type { RunDetail } from '@shared/types/run'
import { http } from './http'

export type ReportStatus = 'pending' | 'ready' | 'failed'

/** `GET /api/runs/:runId/report`: the handover report of an accepted run and where it stands. */
export interface RunReport {
  id: string
  runId: string
  reportNumber: string
  status: ReportStatus
  paper: 'A4' | 'Letter'
  attempts: number
  lastError: string | null
  sha256: string | null
  contentSha256: string | null
  sizeBytes: number | null
  createdAt: string
  readyAt: string | null
  downloadUrl: string | null
}

export type OutboxStatus = 'queued' | 'sent' | 'failed'

export interface OutboxMessage {
  id: string
  kind: string
  runId: string | null
  to: string[]
  subject: string
  status: OutboxStatus
  attempts: number
  lastError: string | null
  nextAttemptAt: string | null
  sentAt: string | null
  createdAt: string
  attachments: { filename: string; contentType: string; sha256: string }[]
  /** Only in the single-message answer. */
  text?: string
}

export interface SignRequest {
  meaning: SignatureMeaning
  password: string
  /** PNG data URL from the signature pad. */
  signatureImage: string
  /** From the review the signer looked at. */
  snapshotSha256: string
}

const runUrl = (runId: string) => `/runs/${encodeURIComponent(runId)}`

export const signoffApi = {
  /** Throws ApiError: 400 wrong_password (fields.password), 409 run_changed / not_ready / already_signed, 403 wrong role. */
  sign: (runId: string, body: SignRequest) => http.post<{ signature: SignatureRecord }>(`${runUrl(runId)}/sign`, body).then((r) => r.signature),
  returnRun: (runId: string, body: { comments: string; password: string }) => http.post<{ run: RunDetail }>(`${runUrl(runId)}/return`, body).then((r) => r.run),
  signatures: (runId: string) => http.get<{ signatures: SignatureRecord[] }>(`${runUrl(runId)}/signatures`).then((r) => r.signatures),
  report: (runId: string) => http.get<{ report: RunReport | null }>(`${runUrl(runId)}/report`).then((r) => r.report),
  retryReport: (runId: string) => http.post<{ report: RunReport }>(`${runUrl(runId)}/report/retry`).then((r) => r.report),
  outbox: () => http.get<{ messages: OutboxMessage[] }>('/outbox').then((r) => r.messages),
  outboxMessage: (mailId: string) => http.get<{ message: OutboxMessage }>(`/outbox/${encodeURIComponent(mailId)}`).then((r) => r.message),
}

export const REPORT_STATUS_WORDS: Record<ReportStatus, string> = {
  pending: 'Being prepared',
  ready: 'Ready',
  failed: 'Could not be prepared',
}

export const OUTBOX_STATUS_WORDS: Record<OutboxStatus, string> = {
  queued: 'Waiting to send',
  sent: 'Sent',
  failed: 'Gave up',
}

/** The words each meaning states above the signature (21 CFR Part 11 §11.50). */
export const MEANING_STATEMENTS: Record<SignatureMeaning, string> = {
  performed_by: 'I performed this start-up and the readings are true.',
  accepted_by: 'I witnessed and accept this start-up on behalf of the owner.',
}
