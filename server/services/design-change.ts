import { isDeepStrictEqual } from 'node:util'
import type { EntityManager } from 'typeorm'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import type { AffectedRun, DesignChangeOutcome } from '@shared/types/design-change'
import type { RunState } from '@shared/types/run'
import { AppError } from '../errors/app-error'
import { Equipment, OutboundMail, Project, ProjectMember, Reading, RunStep, Signature, TemplateVersion, User } from '../entities'
import { renderMailText } from '../mail/mail.service'
import { recordAudit } from './audit.service'
import { changedKeys, listWords, utcTime } from './edit-conflict'
import { countRows, evaluateAll } from './run-record'
import { storeProgress } from './run-save'

/**
 * What a run is judged with and what its signature names must not drift from the record after signing. When an admin
 * changes an equipment item's tag, nameplate or design point, or a project's identity, site, units or time zone:
 * runs in progress are re-judged at once; a submitted run (performer signed, awaiting acceptance) has its performer
 * signature voided with the reason and goes back to the technician, after the admin confirmed that; accepted runs are
 * left alone (they are read from the snapshot that was signed). Every function works inside the caller's transaction.
 */

/** Equipment fields a run's verdicts or its signed record depend on, in words. Notes are not among them. */
export const EQUIPMENT_IDENTITY: Record<string, string> = {
  tag: 'tag',
  manufacturer: 'manufacturer',
  model: 'model',
  serialNumber: 'serial number',
  yearBuilt: 'year built',
  location: 'location',
  designPoint: 'design point',
}

/** Project fields a run's verdicts or its signed record depend on. The distribution list and paper are not. */
export const PROJECT_IDENTITY: Record<string, string> = {
  name: 'name',
  code: 'project code',
  siteName: 'site name',
  siteAddress: 'site address',
  unitSystem: 'unit system',
  timeZone: 'time zone',
  siteElevationM: 'site elevation',
  barometricKpa: 'site barometric pressure',
}

export type DesignChangeScope = { equipmentId: string } | { projectId: string }

/** One equipment or project edit that reaches runs. `before`/`after` hold the changed identity fields. */
export interface DesignChange {
  cause: 'equipment.update' | 'project.update'
  scope: DesignChangeScope
  /** The record as signatures name it, before the change: "CH-2" or "project TP-1". */
  subject: string
  before: Record<string, unknown>
  after: Record<string, unknown>
  /** The changed identity keys (of EQUIPMENT_IDENTITY or PROJECT_IDENTITY). */
  keys: string[]
  labels: Record<string, string>
  actor: { id: string; ip?: string | null }
  /** Base address for the link in the technician's mail; without it the mail says where to find the run. */
  publicUrl?: string | null
}

/** A run the change reaches, locked for the rest of the transaction. */
export interface OpenRun extends AffectedRun {
  projectId: string
  equipmentId: string
  templateVersionId: string
  performerSignatureId: string | null
  performerId: string | null
}

const OPEN_STATES: RunState[] = ['in_progress', 'returned', 'submitted']

/** The identity keys an edit changes, given the record's fields before and after it. */
export function identityKeys(before: Record<string, unknown>, after: Record<string, unknown>, labels: Record<string, string>): string[] {
  return changedKeys(before, after, Object.keys(labels))
}

/**
 * Locks and lists the runs an edit reaches (in progress, returned or submitted; accepted ones never). Locking them
 * first means a technician signing at the same moment either signs before (and the run is seen as submitted) or after
 * (and signs the changed record, which the review's snapshot hash then no longer matches).
 */
