import { countRunRecord, describeDisposition } from '@shared/record'
import { createHash } from 'node:crypto'
import { once } from 'node:events'
import { setTimeout as delay } from 'node:timers/promises'
import type { Writable } from 'node:stream'
import { ZipArchive } from 'archiver'
import { stringify } from 'csv-stringify/sync'
import { In, type DataSource } from 'typeorm'
import type { ArchiveExportInput } from '@shared/schemas/archive'
import type { SessionUser } from '@shared/types/api'
import { CLOSEOUT_CATEGORY_LABELS, HANDOVER_PACKAGE_FORMAT, HANDOVER_PACKAGE_VERSION, type ArchiveItem } from '@shared/types/archive'
import type { RunDetail } from '@shared/types/run'
import { kindLabel, unitLabel, type QuantityKind } from '@shared/units'
import { Organization, Project, RunAttachment, type CloseoutDocument } from '../entities'
import type { StorageService } from '../storage/storage'
import type { ArchiveService } from './archive.service'
import { recordAudit } from './audit.service'
import { closeoutView, type CloseoutService } from './closeout.service'
import type { RunService } from './run.service'

/** Format names and versions of the files inside a package; README.txt describes each. Bump a version when its columns change. */
export const PACKAGE_FILE_FORMATS = {
  run: { format: 'startproof-run', version: 1 },
  manifest: { format: HANDOVER_PACKAGE_FORMAT, version: HANDOVER_PACKAGE_VERSION },
} as const

export const CSV_COLUMNS = {
  reports: [
    'report_number', 'project_code', 'project_name', 'project_closed', 'equipment_tag', 'equipment_kind', 'serial_number', 'checklist',
    'checklist_version', 'technician', 'accepted_at_utc', 'fail_count', 'marginal_count', 'open_finding_count', 'superseded_by',
    'pdf_path', 'pdf_sha256', 'pdf_size_bytes', 'run_folder',
  ],
  readings: [
    'section_id', 'section_title', 'step_id', 'step_title', 'field_id', 'field_label', 'field_kind', 'quantity', 'required', 'value', 'unit',
    'value_si', 'unit_si', 'answer', 'verdict', 'message', 'not_applicable', 'na_reason', 'justification', 'entered_by', 'entered_at_utc',
    'disposition',
  ],
  steps: ['section_id', 'section_title', 'step_id', 'step_title', 'not_applicable', 'na_reason', 'note', 'updated_by', 'updated_at_utc', 'disposition'],
  findings: [
    'finding_id', 'step_id', 'field_id', 'severity', 'status', 'description', 'resolution', 'raised_by', 'raised_at_utc', 'resolved_by',
    'resolved_at_utc', 'files',
  ],
  signatures: ['meaning', 'printed_name', 'role', 'signed_at_utc', 'signed_at_local', 'time_zone', 'snapshot_sha256', 'voided', 'voided_at_utc', 'void_reason'],
  closeout: ['document_id', 'project_code', 'title', 'category', 'category_label', 'document_date', 'file_name', 'path', 'content_type', 'size_bytes', 'sha256', 'uploaded_by', 'uploaded_at_utc'],
} as const

/** At most this much of the ZIP waits in memory for a slow client before the next file is read. */
const QUEUED_BYTES = 4 * 1024 * 1024

type StoredRef = { storageKey: string; sha256: string; mimeType: string }
/** PDFs, images and Office files are compressed already; deflating them again costs time and gains nothing. */
const alreadyCompressed = (mimeType: string) => /pdf|jpeg|png|webp|openxmlformats/.test(mimeType)

type Row = Record<string, string | number | boolean | null | undefined>
const csv = (columns: readonly string[], rows: Row[]) => Buffer.from(stringify(rows, { header: true, columns: [...columns], bom: true, cast: { boolean: (b) => (b ? 'true' : 'false') } }))
const json = (value: unknown) => Buffer.from(`${JSON.stringify(value, null, 2)}\n`)
const sha256 = (data: Buffer) => createHash('sha256').update(data).digest('hex')
/** A name safe in every unzip tool: letters, digits and a few marks; the rest becomes "_". */
const safe = (name: string, max = 80) => name.normalize('NFKD').replace(/[^\w.\- ]+/g, '_').replace(/\s+/g, ' ').trim().slice(0, max) || 'file'

