import path from 'node:path'
import type { DataSource } from 'typeorm'
import type { Config } from '../config'
import { ReportQueue } from '../jobs/report-queue'
import { createReportRenderer } from '../jobs/report-renderer'
import { MailService } from '../mail/mail.service'
import { LocalDiskStorage, StorageService } from '../storage/storage'
import { ArchiveService } from './archive.service'
import { systemClock, type Clock } from './clock'
import { CloseoutService } from './closeout.service'
import { EquipmentService } from './equipment.service'
import { FindingService } from './finding.service'
import { HandoverPackageService } from './handover-package.service'
import { ProjectService } from './project.service'
import { ReportService, type ReportJobs, type ReportRenderer } from './report.service'
import { RunService } from './run.service'
import { SigningService } from './signing.service'
import { TemplateService } from './template.service'
import { UserService } from './user.service'
import { VerifyService } from './verify.service'

export interface ServiceParts {
  db: DataSource
  publicUrl: string
  storage: StorageService
  mail: MailService
  /** Opened on first use: only a process that renders launches a browser. */
  renderer: () => ReportRenderer
  jobs?: ReportJobs
  clock?: Clock
  reportLeaseSeconds?: number
}

/**
 * Every service of the product, built once with its dependencies passed to its constructor: no setters, no service
 * locator. app.ts, index.ts, the demo loader and the tests all build them here.
 */
export function createServices(parts: ServiceParts) {
  const { db, storage, mail, publicUrl } = parts
  const clock = parts.clock ?? systemClock
  const users = new UserService(db)
  const projects = new ProjectService(db)
  const templates = new TemplateService(db)
  const equipment = new EquipmentService(db, projects, storage)
  const runs = new RunService(db, projects, clock)
  const findings = new FindingService(db, runs, storage, clock)
  const reports = new ReportService(db, { storage, mail, publicUrl, renderer: parts.renderer, jobs: parts.jobs, clock, leaseSeconds: parts.reportLeaseSeconds })
  const signing = new SigningService(db, { runs, findings, mail, reports, publicUrl, clock })
  const archive = new ArchiveService(db)
  const closeout = new CloseoutService(db, projects, storage)
  const packages = new HandoverPackageService(db, { archive, closeout, runs, storage, publicUrl })
  const verify = new VerifyService(db)
  return { db, users, projects, templates, equipment, runs, findings, reports, signing, archive, closeout, packages, verify, storage, mail, openRenderer: parts.renderer }
}

export type Services = ReturnType<typeof createServices>

/** The services of a server process, from its configuration: disk storage, SMTP mail, the report renderer and queue. */
export function createAppServices(config: Config, db: DataSource) {
  const storage = new StorageService(new LocalDiskStorage(path.resolve(config.STORAGE_DIR)))
  const mail = new MailService(db, storage, { smtpUrl: config.SMTP_URL, from: config.MAIL_FROM })
  const renderer = createReportRenderer(config, async () => {
    const [row] = await db.query(`SELECT name FROM organization ORDER BY created_at LIMIT 1`)
    return row?.name ?? 'Startproof'
  })
  // Two documents at a time per pooled browser (see server/reports/browser-pool.ts).
  const queue = new ReportQueue(config.DATABASE_URL, { work: config.REPORT_WORKER, concurrency: config.REPORT_BROWSERS * 2, sweepSeconds: config.REPORT_SWEEP_SECONDS })
  const services = createServices({ db, publicUrl: config.PUBLIC_URL, storage, mail, renderer: () => renderer, jobs: queue, reportLeaseSeconds: config.REPORT_LEASE_SECONDS })
  return { ...services, renderer, queue }
}

export type AppServices = ReturnType<typeof createAppServices>