export async function lockOpenRuns(tx: EntityManager, scope: DesignChangeScope): Promise<OpenRun[]> {
  const [column, id] = 'equipmentId' in scope ? ['r.equipment_id', scope.equipmentId] : ['r.project_id', scope.projectId]
  const rows: {
    id: string
    state: RunState
    project_id: string
    equipment_id: string
    template_version_id: string
    tag: string
    template_name: string
    version_number: number
    signature_id: string | null
    signer_id: string | null
    printed_name: string | null
    signed_at: Date | null
  }[] = await tx.query(
    `SELECT r.id, r.state, r.project_id, r.equipment_id, r.template_version_id, e.tag, t.name AS template_name, v.number AS version_number,
            s.id AS signature_id, s.signer_id, s.printed_name, s.signed_at
       FROM run r
       JOIN equipment e ON e.id = r.equipment_id
       JOIN template_version v ON v.id = r.template_version_id
       JOIN checklist_template t ON t.id = v.template_id
       LEFT JOIN signature s ON s.run_id = r.id AND s.meaning = 'performed_by' AND NOT s.voided
      WHERE ${column} = $1 AND r.state = ANY($2::text[])
      ORDER BY e.tag, r.started_at, r.id
        FOR UPDATE OF r`,
    [id, OPEN_STATES],
  )
  return rows.map((r) => ({
    runId: r.id,
    state: r.state,
    equipmentTag: r.tag,
    checklist: `${r.template_name} v${r.version_number}`,
    performer: r.printed_name,
    signedAt: r.signed_at ? r.signed_at.toISOString() : null,
    projectId: r.project_id,
    equipmentId: r.equipment_id,
    templateVersionId: r.template_version_id,
    performerSignatureId: r.signature_id,
    performerId: r.signer_id,
  }))
}

/** The public part of an affected run (what the admin and the API see). */
export function affected(run: OpenRun): AffectedRun {
  return { runId: run.runId, state: run.state, equipmentTag: run.equipmentTag, checklist: run.checklist, performer: run.performer, signedAt: run.signedAt }
}

/** "the design point and serial number of CH-2". */
function whatChanged(change: Pick<DesignChange, 'keys' | 'labels' | 'subject'>): string {
  return `the ${listWords(change.keys.map((k) => change.labels[k]))} of ${change.subject}`
}

/**
 * Refuses (409 `affects_signed_runs`, nothing changed) an edit that would void performer signatures unless the admin
 * confirmed it: the answer names each run (tag, checklist, performer, when signed) in `runs`.
 */
export function requireConfirmation(runs: OpenRun[], confirmVoid: boolean | undefined, change: Pick<DesignChange, 'keys' | 'labels' | 'subject'>): void {
  const signed = runs.filter((r) => r.state === 'submitted')
  if (!signed.length || confirmVoid === true) return
  const named = signed.map((r) => `${r.equipmentTag} ${r.checklist}, signed by ${r.performer ?? 'its performer'}${r.signedAt ? ` at ${r.signedAt.slice(0, 10)} ${utcTime(new Date(r.signedAt))}` : ''}`)
  const n = signed.length
  throw new AppError(
    'affects_signed_runs',
    `Changing ${whatChanged(change)} voids the performer's signature on ${n} submitted run${n === 1 ? '' : 's'} (${named.join('; ')}) and returns ${n === 1 ? 'it' : 'them'} to the technician. Nothing was changed; confirm to go ahead.`,
    409,
    { confirmVoid: `Confirm to void ${n} performer signature${n === 1 ? '' : 's'}` },
    { runs: signed.map(affected) },
  )
}

/** A value as jsonb keeps it (no undefined members), so an evaluation read back compares equal to a fresh one. */
const asStored = <T>(value: T): T => JSON.parse(JSON.stringify(value ?? null)) as T

/**
 * Applies an edit, already saved in `tx`, to the runs it reaches: each is re-judged with the new design point and
 * project units (changed evaluations written, `run.rejudged` audited with what changed); each submitted one also has
 * its performer signature voided with the reason (kept on record), goes back to 'returned', and its technician is told.
 */