export interface PackagePlan {
  user: SessionUser
  ip?: string
  scope: ArchiveExportInput
  items: (ArchiveItem & { storageKey: string })[]
  projects: Project[]
  documents: CloseoutDocument[]
  fileName: string
}

/**
 * The handover package: a ZIP streamed entry by entry (one stored file in memory at a time, waiting for the client to take
 * it), holding every sealed PDF, the runs' data as JSON and CSV, their photos and files, the projects' closeout documents,
 * a manifest, SHA256SUMS and a README describing the layout.
 */
export class HandoverPackageService {
  constructor(
    private readonly db: DataSource,
    private readonly deps: { archive: ArchiveService; closeout: CloseoutService; runs: RunService; storage: StorageService; publicUrl: string },
  ) {}

  /** Checks the scope and reads what goes in, so a bad request is a 4xx before any byte of the ZIP is sent. */
  async plan(user: SessionUser, scope: ArchiveExportInput, ip?: string): Promise<PackagePlan> {
    const items = await this.deps.archive.itemsFor(user, scope)
    const projectIds = scope.projectId ? [scope.projectId] : [...new Set(items.map((i) => i.projectId))]
    const projects = await this.db.getRepository(Project).find({ where: { id: In(projectIds) }, order: { code: 'ASC' } })
    const documents = await this.deps.closeout.list(projectIds)
    const day = new Date().toISOString().slice(0, 10)
    const fileName = scope.projectId ? `${safe(projects[0]?.code ?? 'project')}-handover-${day}.zip` : `startproof-reports-${day}.zip`
    return { user, ip, scope, items, projects, documents, fileName }
  }

