import { isDeepStrictEqual } from 'node:util'
import type { PoolClient } from 'pg'
import type { EntityManager } from 'typeorm'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import type { SessionUser } from '@shared/types/api'
import type { RunProgress, RunState } from '@shared/types/run'
import type { Equipment, Project, Reading, RunStep } from '../entities'
import type { AuditEntry } from './audit.service'
import { evaluateAll } from './run-record'

/**
 * The statements of a save, written as SQL so that a save is a small fixed number of them on the transaction's one
 * connection (run.service.ts `setReading`; counted in tests/server/run-statements.test.ts).
 */

/**
 * Sends a statement by name on the caller's connection (a transaction's, or one taken for a save's two statements), so
 * PostgreSQL parses and plans it once per connection instead of on every save (TypeORM's `query` sends unnamed
 * statements, planned every time: about 0.7 ms of a save, measured with `SAVE_BENCH_PG_STATS=1 npm run bench:save`).
 * Each name stands for one fixed text. A manager with no connection of its own falls back to its own query.
 */
async function named<T>(tx: EntityManager, name: string, text: string, values: unknown[]): Promise<T[]> {
  const runner = tx.queryRunner
  if (!runner || runner.isReleased) return tx.query(text, values)
  const client = (await runner.connect()) as PoolClient
  return (await client.query({ name, text, values })).rows as T[]
}

/** The run as a change reads it, with what it is judged by and whether the person may reach it. */
export interface RunForChange {
  id: string
  project_id: string
  template_version_id: string
  state: RunState
  /** The run's revision as read: a write without the lock lands only if it is unchanged. */
  revision: number
  version_number: number
  template_name: string
  design_point: Equipment['designPoint']
  project: Pick<Project, 'unitSystem' | 'siteElevationM' | 'barometricKpa'>
  allowed: boolean
  /** This change id was applied to this target before (a retry after a lost answer). */
  duplicate: boolean
  /** The run's steps marked not applicable (or otherwise set aside). */
  na_steps: { stepId: string; disposition: unknown; notApplicable: boolean; naReason: string | null }[]
  /**
   * Every reading of the run. What judging and counting read (entry, verdict, value, disposition) comes for all; the
   * rest of a reading (evaluation, version, justification, who changed it and when) only for the fields asked for, the
   * ones a save can change or answer with (`detailed`).
   */
  readings: ReadingRow[]
  /** The fields whose readings came whole (every field when all were asked for). */
  detailed: ReadonlySet<string>
}

/** A reading as the save's first statement sends it for every field: [field, entry, verdict, value, disposition, set aside, reason]. */
type CompactReading = [string, Reading['entry'], string, number | null, Reading['disposition'], boolean, string | null]
/** The rest of a reading, sent only for the fields asked for. */
type ReadingDetail = Pick<Reading, 'fieldId' | 'evaluation' | 'justification' | 'version' | 'updatedBy'> & { updatedAt: string | null; updatedByName: string | null }

/**
 * One statement: the run row as it stands (its revision the check of the write that follows), its project's units and site, equipment design point, version,
 * access, whether the change was applied before, its set-aside steps, and its readings: compact for every field, whole
 * (with their authors' names) only for `detailsOf`, the fields a save can change; null asks for all of them whole.
 */
