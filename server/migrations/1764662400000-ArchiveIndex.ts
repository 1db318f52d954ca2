import type { MigrationInterface, QueryRunner } from 'typeorm'

/** What the archive filters and searches on, copied onto the report when it is issued (it never changes after). */
export class ArchiveIndex1764662400000 implements MigrationInterface {
  name = 'ArchiveIndex1764662400000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      ALTER TABLE report
        ADD COLUMN project_id uuid REFERENCES project(id) ON DELETE RESTRICT,
        ADD COLUMN equipment_id uuid REFERENCES equipment(id) ON DELETE RESTRICT,
        ADD COLUMN template_id uuid REFERENCES checklist_template(id) ON DELETE RESTRICT,
        ADD COLUMN technician_id uuid REFERENCES app_user(id) ON DELETE SET NULL,
        ADD COLUMN accepted_at timestamptz,
        ADD COLUMN fail_count integer,
        ADD COLUMN marginal_count integer,
        ADD COLUMN open_finding_count integer,
        ADD COLUMN search tsvector`)
    await q.query(`CREATE INDEX report_archive_idx ON report (project_id, accepted_at DESC, id) WHERE status = 'ready'`)
    await q.query(`CREATE INDEX report_equipment_idx ON report (equipment_id, template_id, accepted_at)`)
    await q.query(`CREATE INDEX report_search_idx ON report USING gin (search)`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP INDEX report_search_idx`)
    await q.query(`DROP INDEX report_equipment_idx`)
    await q.query(`DROP INDEX report_archive_idx`)
    await q.query(`ALTER TABLE report DROP COLUMN project_id, DROP COLUMN equipment_id, DROP COLUMN template_id, DROP COLUMN technician_id,
      DROP COLUMN accepted_at, DROP COLUMN fail_count, DROP COLUMN marginal_count, DROP COLUMN open_finding_count, DROP COLUMN search`)
  }
}