  /** Writes the ZIP into `out` (an HTTP response); resolves when the last byte is handed over. */
  async write(plan: PackagePlan, out: Writable): Promise<void> {
    const zip = new ZipArchive({ zlib: { level: 6 } })
    const failed = new Promise<never>((_, reject) => {
      zip.on('error', reject)
      zip.on('warning', reject)
    })
    failed.catch(() => undefined)
    zip.pipe(out)
    const files: { path: string; sha256: string; sizeBytes: number }[] = []
    const generatedAt = new Date()

    /** Adds one entry and waits until it is in the stream and the client has room for more. */
    const add = async (path: string, data: Buffer, date = generatedAt, compressed = false, knownSha256?: string) => {
      files.push({ path, sha256: knownSha256 ?? sha256(data), sizeBytes: data.length })
      const written = once(zip, 'entry')
      zip.append(data, { name: path, date, store: compressed })
      await Promise.race([written, failed])
      // archiver takes a whole Buffer at once, so hold back here until the client has read what is queued.
      while (!out.destroyed && (zip.readableLength > QUEUED_BYTES || out.writableNeedDrain)) {
        await Promise.race([once(out, 'drain'), delay(50), failed])
      }
      if (out.destroyed) throw new Error('the client went away before the package was complete')
    }

    /** A stored file: read and proven against its recorded SHA-256 by the storage service, so that hash is listed as is. */
    const addStored = async (path: string, file: StoredRef, date: Date) =>
      add(path, await this.deps.storage.read(file.storageKey, file.sha256), date, alreadyCompressed(file.mimeType), file.sha256)

    const reportRows: Row[] = []
    for (const item of plan.items) {
      const folder = `runs/${item.reportNumber}`
      const pdfPath = `reports/${item.reportNumber}.pdf`
      await addStored(pdfPath, { storageKey: item.storageKey, sha256: item.sha256, mimeType: 'application/pdf' }, new Date(item.acceptedAt))
      const run = await this.deps.runs.detailForReport(item.runId)
      const attachmentPaths = await this.addAttachments(run, folder, addStored)
      const { reading: readingRows, steps: stepRows } = runRows(run)
      await add(`${folder}/run.json`, json({ ...PACKAGE_FILE_FORMATS.run, reportNumber: item.reportNumber, report: publicItem(item), run }))
      await add(`${folder}/readings.csv`, csv(CSV_COLUMNS.readings, readingRows))
      await add(`${folder}/steps.csv`, csv(CSV_COLUMNS.steps, stepRows))
      await add(`${folder}/findings.csv`, csv(CSV_COLUMNS.findings, findingRows(run, attachmentPaths)))
      await add(`${folder}/signatures.csv`, csv(CSV_COLUMNS.signatures, signatureRows(run)))
      reportRows.push({
        report_number: item.reportNumber,
        project_code: item.projectCode,
        project_name: item.projectName,
        project_closed: item.projectClosed,
        equipment_tag: item.equipmentTag,
        equipment_kind: item.equipmentKind,
        serial_number: item.serialNumber,
        checklist: item.templateName,
        checklist_version: item.templateVersion,
        technician: item.technicianName,
        accepted_at_utc: item.acceptedAt,
        fail_count: item.failCount,
        marginal_count: item.marginalCount,
        open_finding_count: item.openFindingCount,
        superseded_by: item.supersededBy,
        pdf_path: pdfPath,
        pdf_sha256: item.sha256,
        pdf_size_bytes: item.sizeBytes,
        run_folder: folder,
      })
    }

    const codeOf = new Map(plan.projects.map((p) => [p.id, p.code]))
    const closeoutRows: Row[] = []
    const used = new Set<string>()
    for (const doc of plan.documents) {
      const view = closeoutView(doc)
      const ext = view.fileName.includes('.') ? view.fileName.slice(view.fileName.lastIndexOf('.')).toLowerCase() : ''
      let path = `closeout/${safe(codeOf.get(doc.projectId) ?? 'project')}/${doc.category}/${doc.documentDate} ${safe(doc.title, 60)}${safe(ext, 8)}`
      for (let n = 2; used.has(path); n++) path = path.replace(/( \(\d+\))?(\.[^.]*)?$/, (_m, _n, e) => ` (${n})${e ?? ''}`)
      used.add(path)
      await addStored(path, doc.attachment, doc.uploadedAt)
      closeoutRows.push({
        document_id: view.id,
        project_code: codeOf.get(doc.projectId),
        title: view.title,
        category: view.category,
        category_label: CLOSEOUT_CATEGORY_LABELS[view.category],
        document_date: view.documentDate,
        file_name: view.fileName,
        path,
        content_type: view.contentType,
        size_bytes: view.sizeBytes,
        sha256: view.sha256,
        uploaded_by: view.uploadedByName,
        uploaded_at_utc: view.uploadedAt,
      })
    }

    await add('reports.csv', csv(CSV_COLUMNS.reports, reportRows))
    await add('closeout.csv', csv(CSV_COLUMNS.closeout, closeoutRows))
    const org = plan.projects[0] ? await this.db.getRepository(Organization).findOneBy({ id: plan.projects[0].organizationId }) : null
    await add(
      'manifest.json',
      json({
        ...PACKAGE_FILE_FORMATS.manifest,
        generatedAtUtc: generatedAt.toISOString(),
        generatedBy: { name: plan.user.displayName, role: plan.user.role },
        organization: org?.name ?? null,
        scope: plan.scope.projectId ? { kind: 'project', projectId: plan.scope.projectId } : { kind: 'selection', reportNumbers: plan.scope.reportNumbers },
        verifyUrl: `${this.deps.publicUrl.replace(/\/$/, '')}/verify`,
        projects: plan.projects.map((p) => ({ id: p.id, code: p.code, name: p.name, siteName: p.siteName, siteAddress: p.siteAddress, timeZone: p.timeZone, unitSystem: p.unitSystem, closedAt: p.closedAt?.toISOString() ?? null })),
        reports: plan.items.map(publicItem),
        closeoutDocuments: plan.documents.map((d) => ({ ...closeoutView(d), downloadUrl: undefined })),
        files: [...files],
      }),
    )
    await add('README.txt', Buffer.from(readme(plan, generatedAt, this.deps.publicUrl)))
    // Recorded before the last entry, so the record exists once the client has the whole file.
    await recordAudit(this.db.manager, {
      actorId: plan.user.id,
      action: 'archive.export',
      entityType: plan.scope.projectId ? 'project' : 'report',
      entityId: plan.scope.projectId ?? plan.items[0]?.reportNumber ?? 'none',
      projectId: plan.scope.projectId ?? null,
      after: { reportNumbers: plan.items.map((i) => i.reportNumber), closeoutDocuments: plan.documents.length, files: files.length + 1 },
      ip: plan.ip ?? null,
    })
    // Last, so it lists every other file (manifest and README included): `sha256sum -c SHA256SUMS` checks the lot.
    const sums = files.map((f) => `${f.sha256}  ${f.path}`).join('\n') + '\n'
    const done = once(out, 'finish')
    zip.append(Buffer.from(sums), { name: 'SHA256SUMS', date: generatedAt })
    await Promise.race([zip.finalize(), failed])
    await Promise.race([done, failed])

  }

