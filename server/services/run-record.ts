import { createHash } from 'node:crypto'
import { In, type EntityManager } from 'typeorm'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import type { FieldEntry } from '@shared/schemas/reading'
import { buildRunSnapshot, canonicalSnapshot, countRun, dispositionOf, fieldPlaces, parseRunSnapshot, type RunCount, type RunSnapshot } from '@shared/record'
import { siteBarometric } from '@shared/engineering'
import { evaluateChecklist, type FieldEvaluation } from '@shared/rules'
import type { AnyDesignPoint } from '@shared/schemas/design-point'
import type { FindingSummary, RunAttachment as RunAttachmentView, RunReading, RunStepState } from '@shared/types/run'
import { ChecklistTemplate, Equipment, Finding, Organization, Project, Reading, Run, RunAttachment, RunSnapshotRow, RunStep, Signature, TemplateVersion, User } from '../entities'

/**
 * Reading and keeping the record of a run: the live views of its readings, steps, findings and files (as the runner
 * shows them), the snapshot built from them, and the signed snapshot kept in `run_snapshot`. Every function takes the
 * EntityManager of the caller's transaction.
 */

/** Evaluates every field of the definition from the stored entries (fields marked not applicable, or in a step marked so, count as empty). */
export function evaluateAll(
  ctx: { definition: ChecklistDefinition; equipment: Pick<Equipment, 'designPoint'>; project: Pick<Project, 'unitSystem'> & Partial<Pick<Project, 'siteElevationM' | 'barometricKpa'>> },
  readings: Pick<Reading, 'fieldId' | 'entry' | 'notApplicable'>[],
  naSteps: ReadonlySet<string>,
  only?: ReadonlySet<string>,
): Record<string, FieldEvaluation> {
  const places = fieldPlaces(ctx.definition)
  const entries: Record<string, FieldEntry | null> = {}
  for (const r of readings) {
    const stepNa = naSteps.has(places.get(r.fieldId)?.stepId ?? '')
    entries[r.fieldId] = r.notApplicable || stepNa ? null : (r.entry as FieldEntry | null)
  }
  return evaluateChecklist(ctx.definition, {
    readings: entries,
    designPoint: ctx.equipment.designPoint as unknown as AnyDesignPoint,
    unitSystem: ctx.project.unitSystem,
    siteBarometricKpa: siteBarometric(ctx.project).kpa,
  }, only)
}

export const sha256Hex = (text: string) => createHash('sha256').update(text).digest('hex')

export async function displayNames(manager: EntityManager, ids: (string | null)[]): Promise<Map<string, string>> {
  const wanted = [...new Set(ids.filter((x): x is string => Boolean(x)))]
  if (!wanted.length) return new Map()
  const users = await manager.getRepository(User).find({ where: { id: In(wanted) }, select: { id: true, displayName: true } })
  return new Map(users.map((u) => [u.id, u.displayName]))
}

/**
 * The run's counts from its stored rows, by the one counting rule (`countRun`): a row's value is known from its
 * canonical value (numbers) or its verdict; its disposition from the column (older rows: the not-applicable flag).
 */
export function countRows(
  definition: ChecklistDefinition,
  readings: Pick<Reading, 'fieldId' | 'verdict' | 'canonicalValue' | 'disposition' | 'notApplicable' | 'naReason'>[],
  steps: Pick<RunStep, 'stepId' | 'disposition' | 'notApplicable' | 'naReason'>[],
): RunCount {
  return countRun(
    definition,
    readings.map((r) => ({ fieldId: r.fieldId, verdict: r.verdict, hasValue: r.canonicalValue !== null && r.canonicalValue !== undefined, disposition: dispositionOf(r) })),
    steps.map((s) => ({ stepId: s.stepId, disposition: dispositionOf(s) })),
  )
}

export function readingView(r: Reading, names: Map<string, string>): RunReading {
  return {
    fieldId: r.fieldId,
    entry: r.entry as FieldEntry | null,
    disposition: dispositionOf(r),
    notApplicable: r.notApplicable,
    naReason: r.naReason,
    justification: r.justification,
    evaluation: r.evaluation,
    version: r.version,
    updatedAt: r.updatedAt?.toISOString() ?? null,
    updatedByName: r.updatedBy ? (names.get(r.updatedBy) ?? null) : null,
  }
}

export function stepView(s: RunStep, names: Map<string, string>): RunStepState {
  return {
    stepId: s.stepId,
    note: s.note,
    disposition: dispositionOf(s),
    notApplicable: s.notApplicable,
    naReason: s.naReason,
    version: s.version,
    updatedAt: s.updatedAt?.toISOString() ?? null,
    updatedByName: s.updatedBy ? (names.get(s.updatedBy) ?? null) : null,
  }
}

/** The run's findings, oldest first, with their authors' names and linked photos: one statement. */
export async function findingViews(manager: EntityManager, runId: string): Promise<FindingSummary[]> {
  const rows: {
    id: string
    run_id: string
    step_id: string
    field_id: string | null
    severity: Finding['severity']
    description: string
    status: Finding['status']
    resolution: string | null
    resolved_at: Date | null
    resolved_by_name: string | null
    created_at: Date
    created_by_name: string | null
    attachment_ids: string[]
    version: number
  }[] = await manager.query(
    `SELECT f.id, f.run_id, f.step_id, f.field_id, f.severity, f.description, f.status, f.resolution, f.resolved_at, f.created_at, f.version,
            ru.display_name AS resolved_by_name, cu.display_name AS created_by_name,
            COALESCE((SELECT array_agg(a.id::text ORDER BY a.created_at, a.id) FROM run_attachment a WHERE a.run_id = f.run_id AND a.finding_id = f.id), '{}') AS attachment_ids
       FROM finding f
       LEFT JOIN app_user ru ON ru.id = f.resolved_by
       LEFT JOIN app_user cu ON cu.id = f.created_by
      WHERE f.run_id = $1
      ORDER BY f.created_at, f.id`,
    [runId],
  )
  return rows.map((f) => ({
    id: f.id,
    runId: f.run_id,
    stepId: f.step_id,
    fieldId: f.field_id,
    severity: f.severity,
    description: f.description,
    status: f.status,
    resolution: f.resolution,
    resolvedAt: f.resolved_at?.toISOString() ?? null,
    resolvedByName: f.resolved_by_name,
    createdAt: f.created_at.toISOString(),
    createdByName: f.created_by_name,
    attachmentIds: f.attachment_ids,
    version: f.version,
  }))
}