export async function runForChange(
  tx: EntityManager,
  user: SessionUser,
  runId: string,
  change: { changeId: string; target: 'reading' | 'step'; targetId: string },
  detailsOf: ReadonlySet<string> | null,
): Promise<RunForChange | null> {
  const rows = await named<Omit<RunForChange, 'readings' | 'detailed'> & { readings: CompactReading[] | null; details: ReadingDetail[] | null }>(
    tx,
    'startproof-run-for-change',
    `SELECT r.id, r.project_id, r.template_version_id, r.state, r.revision, v.number AS version_number, t.name AS template_name,
            e.design_point,
            json_build_object('unitSystem', p.unit_system, 'siteElevationM', p.site_elevation_m, 'barometricKpa', p.barometric_kpa) AS project,
            CASE WHEN $3 = 'admin'
                 THEN EXISTS (SELECT 1 FROM app_user u WHERE u.id = $2 AND u.organization_id = p.organization_id)
                 ELSE EXISTS (SELECT 1 FROM project_member m WHERE m.project_id = p.id AND m.user_id = $2) END AS allowed,
            EXISTS (SELECT 1 FROM run_change c WHERE c.id = $4 AND c.run_id = r.id AND c.target = $5 AND c.target_id = $6) AS duplicate,
            COALESCE((SELECT json_agg(json_build_object('stepId', s.step_id, 'disposition', s.disposition, 'notApplicable', s.not_applicable, 'naReason', s.na_reason))
                        FROM run_step s WHERE s.run_id = r.id AND s.not_applicable), '[]'::json) AS na_steps,
            (SELECT json_agg(json_build_array(rd.field_id, rd.entry, rd.verdict, rd.canonical_value, rd.disposition, rd.not_applicable, rd.na_reason))
               FROM reading rd WHERE rd.run_id = r.id) AS readings,
            (SELECT json_agg(json_build_object('fieldId', rd.field_id, 'evaluation', rd.evaluation, 'justification', rd.justification, 'version', rd.version,
                    'updatedBy', rd.updated_by, 'updatedAt', rd.updated_at, 'updatedByName', u.display_name))
               FROM reading rd LEFT JOIN app_user u ON u.id = rd.updated_by
              WHERE rd.run_id = r.id AND ($7::text[] IS NULL OR rd.field_id = ANY($7::text[]))) AS details
       FROM run r
       JOIN project p ON p.id = r.project_id
       JOIN equipment e ON e.id = r.equipment_id
       JOIN template_version v ON v.id = r.template_version_id
       JOIN checklist_template t ON t.id = v.template_id
      WHERE r.id = $1`,
    [runId, user.id, user.role, change.changeId, change.target, change.targetId, detailsOf ? [...detailsOf] : null],
  )
  const row = rows[0]
  if (!row) return null
  const { readings: compact, details, ...run } = row
  const detailByField = new Map((details ?? []).map((d) => [d.fieldId, d]))
  const readings = (compact ?? []).map(([fieldId, entry, verdict, canonicalValue, disposition, notApplicable, naReason]): ReadingRow => {
    const d = detailByField.get(fieldId)
    return {
      runId,
      fieldId,
      entry,
      verdict,
      canonicalValue,
      disposition,
      notApplicable,
      naReason,
      // A reading not asked for whole is only judged and counted from: its evaluation, version and author are not read.
      evaluation: (d?.evaluation ?? null) as Reading['evaluation'],
      justification: d?.justification ?? null,
      version: d?.version ?? 0,
      updatedBy: d?.updatedBy ?? null,
      updatedAt: d?.updatedAt ? new Date(d.updatedAt) : null,
      updatedByName: d?.updatedByName ?? null,
    } as ReadingRow
  })
  return { ...run, readings, detailed: new Set(detailByField.keys()) }
}

export type ReadingRow = Reading & { updatedByName: string | null }

/**
 * One statement: the run's row lock for the rest of the transaction. Taken on its own, before the run is read: a
 * statement that reads other rows and waits for the lock would see them as they were before the change it waited for
 * (READ COMMITTED re-checks only the locked row), and judge from readings another save has since changed.
 */
export async function lockRun(tx: EntityManager, runId: string): Promise<void> {
  await named(tx, 'startproof-lock-run', `SELECT 1 FROM run WHERE id = $1 FOR UPDATE`, [runId])
}

/** One statement: every reading of the run, with the name of whoever last changed each. */
export async function readingRows(tx: EntityManager, runId: string): Promise<ReadingRow[]> {
  const rows: Record<string, unknown>[] = await tx.query(
    `SELECT rd.field_id, rd.entry, rd.canonical_value, rd.verdict, rd.evaluation, rd.disposition, rd.not_applicable, rd.na_reason,
            rd.justification, rd.version, rd.updated_by, rd.updated_at, u.display_name AS updated_by_name
       FROM reading rd LEFT JOIN app_user u ON u.id = rd.updated_by
      WHERE rd.run_id = $1`,
    [runId],
  )
  return rows.map((r) => ({
    runId,
    fieldId: r.field_id as string,
    entry: r.entry as Reading['entry'],
    canonicalValue: r.canonical_value as number | null,
    verdict: r.verdict as string,
    evaluation: r.evaluation as Reading['evaluation'],
    disposition: r.disposition as Reading['disposition'],
    notApplicable: r.not_applicable as boolean,
    naReason: r.na_reason as string | null,
    justification: r.justification as string | null,
    version: r.version as number,
    updatedBy: r.updated_by as string | null,
    updatedAt: r.updated_at as Date | null,
    updatedByName: r.updated_by_name as string | null,
  }))
}