export async function applyDesignChange(tx: EntityManager, runs: OpenRun[], change: DesignChange, now: Date = new Date()): Promise<DesignChangeOutcome> {
  const outcome: DesignChangeOutcome = { rejudged: [], voided: [] }
  if (!runs.length) return outcome
  const admin = await tx.getRepository(User).findOneByOrFail({ id: change.actor.id })
  const tagNow = change.keys.includes('tag') ? ` (the tag is now ${String(change.after.tag)})` : ''
  const reason = `Voided: ${whatChanged(change)} ${change.keys.length === 1 ? 'was' : 'were'} changed by ${admin.displayName} after signing${tagNow}`
  for (const run of runs) {
    // One after another: inside the transaction one connection answers one query at a time.
    const project = await tx.getRepository(Project).findOneByOrFail({ id: run.projectId })
    const equipment = await tx.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId })
    const version = await tx.getRepository(TemplateVersion).findOneByOrFail({ id: run.templateVersionId })
    const readings = await tx.getRepository(Reading).find({ where: { runId: run.runId }, order: { fieldId: 'ASC' } })
    const naStepRows = await tx.getRepository(RunStep).find({ where: { runId: run.runId, notApplicable: true }, select: { stepId: true, disposition: true, notApplicable: true, naReason: true } })
    const definition = version.definition as unknown as ChecklistDefinition
    const evaluations = evaluateAll({ definition, equipment, project }, readings, new Set(naStepRows.map((s) => s.stepId)))
    const verdictChanges: { fieldId: string; before: string; after: string }[] = []
    let rewritten = 0
    for (const r of readings) {
      const evaluation = evaluations[r.fieldId]
      if (!evaluation || isDeepStrictEqual(asStored(evaluation), asStored(r.evaluation))) continue
      if (evaluation.verdict !== r.verdict) verdictChanges.push({ fieldId: r.fieldId, before: r.verdict, after: evaluation.verdict })
      rewritten += 1
      await tx.getRepository(Reading).update(
        { runId: r.runId, fieldId: r.fieldId },
        { evaluation: asStored(evaluation), verdict: evaluation.verdict, canonicalValue: evaluation.canonical?.value ?? null },
      )
    }
    const counted = readings.map((r) => {
      const e = evaluations[r.fieldId]
      return e ? { ...r, verdict: e.verdict, canonicalValue: e.canonical?.value ?? null } : r
    })
    await storeProgress(tx, run.runId, countRows(definition, counted, naStepRows).totals)
    // A save that read this run before the re-judging must not write over it (run-save.ts, recordChange).
    await tx.query(`UPDATE run SET revision = revision + 1 WHERE id = $1`, [run.runId])
    await recordAudit(tx, {
      actorId: change.actor.id,
      action: 'run.rejudged',
      entityType: 'run',
      entityId: run.runId,
      projectId: run.projectId,
      before: { ...change.before, state: run.state },
      after: { ...change.after, cause: change.cause, changed: change.keys, verdictChanges, evaluationsRewritten: rewritten },
      ip: change.actor.ip ?? null,
      occurredAt: now,
    })
    if (run.state !== 'submitted') {
      outcome.rejudged.push(affected(run))
      continue
    }
    if (run.performerSignatureId) {
      await tx.getRepository(Signature).update(run.performerSignatureId, { voided: true, voidedAt: now, voidReason: reason })
    }
    await tx.query(`UPDATE run SET state = 'returned', version = version + 1, revision = revision + 1, updated_at = $2 WHERE id = $1`, [run.runId, now])
    await recordAudit(tx, {
      actorId: change.actor.id,
      action: 'run.signature_voided',
      entityType: 'run',
      entityId: run.runId,
      projectId: run.projectId,
      before: { state: 'submitted', performerSignatureId: run.performerSignatureId },
      after: { state: 'returned', voidedSignatureId: run.performerSignatureId, reason, cause: change.cause, changed: change.keys },
      ip: change.actor.ip ?? null,
      occurredAt: now,
    })
    await tellTechnician(tx, run, { project, equipment, admin, reason, what: whatChanged(change), publicUrl: change.publicUrl ?? null })
    outcome.voided.push({ ...affected(run), state: 'returned' })
  }
  return outcome
}

/**
 * Queues the mail to the technician whose signature was voided, if they are still active and on the project. Written
 * to `outbound_mail` in this transaction exactly as MailService.queue does, so the mail worker sends it.
 */
async function tellTechnician(
  tx: EntityManager,
  run: OpenRun,
  c: { project: Project; equipment: Equipment; admin: User; reason: string; what: string; publicUrl: string | null },
): Promise<void> {
  if (!run.performerId) return
  const tech = await tx.getRepository(User).findOneBy({ id: run.performerId })
  if (!tech?.active || !(await tx.getRepository(ProjectMember).existsBy({ projectId: run.projectId, userId: tech.id }))) return
  await tx.getRepository(OutboundMail).insert({
    kind: 'run_returned',
    runId: run.runId,
    to: [tech.email.trim().toLowerCase()],
    subject: `Your signature on the start-up of ${c.equipment.tag} was voided: ${c.what} changed`,
    text: renderMailText('signature-voided', {
      recipientName: tech.displayName,
      adminName: c.admin.displayName,
      what: c.what,
      equipmentTag: c.equipment.tag,
      projectName: c.project.name,
      reason: c.reason,
      runUrl: c.publicUrl ? `${c.publicUrl}/runs/${run.runId}` : '',
    }),
    attachments: [],
  })
}
