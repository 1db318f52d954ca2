import { createHash, randomUUID } from 'node:crypto'
import canonicalize from 'canonicalize'
import sharp from 'sharp'
import { In, type DataSource, type EntityManager } from 'typeorm'
import { checkIndexOf, countRunRecord, localTime, runDetailFromSnapshot, runSupersedes, signatureRecord, supersedesWords, type CheckIndex, type IssuedChecks, type RunSnapshot } from '@shared/record'
import type { ReportInput } from '@shared/types/report'
import { AppError } from '../errors/app-error'
import { Project, Report, Run, RunAttachment, Signature } from '../entities'
import { renderMailText, type MailService } from '../mail/mail.service'
import type { StorageService } from '../storage/storage'
import { recordAudit } from './audit.service'
import { systemClock, type Clock } from './clock'
import { keptSnapshot, MissingSnapshotError, SnapshotIntegrityError } from './run-record'

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
 * What the archive filters, searches and shows, copied onto the report from the signed snapshot as it is issued: project,
 * equipment, checklist, technician, acceptance time, counts (the one counting rule), the identity the report prints, and
 * a full-text vector over tag, serial, model, notes and findings. A rename later changes none of it.
 */
async function indexForArchive(tx: EntityManager, reportId: string, snapshot: RunSnapshot, acceptedAt: Date, technicianId: string | null) {
  const counts = countRunRecord(snapshot).totals
  const openFindings = snapshot.findings.filter((f) => f.status === 'open').length
  const notes = Object.values(snapshot.steps).map((s) => s.note).filter(Boolean).join(' ')
  const findings = snapshot.findings.map((f) => `${f.description} ${f.resolution ?? ''}`).join(' ')
  const { equipment, project, run } = snapshot
  await tx.query(
    `UPDATE report SET project_id = $2, equipment_id = $3, template_id = $4, technician_id = $5, accepted_at = $6,
            fail_count = $7, marginal_count = $8, open_finding_count = $9,
            search = setweight(to_tsvector('simple', $10), 'A') || setweight(to_tsvector('english', $11), 'B') || to_tsvector('english', $12),
            equipment_tag = $13, equipment_kind = $14, serial_number = $15, project_code = $16, project_name = $17, time_zone = $18,
            template_name = $19, template_version = $20, check_index = $21
      WHERE id = $1`,
    [
      reportId, run.projectId, run.equipmentId, run.templateId, technicianId, acceptedAt, counts.fail, counts.marginal, openFindings,
      `${equipment.tag} ${equipment.tag.replace(/-/g, '')} ${equipment.serialNumber}`,
      `${equipment.manufacturer} ${equipment.model} ${run.templateName}`,
      `${notes} ${findings}`,
      equipment.tag, equipment.kind, equipment.serialNumber, project.code, project.name, project.timeZone, run.templateName, run.templateVersionNumber,
      JSON.stringify(checkIndexOf(countRunRecord(snapshot))),
    ],
  )
}

/**
 * The accepted reports of a lineage (the same equipment with the same checklist, any version of it) with their check
 * indexes: every accepted run's report, whether or not its PDF is rendered yet. `before` keeps those accepted earlier.
 */
export async function lineageOf(
  manager: Pick<EntityManager, 'query'>,
  lineage: { equipmentId: string; templateId: string },
  options: { before?: Date; excludeRunId?: string; readyOnly?: boolean } = {},
): Promise<IssuedChecks[]> {
  const rows: { report_number: string; accepted_at: Date; check_index: CheckIndex | null }[] = await manager.query(
    `SELECT report_number, accepted_at, check_index FROM report
      WHERE equipment_id = $1 AND template_id = $2 AND accepted_at IS NOT NULL
        AND ($3::timestamptz IS NULL OR accepted_at < $3) AND ($4::uuid IS NULL OR run_id <> $4) AND (NOT $5 OR status = 'ready')
      ORDER BY accepted_at, report_number`,
    [lineage.equipmentId, lineage.templateId, options.before ?? null, options.excludeRunId ?? null, options.readyOnly ?? false],
  )
  return rows.map((r) => ({ reportNumber: r.report_number, acceptedAt: new Date(r.accepted_at).toISOString(), index: r.check_index }))
}

/**
 * What a run being accepted supersedes among the reports accepted before it, kept with its report in the acceptance
 * transaction: its cover prints these words, and nothing accepted later changes them.
 */
async function freezeSupersedes(tx: EntityManager, reportId: string, snapshot: RunSnapshot, acceptedAt: Date) {
  const earlier = await lineageOf(tx, { equipmentId: snapshot.run.equipmentId, templateId: snapshot.run.templateId }, { before: acceptedAt, excludeRunId: snapshot.run.id })
  const result = runSupersedes(checkIndexOf(countRunRecord(snapshot)), earlier, 'report')
  await tx.query(`UPDATE report SET supersedes = $2 WHERE id = $1`, [reportId, JSON.stringify({ ...result, words: supersedesWords(result) })])
}