  private async addAttachments(run: RunDetail, folder: string, addStored: (path: string, file: StoredRef, date: Date) => Promise<void>): Promise<Map<string, string>> {
    const links = await this.db.getRepository(RunAttachment).find({ where: { runId: run.id }, relations: { attachment: true }, order: { createdAt: 'ASC' } })
    const paths = new Map<string, string>()
    let n = 0
    for (const link of links) {
      const path = `${folder}/files/${String(++n).padStart(2, '0')}-${safe(link.attachment.originalName)}`
      await addStored(path, link.attachment, link.createdAt)
      paths.set(link.id, path)
    }
    return paths
  }
}

/** An archive item without the server's internal storage key and download route. */
function publicItem(item: ArchiveItem & { storageKey?: string }) {
  const { storageKey: _key, downloadUrl: _url, ...rest } = item
  return { ...rest, pdfPath: `reports/${item.reportNumber}.pdf`, runFolder: `runs/${item.reportNumber}` }
}

function runRows(run: RunDetail): { reading: Row[]; steps: Row[] } {
  // The one counting rule: the CSV's outcome column is what the report prints and counts.
  const count = countRunRecord(run)
  const reading: Row[] = []
  const steps: Row[] = []
  for (const section of run.definition.sections) {
    for (const step of section.steps) {
      const s = run.steps[step.id]
      steps.push({
        section_id: section.id,
        section_title: section.title,
        step_id: step.id,
        step_title: step.title,
        not_applicable: s?.notApplicable ?? false,
        disposition: s?.disposition?.kind ?? (s?.notApplicable ? 'not_applicable' : undefined),
        na_reason: s?.disposition ? describeDisposition(s.disposition) : s?.naReason,
        note: s?.note,
        updated_by: s?.updatedByName,
        updated_at_utc: s?.updatedAt,
      })
      for (const field of step.fields) {
        const r = run.readings[field.id]
        const e = r?.evaluation
        const answer = e?.answer
        const result = count.results.get(field.id)
        const disposition = result?.disposition ?? null
        const notApplicable = disposition !== null
        const entered = r?.entry && typeof r.entry.value === 'number' && 'unit' in r.entry ? { value: r.entry.value, unit: String(r.entry.unit) } : null
        reading.push({
          section_id: section.id,
          section_title: section.title,
          step_id: step.id,
          step_title: step.title,
          field_id: field.id,
          field_label: field.label,
          field_kind: field.kind,
          quantity: field.quantity ? kindLabel(field.quantity) : undefined,
          required: e?.required ?? false,
          // As entered; a computed value is rounded to six significant digits (the report prints fewer).
          value: entered?.value ?? (e?.display ? Number(e.display.value.toPrecision(6)) : undefined),
          unit: symbol(field.quantity, entered?.unit ?? e?.display?.unit),
          value_si: e?.canonical ? Number(e.canonical.value.toPrecision(12)) : undefined,
          unit_si: symbol(field.quantity, e?.canonical?.unit),
          answer: typeof answer === 'boolean' ? (answer ? 'yes' : 'no') : Array.isArray(answer) ? answer.join('; ') : answer,
          verdict: result?.outcome ?? 'not_a_check',
          message: notApplicable ? undefined : e?.message,
          not_applicable: notApplicable,
          disposition: disposition?.kind,
          na_reason: disposition ? describeDisposition(disposition) : undefined,
          justification: r?.justification,
          entered_by: r?.updatedByName,
          entered_at_utc: r?.updatedAt,
        })
      }
    }
  }
  return { reading, steps }
}