export async function attachmentViews(manager: EntityManager, runId: string): Promise<RunAttachmentView[]> {
  const links = await manager.getRepository(RunAttachment).find({ where: { runId }, relations: { attachment: true }, order: { createdAt: 'ASC', id: 'ASC' } })
  return links.map((l) => ({
    id: l.id,
    sha256: l.attachment.sha256,
    mimeType: l.attachment.mimeType,
    sizeBytes: l.attachment.sizeBytes,
    originalName: l.attachment.originalName,
    createdAt: l.createdAt.toISOString(),
    stepId: l.stepId,
    fieldId: l.fieldId,
    findingId: l.findingId,
    url: `/api/runs/${runId}/attachments/${l.id}`,
    thumbnailUrl: l.thumbnailKey ? `/api/runs/${runId}/attachments/${l.id}?thumbnail=1` : null,
  }))
}

/** The run as it stands in the live tables, as a snapshot (what a performer would sign now). */
export async function liveSnapshot(manager: EntityManager, runId: string): Promise<RunSnapshot> {
  const run = await manager.getRepository(Run).findOneByOrFail({ id: runId })
  // One after another: this runs inside the signing transaction, where one connection answers one query at a time.
  const project = await manager.getRepository(Project).findOneByOrFail({ id: run.projectId })
  const equipment = await manager.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId })
  const version = await manager.getRepository(TemplateVersion).findOneByOrFail({ id: run.templateVersionId })
  const readings = await manager.getRepository(Reading).find({ where: { runId }, order: { fieldId: 'ASC' } })
  const steps = await manager.getRepository(RunStep).find({ where: { runId }, order: { stepId: 'ASC' } })
  const findings = await findingViews(manager, runId)
  const attachments = await attachmentViews(manager, runId)
  const template = await manager.getRepository(ChecklistTemplate).findOneByOrFail({ id: version.templateId })
  const organization = await manager.getRepository(Organization).findOneByOrFail({ id: project.organizationId })
  const names = await displayNames(manager, [run.startedBy, ...readings.map((r) => r.updatedBy), ...steps.map((s) => s.updatedBy)])
  return buildRunSnapshot({
    run: {
      id: run.id,
      projectId: run.projectId,
      equipmentId: run.equipmentId,
      templateId: template.id,
      templateName: template.name,
      templateVersionId: version.id,
      templateVersionNumber: version.number,
      startedAt: run.startedAt.toISOString(),
      startedByName: run.startedBy ? (names.get(run.startedBy) ?? null) : null,
    },
    definition: version.definition as unknown as ChecklistDefinition,
    project: { ...project, organizationName: organization.name },
    equipment: { ...equipment, designPoint: equipment.designPoint as Record<string, unknown> },
    readings: readings.map((r) => readingView(r, names)),
    steps: steps.map((s) => stepView(s, names)),
    findings,
    attachments,
  })
}

export interface KeptSnapshot {
  snapshot: RunSnapshot
  json: string
  sha256: string
}

export function keep(snapshot: RunSnapshot): KeptSnapshot {
  const json = canonicalSnapshot(snapshot)
  return { snapshot, json, sha256: sha256Hex(json) }
}

/** Stores a snapshot that is being signed (once per run and hash). */
export async function storeSnapshot(manager: EntityManager, runId: string, kept: KeptSnapshot, userId: string | null): Promise<void> {
  await manager.query(`INSERT INTO run_snapshot (run_id, sha256, content, created_by) VALUES ($1, $2, $3, $4) ON CONFLICT (run_id, sha256) DO NOTHING`, [runId, kept.sha256, kept.json, userId])
}

export class SnapshotIntegrityError extends Error {}
/** No snapshot is kept under that hash: a run signed before snapshots were kept (an older database). */
export class MissingSnapshotError extends SnapshotIntegrityError {}

/** A kept snapshot by its hash, with the hash of its bytes checked again: a snapshot that does not hash to its name is refused. */
export async function keptSnapshot(manager: EntityManager, runId: string, sha256: string): Promise<KeptSnapshot> {
  const row = await manager.getRepository(RunSnapshotRow).findOneBy({ runId, sha256 })
  if (!row) throw new MissingSnapshotError(`run ${runId} has no kept snapshot ${sha256}`)
  const actual = sha256Hex(row.content)
  if (actual !== sha256) throw new SnapshotIntegrityError(`the kept snapshot of run ${runId} hashes to ${actual}, not to the signed ${sha256}`)
  return { snapshot: parseRunSnapshot(row.content), json: row.content, sha256 }
}

/** The live performer signature's snapshot hash: the record a submitted or accepted run is shown and issued from. */
export async function signedSnapshotHash(manager: EntityManager, runId: string): Promise<string | null> {
  const performer = await manager.getRepository(Signature).findOne({ where: { runId, meaning: 'performed_by', voided: false }, select: { id: true, snapshotSha256: true } })
  return performer?.snapshotSha256 ?? null
}
