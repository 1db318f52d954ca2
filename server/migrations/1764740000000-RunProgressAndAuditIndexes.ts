import type { MigrationInterface, QueryRunner } from 'typeorm'
import type { ChecklistDefinition } from '../../shared/schemas/checklist'
import { countRun, dispositionOf } from '../../shared/record'

/**
 * Speed of the lists and the audit trail:
 * - `run_progress` keeps each run's counts (the one counting rule, shared/record `countRun`), written in the same
 *   statement as the save that changes them, so the run list reads a row per run instead of every reading of every run.
 *   A table of its own: an accepted run's row is frozen by trigger, its counts are written once and never again.
 * - The run list pages by (updated_at, id), newest first.
 * - The run's audit trail is found by `entity_id` (the run, or `run/field`, `run/step`) and by `after ->> 'runId'`.
 */
export class RunProgressAndAuditIndexes1764740000000 implements MigrationInterface {
  name = 'RunProgressAndAuditIndexes1764740000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE run_progress (run_id uuid PRIMARY KEY REFERENCES run (id) ON DELETE CASCADE, progress jsonb NOT NULL)`)
    await q.query(`CREATE INDEX run_updated_at_id_idx ON run (updated_at DESC, id DESC)`)
    await q.query(`CREATE INDEX audit_event_entity_id_idx ON audit_event (entity_id text_pattern_ops)`)
    await q.query(`CREATE INDEX audit_event_after_run_id_idx ON audit_event ((after ->> 'runId'))`)
    await fillRunProgress(q)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP INDEX audit_event_after_run_id_idx`)
    await q.query(`DROP INDEX audit_event_entity_id_idx`)
    await q.query(`DROP INDEX run_updated_at_id_idx`)
    await q.query(`DROP TABLE run_progress`)
  }
}

/** Counts every run that has none yet from its stored rows, 100 runs at a time; returns how many. */
export async function fillRunProgress(q: { query(sql: string, params?: unknown[]): Promise<unknown> }): Promise<number> {
  let after = '00000000-0000-0000-0000-000000000000'
  let filled = 0
  for (;;) {
    const runs = (await q.query(
      `SELECT r.id, v.definition FROM run r JOIN template_version v ON v.id = r.template_version_id
        WHERE r.id > $1 AND NOT EXISTS (SELECT 1 FROM run_progress p WHERE p.run_id = r.id) ORDER BY r.id LIMIT 100`,
      [after],
    )) as { id: string; definition: ChecklistDefinition }[]
    if (!runs.length) return filled
    const ids = runs.map((r) => r.id)
    const readings = (await q.query(
      `SELECT run_id, field_id, verdict, canonical_value, disposition, not_applicable, na_reason FROM reading WHERE run_id = ANY($1::uuid[])`,
      [ids],
    )) as { run_id: string; field_id: string; verdict: string; canonical_value: number | null; disposition: never; not_applicable: boolean; na_reason: string | null }[]
    const steps = (await q.query(
      `SELECT run_id, step_id, disposition, not_applicable, na_reason FROM run_step WHERE run_id = ANY($1::uuid[]) AND not_applicable`,
      [ids],
    )) as { run_id: string; step_id: string; disposition: never; not_applicable: boolean; na_reason: string | null }[]
    for (const run of runs) {
      const count = countRun(
        run.definition,
        readings
          .filter((r) => r.run_id === run.id)
          .map((r) => ({ fieldId: r.field_id, verdict: r.verdict, hasValue: r.canonical_value !== null, disposition: dispositionOf({ disposition: r.disposition, notApplicable: r.not_applicable, naReason: r.na_reason }) })),
        steps.filter((s) => s.run_id === run.id).map((s) => ({ stepId: s.step_id, disposition: dispositionOf({ disposition: s.disposition, notApplicable: s.not_applicable, naReason: s.na_reason }) })),
      )
      await q.query(`INSERT INTO run_progress (run_id, progress) VALUES ($1, $2) ON CONFLICT (run_id) DO NOTHING`, [run.id, JSON.stringify(count.totals)])
      filled += 1
    }
    after = runs[runs.length - 1].id
  }
}