/**
 * Re-judges the fields in `only` (the dependents of the changed field; every field when absent) from the rows in
 * memory, updates those rows, and returns the ones whose evaluation changed.
 */
export function rejudged(
  ctx: { definition: ChecklistDefinition; equipment: Pick<Equipment, 'designPoint'>; project: Pick<Project, 'unitSystem'> & Partial<Pick<Project, 'siteElevationM' | 'barometricKpa'>> },
  readings: Reading[],
  naSteps: ReadonlySet<string>,
  only?: ReadonlySet<string>,
): Reading[] {
  const evaluations = evaluateAll(ctx, readings, naSteps, only)
  const changed: Reading[] = []
  for (const r of readings) {
    const evaluation = evaluations[r.fieldId]
    if (!evaluation || isDeepStrictEqual(evaluation, r.evaluation)) continue
    r.evaluation = evaluation
    r.verdict = evaluation.verdict
    r.canonicalValue = evaluation.canonical?.value ?? null
    changed.push(r)
  }
  return changed
}

/** One statement: the run's counts kept for the run list (a step set aside, a re-judged run, a new run). */
export async function storeProgress(tx: EntityManager, runId: string, progress: RunProgress): Promise<void> {
  await tx.query(
    `INSERT INTO run_progress (run_id, progress) VALUES ($1, $2::jsonb) ON CONFLICT (run_id) DO UPDATE SET progress = EXCLUDED.progress`,
    [runId, JSON.stringify(progress)],
  )
}

/** The saved field's new content and every changed verdict, as the JSON record set `recordChange` writes. */
function readingRecords(rows: Reading[], ownFieldId: string | null) {
  return rows.map((r) => ({
    field_id: r.fieldId,
    own: r.fieldId === ownFieldId,
    entry: r.entry,
    disposition: r.disposition,
    not_applicable: r.notApplicable,
    na_reason: r.naReason,
    justification: r.justification,
    version: r.version,
    updated_by: r.updatedBy,
    updated_at: r.updatedAt?.toISOString() ?? null,
    evaluation: r.evaluation,
    verdict: r.verdict,
    canonical_value: r.canonicalValue,
  }))
}

/**
 * One statement for everything a save writes: the saved field's new content (when `ownFieldId` is given) and every
 * changed verdict from one JSON record set, the change id (a retry of it is then answered as a duplicate), the run's
 * revision, and, when something changed, the audit event, the run's last-changed time and its counts.
 *
 * With `expected` (the revision and state the save read) it writes only if they are still the run's, as one atomic
 * statement: a change committed in between, or one holding the row lock meanwhile, leaves it writing nothing, and it
 * answers false. A save under the run's row lock always finds them unchanged; `expected` null writes regardless.
 */