/** The render queue as the report service sees it: hand a report over; it may not be running (the sweep catches up). */
export interface ReportJobs {
  /** `backlog`: behind reports accepted just now (the sweep's catch-up, e.g. a first start's demo archive). */
  enqueue(reportId: string, options?: { backlog?: boolean }): Promise<void>
}

export interface ReportServiceDeps {
  storage: StorageService
  mail: MailService
  publicUrl: string
  renderer: () => ReportRenderer
  jobs?: ReportJobs
  /** When report rows are created (the system clock unless the demo loader replays history). */
  clock?: Clock
  /** How long a render holds its claim on a report before another worker may take it over. */
  leaseSeconds?: number
}

export class SnapshotMismatchError extends Error {}

/** TypeORM answers an UPDATE … RETURNING on PostgreSQL with `[rows, rowCount]`, a SELECT with the rows. */
function updatedRows(result: unknown): unknown[] {
  if (Array.isArray(result) && result.length === 2 && Array.isArray(result[0]) && typeof result[1] === 'number') return result[0]
  return Array.isArray(result) ? result : []
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

/**
 * The handover report of an accepted run: its row and number are created in the acceptance transaction, from the signed
 * snapshot; a job renders and seals exactly that snapshot, archives the PDF and mails it.
 */
export class ReportService {
  private readonly clock: Clock

  constructor(
    private readonly db: DataSource,
    private readonly deps: ReportServiceDeps,
  ) {
    this.clock = deps.clock ?? systemClock
  }

  /** Creates the pending report of a run being accepted, inside the acceptance transaction: number, paper and archive row. */
  async issueInTransaction(tx: EntityManager, runId: string, snapshotSha256: string, acceptedAt: Date): Promise<Report> {
    const existing = await tx.getRepository(Report).findOneBy({ runId })
    if (existing) return existing
    const { snapshot } = await keptSnapshot(tx, runId, snapshotSha256)
    const [{ n }] = await tx.query(`SELECT nextval('report_number_seq')::int AS n`)
    // The year is the year of acceptance where the project is, so a report accepted on 31 December keeps that year.
    const reportNumber = `SP-${yearIn(acceptedAt, snapshot.project.timeZone)}-${String(n).padStart(6, '0')}`
    const report = await tx.getRepository(Report).save({
      runId,
      reportNumber,
      status: 'pending' as const,
      paper: snapshot.project.reportPaper,
      snapshotSha256,
      createdAt: this.clock(),
    })
    const performer = await tx.getRepository(Signature).findOne({ where: { runId, meaning: 'performed_by', voided: false }, select: { id: true, signerId: true } })
    // Archive columns are filled at once, while the report is pending, so the archive can filter and count a report that
    // is still waiting for its turn in the queue.
    await indexForArchive(tx, report.id, snapshot, acceptedAt, performer?.signerId ?? null)
    await freezeSupersedes(tx, report.id, snapshot, acceptedAt)
    await recordAudit(tx, {
      actorId: null,
      action: 'report.request',
      entityType: 'report',
      entityId: report.id,
      projectId: snapshot.run.projectId,
      after: { runId, reportNumber, snapshotSha256 },
      occurredAt: acceptedAt,
    })
    return report
  }

  /** Hands a pending report to the render queue; never fails the caller (the sweep queues what was not handed over). */
  async requestRender(reportId: string, options: { backlog?: boolean } = {}): Promise<void> {
    try {
      await this.deps.jobs?.enqueue(reportId, options)
    } catch (err) {
      console.error(`report ${reportId}: not queued now (${(err as Error).message}); the periodic sweep will queue it`)
    }
  }

  /**
   * The sweep, at start and periodically: an accepted run without a report gets one (from its signed snapshot); the
   * answer lists every pending report whose claim is free or ran out, for the queue to take up again.
   */
  async reconcile(): Promise<{ created: number; pending: string[] }> {
    const orphans: { run_id: string; sha: string; signed_at: Date }[] = await this.db.query(
      `SELECT run.id AS run_id, s.snapshot_sha256 AS sha, s.signed_at FROM run
         JOIN signature s ON s.run_id = run.id AND s.meaning = 'accepted_by' AND NOT s.voided
        WHERE run.state = 'accepted' AND NOT EXISTS (SELECT 1 FROM report r WHERE r.run_id = run.id)`,
    )
    let created = 0
    for (const o of orphans) {
      try {
        await this.db.transaction((tx) => this.issueInTransaction(tx, o.run_id, o.sha, o.signed_at))
        created += 1
      } catch (err) {
        console.error(`accepted run ${o.run_id} has no report and none could be created: ${(err as Error).message}`)
      }
    }
    return { created, pending: await this.pendingIds() }
  }

  async forRun(runId: string): Promise<Report | null> {
    return this.db.getRepository(Report).findOneBy({ runId })
  }

  /** Every report waiting to be rendered whose claim is free (never claimed, or the claim ran out). */
  async pendingIds(): Promise<string[]> {
    const rows: { id: string }[] = await this.db.query(
      `SELECT id FROM report WHERE status = 'pending' AND (claimed_until IS NULL OR claimed_until < now()) ORDER BY created_at, id`,
    )
    return rows.map((r) => r.id)
  }

  /**
   * Everything the report prints, read from the signed snapshot: the kept bytes are hashed again and must be the hash
   * both signatures carry and the report row names; anything else is refused and nothing is sealed.
   */
  async buildInput(report: Report): Promise<ReportInput> {
    const signatures = (await this.db.getRepository(Signature).find({ where: { runId: report.runId }, order: { signedAt: 'ASC', id: 'ASC' } })).map(signatureRecord)
    const performed = signatures.find((s) => s.meaning === 'performed_by' && !s.voided)
    const accepted = signatures.find((s) => s.meaning === 'accepted_by' && !s.voided)
    if (!performed || !accepted) throw new SnapshotMismatchError(`report ${report.reportNumber}: the run lacks a live performer or acceptance signature`)
    const expected = report.snapshotSha256 ?? accepted.snapshotSha256
    if (performed.snapshotSha256 !== expected || accepted.snapshotSha256 !== expected) {
      throw new SnapshotMismatchError(
        `report ${report.reportNumber}: the signatures do not carry one snapshot (performer ${performed.snapshotSha256.slice(0, 12)}…, acceptance ${accepted.snapshotSha256.slice(0, 12)}…, report ${expected.slice(0, 12)}…); it is not sealed`,
      )
    }
    let kept
    try {
      kept = await keptSnapshot(this.db.manager, report.runId, expected)
    } catch (err) {
      if (err instanceof MissingSnapshotError) {
        throw new SnapshotMismatchError(`report ${report.reportNumber}: the run was accepted before signed snapshots were kept, so there is no signed snapshot to render; it is not sealed (a re-test issues a new report)`)
      }
      if (err instanceof SnapshotIntegrityError) throw new SnapshotMismatchError(`report ${report.reportNumber}: ${err.message}; it is not sealed`)
      throw err
    }
    const { snapshot } = kept
    const run = await this.db.getRepository(Run).findOneByOrFail({ id: report.runId })
    const detail = runDetailFromSnapshot(snapshot, { state: run.state, version: run.version, updatedAt: run.updatedAt.toISOString(), signatures })
    const photoDataUrls: Record<string, string> = {}
    const images = snapshot.attachments.filter((a) => a.mimeType.startsWith('image/'))
    if (images.length) {
      const links = await this.db.getRepository(RunAttachment).find({ where: { runId: report.runId, id: In(images.map((a) => a.id)) }, relations: { attachment: true } })
      for (const image of images) {
        const link = links.find((l) => l.id === image.id)
        if (!link || link.attachment.sha256 !== image.sha256) throw new SnapshotMismatchError(`report ${report.reportNumber}: photo ${image.originalName} is not the file that was signed`)
        const data = await this.deps.storage.read(link.attachment.storageKey, image.sha256)
        const jpeg = await sharp(data).rotate().resize(1000, 1000, { fit: 'inside', withoutEnlargement: true }).jpeg({ quality: 80 }).toBuffer()
        photoDataUrls[image.id] = `data:image/jpeg;base64,${jpeg.toString('base64')}`
      }
    }
    const input: Omit<ReportInput, 'contentSha256'> = {
      reportNumber: report.reportNumber,
      organizationName: snapshot.project.organizationName,
      paper: report.paper,
      project: snapshot.project,
      equipment: snapshot.equipment,
      run: detail,
      signatures,
      snapshotSha256: kept.sha256,
      verifyUrl: `${this.deps.publicUrl.replace(/\/$/, '')}/verify/${report.reportNumber}`,
      generatedAtUtc: new Date().toISOString(),
      photoDataUrls,
      // Frozen at acceptance with the report row (a report issued before that was kept prints none).
      ...(report.supersedes?.words ? { supersedes: report.supersedes.words } : {}),
    }
    return { ...input, contentSha256: reportContentSha256(input) }
  }

  /** Claims a pending report for this render (a lease), so no second worker renders it meanwhile. */
  private async claim(reportId: string): Promise<string | null> {
    const token = randomUUID()
    const lease = this.deps.leaseSeconds ?? 600
    const result = await this.db.query(
      `UPDATE report SET claim_token = $2, claimed_until = now() + make_interval(secs => $3)
        WHERE id = $1 AND status = 'pending' AND (claimed_until IS NULL OR claimed_until < now()) RETURNING id`,
      [reportId, token, lease],
    )
    return updatedRows(result).length ? token : null
  }

  /** The job: claim, render the signed snapshot, seal, archive, mail. A failure is recorded with its reason. */
  async process(reportId: string): Promise<Report> {
    const token = await this.claim(reportId)
    const report = await this.db.getRepository(Report).findOneByOrFail({ id: reportId })
    // Ready, failed, or held by another render: nothing to do here.
    if (!token) return report
    try {
      const input = await this.buildInput(report)
      const { pdf, sealInfo } = await this.deps.renderer().render(input)
      const stored = await this.deps.storage.save(pdf, 'reports', 'pdf')
      const project = await this.db.getRepository(Project).findOneByOrFail({ id: input.run.projectId })
      await this.db.transaction(async (tx) => {
        const acceptedBy = input.signatures.find((s) => s.meaning === 'accepted_by' && !s.voided)!
        const performedBy = input.signatures.find((s) => s.meaning === 'performed_by' && !s.voided)!
        const updated = updatedRows(await tx.query(
          `UPDATE report SET status = 'ready', storage_key = $3, sha256 = $4, content_sha256 = $5, size_bytes = $6, seal_info = $7,
                  ready_at = $8, attempts = attempts + 1, last_error = NULL, snapshot_sha256 = $9, claim_token = NULL, claimed_until = NULL
            WHERE id = $1 AND claim_token = $2 AND status = 'pending' RETURNING id`,
          [report.id, token, stored.key, stored.sha256, input.contentSha256, stored.size, JSON.stringify(sealInfo), new Date(), input.snapshotSha256],
        ))
        // The claim ran out and another render finished first: its PDF is the record, this one is dropped.
        if (!updated.length) return
        await recordAudit(tx, {
          actorId: null,
          action: 'report.issue',
          entityType: 'report',
          entityId: report.id,
          projectId: input.run.projectId,
          after: { runId: report.runId, reportNumber: report.reportNumber, sha256: stored.sha256, contentSha256: input.contentSha256, snapshotSha256: input.snapshotSha256 },
        })
        await this.deps.mail.queue(tx, {
          kind: 'report_issued',
          runId: report.runId,
          to: project.distributionList,
          subject: `Start-up report ${report.reportNumber}: ${input.equipment.tag}, ${input.project.name}`,
          text: renderMailText('report-issued', {
            equipmentTag: input.equipment.tag,
            projectName: input.project.name,
            ownerRepName: acceptedBy.printedName,
            performerName: performedBy.printedName,
            acceptedAtLocal: localTime(new Date(acceptedBy.signedAtUtc), input.project.timeZone),
            reportNumber: report.reportNumber,
            verifyUrl: input.verifyUrl,
          }),
          attachments: [{ filename: `${report.reportNumber}.pdf`, storageKey: stored.key, sha256: stored.sha256, contentType: 'application/pdf' }],
        })
      })
    } catch (err) {
      const message = (err as Error).message.slice(0, 1000)
      // A snapshot that does not match its signatures is never retried into a seal: it waits for a person.
      const final = err instanceof SnapshotMismatchError
      await this.db.query(
        `UPDATE report SET attempts = attempts + 1, last_error = $3, claim_token = NULL, claimed_until = NULL,
                status = CASE WHEN $4 OR attempts + 1 >= $5 THEN 'failed' ELSE 'pending' END
          WHERE id = $1 AND claim_token = $2`,
        [report.id, token, message, final, MAX_ATTEMPTS],
      )
      throw err
    }
    return this.db.getRepository(Report).findOneByOrFail({ id: reportId })
  }

  /** Puts a report that failed back in the queue (after the cause, e.g. a missing browser, was fixed). */
  async retry(report: Report): Promise<Report> {
    if (report.status !== 'failed') throw new AppError('not_failed', `Report ${report.reportNumber} is ${report.status}; only a failed report is retried`, 409)
    await this.db.getRepository(Report).update(report.id, { status: 'pending', attempts: 0, claimToken: null, claimedUntil: null })
    await this.requestRender(report.id)
    return this.db.getRepository(Report).findOneByOrFail({ id: report.id })
  }

  async pdf(report: Report): Promise<Buffer> {
    if (report.status !== 'ready' || !report.storageKey || !report.sha256) throw new AppError('not_ready', `Report ${report.reportNumber} is not ready yet`, 409)
    return this.deps.storage.read(report.storageKey, report.sha256)
  }
}
