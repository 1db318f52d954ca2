import { http, upload } from './http'

export type VerifyOutcome = 'genuine_current' | 'genuine_superseded' | 'altered' | 'unknown'

export interface PublicReportFacts {
  reportNumber: string
  equipmentTag: string
  projectName: string
  acceptedAt: string | null
  verdict: 'pass' | 'marginal' | 'fail'
}

export interface VerifyAnswer {
  outcome: VerifyOutcome
  headline: string
  reasons: string[]
  report: PublicReportFacts | null
  supersededBy: PublicReportFacts | null
  sha256: string | null
}

export const verifyApi = {
  byNumber: (reportNumber: string) => http.get<{ answer: VerifyAnswer }>(`/verify/${encodeURIComponent(reportNumber)}`).then((r) => r.answer),
  file: (file: File) => upload<{ answer: VerifyAnswer }>('/verify', 'file', file, 'POST').then((r) => r.answer),
}
