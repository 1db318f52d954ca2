import type {
  FindingSummary,
  ReadingSaved,
  RunAttachment,
  RunDetail,
  RunReading,
  RunReview,
  RunState,
  RunStepState,
  RunSummary,
} from '@shared/types/run'
import type { ApiErrorBody } from '@shared/types/api'
import type { FindingCreateInput, FindingUpdateInput, ReadingChangeInput, StepChangeInput } from '@shared/schemas/run'
import { ApiError, http, retryAfterMs } from './http'

/** An API error that keeps the whole answer: a 409 conflict carries what is on the server now in `current`. */
export class RunApiError extends ApiError {
  constructor(
    status: number,
    code: string,
    message: string,
    fields: Record<string, string>,
    readonly current: RunReading | RunStepState | null,
    retryAfter: number | null = null,
  ) {
    super(status, code, message, fields, {}, retryAfter)
    this.name = 'RunApiError'
  }
}

const NETWORK_MESSAGE = 'The server cannot be reached. What you entered is kept on this device and sent when the connection returns.'

async function send<T>(method: 'PUT' | 'POST', url: string, body: BodyInit, headers: Record<string, string>): Promise<T> {
  let res: Response
  try {
    res = await fetch(`/api${url}`, { method, credentials: 'same-origin', headers: { Accept: 'application/json', ...headers }, body })
  } catch {
    throw new RunApiError(0, 'network', NETWORK_MESSAGE, {}, null)
  }
  const text = await res.text()
  let data: unknown
  try {
    data = text ? JSON.parse(text) : undefined
  } catch {
    data = undefined
  }
  if (!res.ok) {
    const parsed = data as { error?: ApiErrorBody; current?: RunReading | RunStepState } | undefined
    const err = parsed?.error
    throw new RunApiError(
      res.status,
      err?.code ?? `http_${res.status}`,
      err?.message ?? `The server answered ${res.status} ${res.statusText}`,
      err?.fields ?? {},
      parsed?.current ?? null,
      retryAfterMs(res.headers.get('Retry-After')),
    )
  }
  return data as T
}

const putJson = <T>(url: string, body: unknown) => send<T>('PUT', url, JSON.stringify(body), { 'Content-Type': 'application/json' })

export interface RunListQuery {
  state?: RunState
  projectId?: string
  equipmentId?: string
  mine?: boolean
}

const runUrl = (runId: string) => `/runs/${encodeURIComponent(runId)}`

export const runsApi = {
  /** Every run of the query, read a page at a time (the server pages by change time; `nextCursor` reads on). */
  list: async (query: RunListQuery = {}) => {
    const runs: RunSummary[] = []
    let cursor: string | null = null
    do {
      const params = new URLSearchParams()
      for (const [k, v] of Object.entries(query)) if (v !== undefined) params.set(k, String(v))
      if (cursor) params.set('cursor', cursor)
      const qs = params.toString()
      const page: { runs: RunSummary[]; nextCursor: string | null } = await http.get(`/runs${qs ? `?${qs}` : ''}`)
      runs.push(...page.runs)
      cursor = page.nextCursor
    } while (cursor)
    return runs
  },
  listForEquipment: (equipmentId: string) => http.get<{ runs: RunSummary[] }>(`/equipment/${encodeURIComponent(equipmentId)}/runs`).then((r) => r.runs),
  start: (equipmentId: string, templateId: string) =>
    http.post<{ run: RunDetail }>(`/equipment/${encodeURIComponent(equipmentId)}/runs`, { templateId }).then((r) => r.run),
  get: (runId: string) => http.get<{ run: RunDetail }>(runUrl(runId)).then((r) => r.run),
  review: (runId: string) => http.get<{ review: RunReview }>(`${runUrl(runId)}/review`).then((r) => r.review),

  /** Throws RunApiError; a 409 `reading_conflict` carries the server's reading in `current`. */
  saveReading: (runId: string, fieldId: string, change: ReadingChangeInput) =>
    putJson<ReadingSaved>(`${runUrl(runId)}/readings/${encodeURIComponent(fieldId)}`, change),
  /** Throws RunApiError; a 409 `step_conflict` carries the server's step in `current`. */
  saveStep: (runId: string, stepId: string, change: StepChangeInput) =>
    putJson<{ step: RunStepState }>(`${runUrl(runId)}/steps/${encodeURIComponent(stepId)}`, change),

  createFinding: (runId: string, input: FindingCreateInput) =>
    http.post<{ finding: FindingSummary }>(`${runUrl(runId)}/findings`, input).then((r) => r.finding),
  /** Throws ApiError; a 409 `edit_conflict` carries the finding as it is now (see editConflictOf). */
  updateFinding: (runId: string, findingId: string, input: FindingUpdateInput) =>
    http.patch<{ finding: FindingSummary }>(`${runUrl(runId)}/findings/${encodeURIComponent(findingId)}`, input).then((r) => r.finding),

  /** Multipart upload of one photo or PDF for a step, optionally tied to a field or a finding. */
  uploadAttachment: (runId: string, file: File, where: { stepId: string; fieldId?: string | null; findingId?: string | null }) => {
    const form = new FormData()
    form.append('stepId', where.stepId)
    if (where.fieldId) form.append('fieldId', where.fieldId)
    if (where.findingId) form.append('findingId', where.findingId)
    form.append('file', file, file.name)
    return send<{ attachment: RunAttachment }>('POST', `${runUrl(runId)}/attachments`, form, {}).then((r) => r.attachment)
  },
}

/** A change id; `crypto.randomUUID` exists only in secure contexts, so a plant-network address over http gets the same from random bytes. */
export function newChangeId(): string {
  if (typeof crypto !== 'undefined' && typeof crypto.randomUUID === 'function') return crypto.randomUUID()
  const b = crypto.getRandomValues(new Uint8Array(16))
  b[6] = (b[6] & 0x0f) | 0x40
  b[8] = (b[8] & 0x3f) | 0x80
  const h = [...b].map((x) => x.toString(16).padStart(2, '0')).join('')
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`
}
