import { createHash } from 'node:crypto'
import type { DataSource } from 'typeorm'
import { verifySealedPdf, type SealVerification } from '../reports'
import { AppError } from '../errors/app-error'
import { listWords, localTime, reportSupersession, type ReportSupersession } from '@shared/record'
import type { PublicReportFacts, VerifyAnswer, VerifyOutcome } from '@shared/types/verify'
import { lineageOf } from './report.service'

export type { PublicReportFacts, VerifyAnswer, VerifyOutcome }

const REPORT_NUMBER = /SP-\d{4}-\d{6}/

interface ReportRow {
  id: string
  report_number: string
  equipment_id: string
  template_id: string
  tag: string
  project_name: string
  time_zone: string
  accepted_at: Date | null
  fails: number
  marginals: number
  ready_at: Date
}

// Everything Verify says comes from the report row, which keeps what the signed snapshot named at acceptance: a later
// rename of the equipment or the project changes nothing here.
const FACTS_SQL = `
  SELECT r.id, r.report_number, r.equipment_id, r.template_id, r.equipment_tag AS tag, r.project_name, r.time_zone, r.ready_at,
         r.accepted_at, r.fail_count AS fails, r.marginal_count AS marginals
    FROM report r
   WHERE r.status = 'ready'`

function facts(row: ReportRow): PublicReportFacts {
  return {
    reportNumber: row.report_number,
    equipmentTag: row.tag,
    projectName: row.project_name,
    acceptedAt: row.accepted_at ? new Date(row.accepted_at).toISOString() : null,
    acceptedAtLocal: row.accepted_at ? localTime(new Date(row.accepted_at), row.time_zone) : null,
    verdict: row.fails > 0 ? 'fail' : row.marginals > 0 ? 'marginal' : 'pass',
  }
}

/** Tells whether a PDF is a genuine archived report (current, partly superseded or superseded), an altered one, or unknown here. */
export class VerifyService {
  constructor(private readonly db: DataSource) {}

  /** The report's supersession by check among the issued reports of its equipment and checklist (their kept check indexes). */
  private async supersession(row: ReportRow): Promise<ReportSupersession> {
    const lineage = await lineageOf(this.db.manager, { equipmentId: row.equipment_id, templateId: row.template_id }, { readyOnly: true })
    const own = lineage.find((x) => x.reportNumber === row.report_number)
    // Without an acceptance time (a row older than the archive index) nothing can be ordered after it: it is current.
    return own ? reportSupersession(own, lineage) : reportSupersession({ reportNumber: row.report_number, acceptedAt: new Date(8.64e15).toISOString(), index: null }, lineage)
  }

  private async answerFor(row: ReportRow, reasons: string[], sha256: string | null): Promise<VerifyAnswer> {
    const s = await this.supersession(row)
    const fileChecked = sha256 !== null
    const n = row.report_number
    const by = listWords(s.by.map((b) => b.reportNumber))
    const retest = s.retest ? [s.retest] : []
    if (s.state === 'superseded') {
      const [newer] = (await this.db.query(`${FACTS_SQL} AND r.report_number = $1`, [s.by.at(-1)!.reportNumber])) as ReportRow[]
      return {
        outcome: 'genuine_superseded',
        headline: fileChecked ? `Genuine report ${n}, superseded by ${by}` : `${n} is an issued report, superseded by ${by}`,
        reasons: [
          ...reasons,
          s.performed === null
            ? `A later start-up of ${row.tag} with the same checklist was accepted and issued as ${by}.`
            : `Every check this report performed was performed again in a later start-up of ${row.tag} with the same checklist: ${by}.`,
          ...retest,
        ],
        report: facts(row),
        supersededBy: newer ? facts(newer) : null,
        supersession: s,
        sha256,
        fileChecked,
      }
    }
    if (s.state === 'partly') {
      const words = s.words.charAt(0).toLowerCase() + s.words.slice(1)
      const each = s.by.map((b) => `${b.reportNumber}: ${b.checks}`).join('; ')
      return {
        outcome: 'genuine_partly_superseded',
        headline: fileChecked ? `Genuine report ${n}; ${words}` : `${n} is an issued report; ${words}`,
        reasons: [
          ...reasons,
          `Later start-ups of ${row.tag} with the same checklist performed ${s.retested} of its ${s.performed} checks again (${each}). For the other ${s.performed! - s.retested!} it is still the current record.`,
          ...retest,
        ],
        report: facts(row),
        supersededBy: null,
        supersession: s,
        sha256,
        fileChecked,
      }
    }
    return {
      outcome: 'genuine_current',
      headline: fileChecked ? `Genuine report ${n}, and it is the current one` : `${n} is an issued report, and the current one`,
      reasons: [...reasons, ...retest],
      report: facts(row),
      supersededBy: null,
      supersession: s,
      sha256,
      fileChecked,
    }
  }

