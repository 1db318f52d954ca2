import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'
import sharp from 'sharp'
import type { DataSource } from 'typeorm'
import type { ReportInput } from '@shared/types/report'
import { AppError } from '../errors/app-error'
import { Equipment, Organization, Project, Report, Run, RunAttachment, Signature } from '../entities'
import { renderMailText, type MailService } from '../mail/mail.service'
import type { StorageService } from '../storage/storage'
import { recordAudit } from './audit.service'
import { systemClock, type Clock } from './clock'
import type { EquipmentService } from './equipment.service'
import type { ProjectService } from './project.service'
import type { RunService } from './run.service'
import { localTime, type SigningService } from './signing.service'

/** Turns the report input into the sealed PDF (Chromium rendering, then the organisation's PKCS#7 seal). */
export interface ReportRenderer {
  /** Opens (or, for the demo, creates) the organisation's signing certificate; says which one. */
  prepare(): Promise<{ commonName: string; fingerprintSha256: string; created: boolean; selfSigned: boolean }>
  render(input: ReportInput): Promise<{ pdf: Buffer; sealInfo: Record<string, unknown> }>
  close(): Promise<void>
}

/** SHA-256 of the report content: RFC 8785 canonical JSON of everything the report prints, without this hash itself. */
export function reportContentSha256(input: Omit<ReportInput, 'contentSha256'>): string {
  const { contentSha256: _omit, ...content } = input as ReportInput
  return createHash('sha256').update(canonicalize(content) as string).digest('hex')
}

const MAX_ATTEMPTS = 3

function yearIn(date: Date, timeZone: string): string {
  return new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric' }).format(date)
}

/**
 * Copies what the archive filters and searches on onto the report as it is issued: project, equipment, checklist,
 * technician, acceptance time, counts, and a full-text vector over tag, serial, model, notes and findings.
 */
async function indexForArchive(tx: import('typeorm').EntityManager, reportId: string, input: ReportInput, acceptedAt: string | null, technicianId: string | null) {
  const readings = Object.values(input.run.readings)
  const fails = readings.filter((r) => !r.notApplicable && r.evaluation.verdict === 'fail').length
  const marginals = readings.filter((r) => !r.notApplicable && r.evaluation.verdict === 'marginal').length
  const openFindings = input.run.findings.filter((f) => f.status === 'open').length
  const notes = Object.values(input.run.steps).map((s) => s.note).filter(Boolean).join(' ')
  const findings = input.run.findings.map((f) => `${f.description} ${f.resolution ?? ''}`).join(' ')
  await tx.query(
    `UPDATE report SET project_id = $2, equipment_id = $3, template_id = $4, technician_id = $5, accepted_at = $6,
            fail_count = $7, marginal_count = $8, open_finding_count = $9,
            search = setweight(to_tsvector('simple', $10), 'A') || setweight(to_tsvector('english', $11), 'B') || to_tsvector('english', $12)
      WHERE id = $1`,
    [
      reportId, input.project.id, input.equipment.id, input.run.templateId, technicianId, acceptedAt, fails, marginals, openFindings,
      `${input.equipment.tag} ${input.equipment.tag.replace(/-/g, '')} ${input.equipment.serialNumber} ${input.reportNumber}`,
      `${input.equipment.manufacturer} ${input.equipment.model} ${input.run.templateName}`,
      `${notes} ${findings}`,
    ],
  )
}

export interface ReportView {
  id: string
  runId: string
  reportNumber: string
  status: Report['status']
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

export function reportView(r: Report): ReportView {
  return {
    id: r.id,
    runId: r.runId,
    reportNumber: r.reportNumber,
    status: r.status,
    paper: r.paper,
    attempts: r.attempts,
    lastError: r.lastError,
    sha256: r.sha256,
    contentSha256: r.contentSha256,
    sizeBytes: r.sizeBytes,
    createdAt: r.createdAt.toISOString(),
    readyAt: r.readyAt?.toISOString() ?? null,
    downloadUrl: r.status === 'ready' ? `/api/runs/${r.runId}/report.pdf` : null,
  }
}

/** The handover report of an accepted run: created pending on acceptance, rendered and sealed by a job, archived, mailed. */
export class ReportService {
  /** Hands a pending report to the job queue; without a queue the report waits (and is picked up at the next start). */
  enqueueJob?: (reportId: string) => Promise<void>

