import type { SignatureMeaning, SignatureRecord } from '@shared/types/report'
import type { RunDetail } from '@shared/types/run'
import { ApiError, http } from './http'

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

/** What the signing dialog says for a refused signature: on a field, or as a problem above the form; `reload` asks for the review again. */
export interface SignRefusal {
  field: 'password' | 'signatureImage' | null
  fieldMessage: string | null
  problem: { type: 'error' | 'warning'; title: string; detail?: string; items?: string[] } | null
  reload: boolean
}

export function describeSignRefusal(err: unknown): SignRefusal {
  const none = { field: null, fieldMessage: null, problem: null, reload: false }
  if (!(err instanceof ApiError)) return { ...none, problem: { type: 'error', title: err instanceof Error ? err.message : String(err) } }
  switch (err.code) {
    case 'wrong_password':
      return { ...none, field: 'password', fieldMessage: `${err.fields.password ?? 'Password is incorrect'}: nothing was signed. Type it again.` }
    case 'invalid_signature_image':
      return { ...none, field: 'signatureImage', fieldMessage: err.fields.signatureImage ?? err.message }
    case 'blank_signature':
      // The server's words say how much of the pad must carry ink.
      return { ...none, field: 'signatureImage', fieldMessage: err.message }
    case 'same_person':
      return { ...none, problem: { type: 'error', title: 'You performed this start-up, so you cannot also accept it.', detail: err.message } }
    case 'snapshot_mismatch':
      return {
        ...none,
        reload: true,
        problem: { type: 'warning', title: 'What you reviewed is not what the performer signed.', detail: 'The review has been loaded again with the signed record. Check it, then accept again.' },
      }
    case 'exceptions_not_acknowledged':
      return { ...none, reload: true, problem: { type: 'warning', title: 'Acknowledge each exception before accepting.', detail: err.message } }
    case 'critical_findings_open':
      return { ...none, problem: { type: 'error', title: 'A critical finding is open: acceptance waits until it is resolved.', detail: err.message } }
    case 'changed_since_signed':
      return { ...none, reload: true, problem: { type: 'error', title: 'The run changed after its performer signed it.', detail: err.message } }
    case 'run_changed':
      return {
        ...none,
        reload: true,
        problem: {
          type: 'warning',
          title: 'The run changed after you opened the review.',
          detail: 'The review has been loaded again and the summary above shows the run as it is now. Check it, then sign again.',
        },
      }
    case 'not_ready':
      return { ...none, reload: true, problem: { type: 'error', title: 'The run cannot be signed yet.', items: err.fields.review ? err.fields.review.split('; ') : [err.message] } }
    case 'already_signed':
    case 'not_submitted':
      return { ...none, reload: true, problem: { type: 'warning', title: err.message, detail: 'The review has been loaded again.' } }
    default:
      if (err.status === 403) return { ...none, problem: { type: 'error', title: 'You cannot sign this run.', detail: err.message } }
      return { ...none, problem: { type: 'error', title: err.message } }
  }
}
