import type { PublicReportFacts, VerifyAnswer, VerifyOutcome } from '@shared/types/verify'
import { http, upload } from './http'

export type { PublicReportFacts, VerifyAnswer, VerifyOutcome }

export const verifyApi = {
  byNumber: (reportNumber: string) => http.get<{ answer: VerifyAnswer }>(`/verify/${encodeURIComponent(reportNumber)}`).then((r) => r.answer),
  file: (file: File) => upload<{ answer: VerifyAnswer }>('/verify', 'file', file, 'POST').then((r) => r.answer),
}