  constructor(
    private readonly db: DataSource,
    private readonly deps: {
      runs: RunService
      projects: ProjectService
      equipment: EquipmentService
      signing: SigningService
      storage: StorageService
      mail: MailService
      publicUrl: string
      renderer: () => ReportRenderer
      /** When report rows are created (the system clock unless the demo loader replays history). */
      clock?: Clock
    },
  ) {}

  /** Creates the pending report of an accepted run (once) and queues its rendering. */
  async requestFor(runId: string): Promise<Report> {
    const run = await this.db.getRepository(Run).findOneByOrFail({ id: runId })
    if (run.state !== 'accepted') throw new AppError('not_accepted', 'A report is made only for an accepted run', 409)
    let report = await this.db.getRepository(Report).findOneBy({ runId })
    if (!report) {
      const project = await this.db.getRepository(Project).findOneByOrFail({ id: run.projectId })
      const accepted = await this.db.getRepository(Signature).findOneBy({ runId, meaning: 'accepted_by', voided: false })
      const [{ n }] = await this.db.query(`SELECT nextval('report_number_seq')::int AS n`)
      // The year is the year of acceptance where the project is, so a report accepted on 31 December keeps that year.
      const year = yearIn(accepted?.signedAt ?? (this.deps.clock ?? systemClock)(), project.timeZone)
      const reportNumber = `SP-${year}-${String(n).padStart(6, '0')}`
      report = await this.db.getRepository(Report).save({ runId, reportNumber, status: 'pending' as const, paper: project.reportPaper, createdAt: (this.deps.clock ?? systemClock)() })
      // Archive columns are filled at once, while the report is pending (and again when it is issued), so the archive
      // can filter and count a report that is still waiting for its turn in the queue.
      const input = await this.buildInput(report)
      await this.db.transaction((tx) => indexForArchive(tx, report!.id, input, input.signatures.find((s) => s.meaning === 'accepted_by' && !s.voided)?.signedAtUtc ?? null, input.signatures.find((s) => s.meaning === 'performed_by' && !s.voided)?.signerId ?? null))
    }
    if (report.status === 'pending') await this.enqueueJob?.(report.id)
    return report
  }

  async forRun(runId: string): Promise<Report | null> {
    return this.db.getRepository(Report).findOneBy({ runId })
  }

  /** Every report the job queue has not finished, for the worker to take up at start. */
  async pendingIds(): Promise<string[]> {
    return (await this.db.getRepository(Report).find({ where: { status: 'pending' }, select: { id: true } })).map((r) => r.id)
  }

  /** Everything the report prints, read from the archive-ready run. */
  async buildInput(report: Report): Promise<ReportInput> {
    const run = await this.deps.runs.detailForReport(report.runId)
    const project = await this.deps.projects.get(run.projectId)
    const projectRow = await this.db.getRepository(Project).findOneByOrFail({ id: run.projectId })
    const org = await this.db.getRepository(Organization).findOneByOrFail({ id: projectRow.organizationId })
    const equipmentRow = await this.db.getRepository(Equipment).findOneOrFail({ where: { id: run.equipmentId }, relations: { nameplatePhoto: true } })
    const photoDataUrls: Record<string, string> = {}
    const links = await this.db.getRepository(RunAttachment).find({ where: { runId: run.id }, relations: { attachment: true } })
    for (const link of links.filter((l) => l.attachment.mimeType.startsWith('image/'))) {
      const data = await this.deps.storage.read(link.attachment.storageKey, link.attachment.sha256)
      const jpeg = await sharp(data).rotate().resize(1000, 1000, { fit: 'inside', withoutEnlargement: true }).jpeg({ quality: 80 }).toBuffer()
      photoDataUrls[link.id] = `data:image/jpeg;base64,${jpeg.toString('base64')}`
    }
    const input: Omit<ReportInput, 'contentSha256'> = {
      reportNumber: report.reportNumber,
      organizationName: org.name,
      paper: report.paper,
      project,
      equipment: this.deps.equipment.detail(equipmentRow),
      run,
      signatures: await this.deps.signing.list(run.id),
      verifyUrl: `${this.deps.publicUrl.replace(/\/$/, '')}/verify/${report.reportNumber}`,
      generatedAtUtc: new Date().toISOString(),
      photoDataUrls,
    }
    return { ...input, contentSha256: reportContentSha256(input) }
  }