/** The unit's symbol as the product shows it ("psid", "°F", "kPa (gauge)"); the id itself when it is not a known unit. */
function symbol(kind: QuantityKind | undefined, unit: string | undefined): string | undefined {
  if (!unit) return undefined
  try {
    return kind ? unitLabel(kind, unit) : unit
  } catch {
    return unit
  }
}

function findingRows(run: RunDetail, attachmentPaths: Map<string, string>): Row[] {
  return run.findings.map((f) => ({
    finding_id: f.id,
    step_id: f.stepId,
    field_id: f.fieldId,
    severity: f.severity,
    status: f.status,
    description: f.description,
    resolution: f.resolution,
    raised_by: f.createdByName,
    raised_at_utc: f.createdAt,
    resolved_by: f.resolvedByName,
    resolved_at_utc: f.resolvedAt,
    files: run.attachments.filter((a) => a.findingId === f.id).map((a) => attachmentPaths.get(a.id)).filter(Boolean).join('; '),
  }))
}

function signatureRows(run: RunDetail): Row[] {
  return run.signatures.map((s) => ({
    meaning: s.meaning,
    printed_name: s.printedName,
    role: s.role,
    signed_at_utc: s.signedAtUtc,
    signed_at_local: s.signedAtLocal,
    time_zone: s.timeZone,
    snapshot_sha256: s.snapshotSha256,
    voided: s.voided,
    voided_at_utc: s.voidedAt,
    void_reason: s.voidReason,
  }))
}

/** Where the package says to check a report; a warning when the product runs without a public address. */
function verifyAt(publicUrl: string): string {
  const url = `${publicUrl.replace(/\/$/, '')}/verify`
  const local = /^https?:\/\/(localhost|127\.|\[::1\])/i.test(publicUrl)
  return local ? `${url} (NOTE: this address only works on the machine that made the package; ask the sender for the firm's public Verify address)` : url
}