export async function recordChange(
  tx: EntityManager,
  change: { changeId: string; runId: string; target: 'reading' | 'step'; targetId: string; userId: string; at: Date },
  audit: (AuditEntry & { occurredAt: Date }) | null,
  /** The run's counts after the change, kept in run_progress for the run list (null: unchanged). */
  progress: RunProgress | null,
  readings: { rows: Reading[]; ownFieldId: string | null } = { rows: [], ownFieldId: null },
  expected: { revision: number; state: RunState } | null = null,
): Promise<boolean> {
  // jsonb_to_recordset keeps a JSON null as the jsonb value 'null'; NULLIF stores it as SQL NULL, as the entity does.
  const [row] = await named<{ written: number }>(
    tx,
    'startproof-record-change',
    `WITH guard AS (
       UPDATE run SET revision = revision + 1, updated_at = CASE WHEN $14::boolean THEN $6::timestamptz ELSE updated_at END
        WHERE id = $2 AND ($17::integer IS NULL OR (revision = $17::integer AND state = $18::text))
       RETURNING id
     ), written AS (
       UPDATE reading AS r SET
          evaluation = v.evaluation,
          verdict = v.verdict,
          canonical_value = v.canonical_value,
          entry = CASE WHEN v.own THEN NULLIF(v.entry, 'null'::jsonb) ELSE r.entry END,
          disposition = CASE WHEN v.own THEN NULLIF(v.disposition, 'null'::jsonb) ELSE r.disposition END,
          not_applicable = CASE WHEN v.own THEN v.not_applicable ELSE r.not_applicable END,
          na_reason = CASE WHEN v.own THEN v.na_reason ELSE r.na_reason END,
          justification = CASE WHEN v.own THEN v.justification ELSE r.justification END,
          version = CASE WHEN v.own THEN v.version ELSE r.version END,
          updated_by = CASE WHEN v.own THEN v.updated_by ELSE r.updated_by END,
          updated_at = CASE WHEN v.own THEN v.updated_at ELSE r.updated_at END
         FROM jsonb_to_recordset($16::jsonb) AS v(field_id text, own boolean, entry jsonb, disposition jsonb, not_applicable boolean, na_reason text,
              justification text, version integer, updated_by uuid, updated_at timestamptz, evaluation jsonb, verdict text, canonical_value double precision),
              guard
        WHERE r.run_id = guard.id AND r.field_id = v.field_id
     ), change AS (
       INSERT INTO run_change (id, run_id, target, target_id, user_id, applied_at) SELECT $1, guard.id, $3, $4, $5, $6 FROM guard
     ), audit AS (
       INSERT INTO audit_event (actor_id, action, entity_type, entity_id, project_id, before, after, occurred_at)
       SELECT $7, $8, $9, $10, $11, $12::jsonb, $13::jsonb, $6 FROM guard WHERE $14::boolean
     ), progress AS (
       INSERT INTO run_progress (run_id, progress) SELECT guard.id, $15::jsonb FROM guard WHERE $15::jsonb IS NOT NULL
       ON CONFLICT (run_id) DO UPDATE SET progress = EXCLUDED.progress
     )
     SELECT count(*)::integer AS written FROM guard`,
    [
      change.changeId,
      change.runId,
      change.target,
      change.targetId,
      change.userId,
      change.at.toISOString(),
      audit?.actorId ?? null,
      audit?.action ?? null,
      audit?.entityType ?? null,
      audit?.entityId ?? null,
      audit?.projectId ?? null,
      audit?.before ? JSON.stringify(audit.before) : null,
      audit?.after ? JSON.stringify(audit.after) : null,
      audit !== null,
      progress ? JSON.stringify(progress) : null,
      JSON.stringify(readingRecords(readings.rows, readings.ownFieldId)),
      expected?.revision ?? null,
      expected?.state ?? null,
    ],
  )
  return row.written === 1
}

export type StepRow = RunStep & { updatedByName: string | null }

/** One statement: every step of the run, with the name of whoever last changed each. */
export async function stepRows(manager: EntityManager, runId: string): Promise<StepRow[]> {
  const rows: Record<string, unknown>[] = await manager.query(
    `SELECT s.step_id, s.note, s.disposition, s.not_applicable, s.na_reason, s.version, s.updated_by, s.updated_at, u.display_name AS updated_by_name
       FROM run_step s LEFT JOIN app_user u ON u.id = s.updated_by
      WHERE s.run_id = $1`,
    [runId],
  )
  return rows.map((r) => ({
    runId,
    stepId: r.step_id as string,
    note: r.note as string,
    disposition: r.disposition as RunStep['disposition'],
    notApplicable: r.not_applicable as boolean,
    naReason: r.na_reason as string | null,
    version: r.version as number,
    updatedBy: r.updated_by as string | null,
    updatedAt: r.updated_at as Date | null,
    updatedByName: r.updated_by_name as string | null,
  }) as StepRow)
}