  /** The job: render, seal, archive, mail. A failure is recorded with its reason; the run's data is never touched. */
  async process(reportId: string): Promise<Report> {
    const report = await this.db.getRepository(Report).findOneByOrFail({ id: reportId })
    if (report.status !== 'pending') return report
    try {
      const input = await this.buildInput(report)
      const { pdf, sealInfo } = await this.deps.renderer().render(input)
      const stored = await this.deps.storage.save(pdf, 'reports', 'pdf')
      await this.db.transaction(async (tx) => {
        const acceptedBy = input.signatures.find((s) => s.meaning === 'accepted_by' && !s.voided)
        const performedBy = input.signatures.find((s) => s.meaning === 'performed_by' && !s.voided)
        // Indexed while the report is still pending: once ready, the row is frozen.
        await indexForArchive(tx, report.id, input, acceptedBy?.signedAtUtc ?? null, performedBy?.signerId ?? null)
        await tx.getRepository(Report).save({
          ...report,
          status: 'ready' as const,
          storageKey: stored.key,
          sha256: stored.sha256,
          contentSha256: input.contentSha256,
          sizeBytes: stored.size,
          sealInfo,
          readyAt: new Date(),
          attempts: report.attempts + 1,
          lastError: null,
        })
        await recordAudit(tx, {
          actorId: null,
          action: 'report.issue',
          entityType: 'report',
          entityId: report.id,
          projectId: input.project.id,
          after: { runId: report.runId, reportNumber: report.reportNumber, sha256: stored.sha256, contentSha256: input.contentSha256 },
        })
        const accepted = input.signatures.find((s) => s.meaning === 'accepted_by' && !s.voided)
        const performed = input.signatures.find((s) => s.meaning === 'performed_by' && !s.voided)
        await this.deps.mail.queue(tx, {
          kind: 'report_issued',
          runId: report.runId,
          to: input.project.distributionList,
          subject: `Start-up report ${report.reportNumber}: ${input.equipment.tag}, ${input.project.name}`,
          text: renderMailText('report-issued', {
            equipmentTag: input.equipment.tag,
            projectName: input.project.name,
            ownerRepName: accepted?.printedName ?? '',
            performerName: performed?.printedName ?? '',
            acceptedAtLocal: accepted ? localTime(new Date(accepted.signedAtUtc), input.project.timeZone) : '',
            reportNumber: report.reportNumber,
            verifyUrl: input.verifyUrl,
          }),
          attachments: [{ filename: `${report.reportNumber}.pdf`, storageKey: stored.key, sha256: stored.sha256, contentType: 'application/pdf' }],
        })
      })
    } catch (err) {
      const attempts = report.attempts + 1
      const message = (err as Error).message.slice(0, 1000)
      await this.db.getRepository(Report).update(report.id, { attempts, lastError: message, status: attempts >= MAX_ATTEMPTS ? 'failed' : 'pending' })
      throw err
    }
    return this.db.getRepository(Report).findOneByOrFail({ id: reportId })
  }

  /** Puts a report that failed back in the queue (after the cause, e.g. a missing browser, was fixed). */
  async retry(report: Report): Promise<Report> {
    if (report.status !== 'failed') throw new AppError('not_failed', `Report ${report.reportNumber} is ${report.status}; only a failed report is retried`, 409)
    await this.db.getRepository(Report).update(report.id, { status: 'pending', attempts: 0 })
    await this.enqueueJob?.(report.id)
    return this.db.getRepository(Report).findOneByOrFail({ id: report.id })
  }

  async pdf(report: Report): Promise<Buffer> {
    if (report.status !== 'ready' || !report.storageKey || !report.sha256) throw new AppError('not_ready', `Report ${report.reportNumber} is not ready yet`, 409)
    return this.deps.storage.read(report.storageKey, report.sha256)
  }
}