function readme(plan: PackagePlan, generatedAt: Date, publicUrl: string): string {
  const scope = plan.scope.projectId
    ? `every issued report of project ${plan.projects.map((p) => `${p.code} (${p.name})`).join(', ')}`
    : `${plan.items.length} chosen report${plan.items.length === 1 ? '' : 's'} of ${plan.projects.map((p) => p.code).join(', ')}`
  const cols = (name: keyof typeof CSV_COLUMNS) => CSV_COLUMNS[name].join(', ')
  return `STARTPROOF HANDOVER PACKAGE
${HANDOVER_PACKAGE_FORMAT} version ${HANDOVER_PACKAGE_VERSION}

This package holds ${scope}.
It has ${plan.items.length} sealed start-up report${plan.items.length === 1 ? '' : 's'} and ${plan.documents.length} closeout document${plan.documents.length === 1 ? '' : 's'}.
Made ${generatedAt.toISOString()} (UTC) by ${plan.user.displayName}.

THE SEALED PDF IS THE RECORD. Everything else here is a copy of the same data in forms a program can read.
To tell whether a report is genuine and current, open ${verifyAt(publicUrl)} and give it the PDF,
or scan the QR code printed in the report. To check that nothing in this package changed since it was made, run
  sha256sum -c SHA256SUMS
in this folder (every file except SHA256SUMS itself is listed).

KEEP SUPERSEDED REPORTS. A re-test of the same equipment with the same checklist supersedes an earlier report only for
the checks it performed again; the checks it carries over ("verified earlier", naming that report) stay on the earlier
report, which is still their evidence. manifest.json gives each report's supersession by check (current, partly
superseded with how many checks and by which reports, or superseded); reports.csv's superseded_by names the successor
only once every check a report performed was performed again later.

LAYOUT
  README.txt                    this file
  SHA256SUMS                    SHA-256 of every other file, in the format of sha256sum
  manifest.json                 format, version, projects, reports, closeout documents, and every file with its SHA-256 and size
  reports.csv                   one row per report
  closeout.csv                  one row per closeout document
  reports/<report number>.pdf   the sealed report (PKCS#7 signature embedded), byte for byte as archived
  runs/<report number>/         the data of the run the report was made from:
    run.json                    the whole run (format ${PACKAGE_FILE_FORMATS.run.format} version ${PACKAGE_FILE_FORMATS.run.version})
    readings.csv                one row per checklist field
    steps.csv                   one row per checklist step (not applicable, reason, notes)
    findings.csv                one row per finding
    signatures.csv              one row per signature, voided ones included
    files/NN-<name>             photos and documents attached during the run
  closeout/<project>/<category>/<document date> <title>.<ext>
                                O&M manuals, warranty letters, test certificates and other handover files

CSV FILES
UTF-8 with a byte-order mark (so spreadsheet programs read accents right), comma separated, RFC 4180 quoting,
one header row. Times end in _utc and are ISO 8601 in UTC; the project's time zone is in manifest.json and
signatures.csv. Booleans are true/false. Empty means no value.
  reports.csv:    ${cols('reports')}
  readings.csv:   ${cols('readings')}
                  quantity names what is measured (e.g. differential pressure); value/unit are as entered (a
                  computed value rounded to six significant digits), unit written as the report writes it (°F,
                  psid, kPa (gauge), tons); value_si/unit_si are the same value in SI as stored (K, Pa, m³/s, W);
                  answer holds yes/no, choice and text answers; verdict is the check's outcome as the report
                  counts it: pass, marginal, fail, incomplete, recorded (a value with no acceptance criterion,
                  never a pass), not_a_check (an optional field left blank), or the disposition of a check set
                  aside: not_applicable, by_others, verified_earlier, deferred, not_done (then not_applicable is
                  true, disposition repeats the kind and na_reason says it in words: who and their record,
                  the earlier report, the due date, or the reason; the step's when the whole step was set aside).
  steps.csv:      ${cols('steps')}
  findings.csv:   ${cols('findings')}
                  files lists the paths of the finding's photos inside this package, separated by "; ".
  signatures.csv: ${cols('signatures')}
                  snapshot_sha256 is the SHA-256 of the RFC 8785 canonical snapshot of the run that was signed.
  closeout.csv:   ${cols('closeout')}

JSON FILES
run.json:      { format, version, reportNumber, report: the row of manifest.reports, run: the run as the product
               holds it — checklist definition (sections, steps, fields, rules), design point in SI, readings with
               their evaluation, step states, findings, attachments, signatures }
manifest.json: { format, version, generatedAtUtc, generatedBy, organization, scope, verifyUrl, projects, reports,
               closeoutDocuments, files: [{ path, sha256, sizeBytes }] }
A later version of a format may add keys or columns at the end; it changes the version number when a key or column
changes meaning or is removed.

CAUTION
These records describe the equipment as commissioned on the dates shown. Before operating or servicing the plant,
follow the manufacturer's instructions, local codes and licensed practice.
`
}