  /** The state of a report number (the QR code's link): genuine and current, partly superseded, superseded, or unknown. */
  async byNumber(reportNumber: string): Promise<VerifyAnswer> {
    const [row] = (await this.db.query(`${FACTS_SQL} AND r.report_number = $1`, [reportNumber])) as ReportRow[]
    if (!row) return { outcome: 'unknown', headline: `No issued report ${reportNumber} is in this archive`, reasons: ['The number may be mistyped, or the report was issued elsewhere.'], report: null, supersededBy: null, supersession: null, sha256: null, fileChecked: false }
    return this.answerFor(row, [`Report ${reportNumber} is in the archive.`, 'No file was compared: upload your copy to check that it is this report, unaltered.'], null)
  }

  /** Checks an uploaded file: its SHA-256 against the archive first, then its embedded seal. */
  async check(file: Buffer): Promise<VerifyAnswer> {
    if (!file.length) throw new AppError('empty_file', 'The file is empty', 400, { file: 'The file is empty' })
    if (!file.subarray(0, 1024).includes('%PDF-')) {
      throw new AppError('not_pdf', 'This file is not a PDF; only the PDF report itself can be checked', 415, { file: 'Not a PDF' })
    }
    const sha256 = createHash('sha256').update(file).digest('hex')
    const [archived] = (await this.db.query(`${FACTS_SQL} AND r.sha256 = $1`, [sha256])) as ReportRow[]
    if (archived) {
      return this.answerFor(archived, ['The file is byte for byte the one in the archive (same SHA-256).'], sha256)
    }
    let seal: SealVerification | null = null
    try {
      seal = await verifySealedPdf(file)
    } catch {
      seal = null
    }
    const claimed = file.toString('latin1').match(REPORT_NUMBER)?.[0] ?? null
    const [claimedRow] = claimed ? ((await this.db.query(`${FACTS_SQL} AND r.report_number = $1`, [claimed])) as ReportRow[]) : []
    if (seal?.altered || (claimedRow && seal?.signed)) {
      return {
        outcome: 'altered',
        headline: claimedRow ? `This is not the issued report ${claimedRow.report_number}: it was altered` : 'The file was altered after it was sealed',
        reasons: [
          seal?.altered ? 'The digital seal no longer matches the document: bytes were changed after sealing.' : 'The file differs from the archived report with this number.',
          ...(claimedRow ? [`The archived ${claimedRow.report_number} has a different SHA-256.`] : []),
        ],
        report: claimedRow ? facts(claimedRow) : null,
        supersededBy: null,
        supersession: null,
        sha256,
        fileChecked: true,
      }
    }
    if (claimedRow) {
      return {
        outcome: 'altered',
        headline: `This is not the issued report ${claimedRow.report_number}`,
        reasons: ['It names an archived report but its bytes differ and it carries no valid seal.'],
        report: facts(claimedRow),
        supersededBy: null,
        supersession: null,
        sha256,
        fileChecked: true,
      }
    }
    const reasons = seal === null
      ? ['The file could not be read as a sealed PDF (it may be damaged).']
      : seal.signed
        ? [`It carries a seal${seal.signerCommonName ? ` by "${seal.signerCommonName}"` : ''}, but no report with this content is in this archive.`]
        : ['It carries no digital seal and matches no archived report.']
    return { outcome: 'unknown', headline: 'This archive does not know this document', reasons, report: null, supersededBy: null, supersession: null, sha256, fileChecked: true }
  }
}
