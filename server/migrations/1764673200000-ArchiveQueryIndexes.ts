import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * Archive query indexes measured with `npm run bench:archive` at 100 000 reports: the newest-first page across many
 * projects walks `report_archive_recent_idx` instead of sorting the whole table, and the counts with fails, open
 * findings, technician, equipment or checklist filters are index-only scans of the covering `report_archive_idx`.
 */
export class ArchiveQueryIndexes1764673200000 implements MigrationInterface {
  name = 'ArchiveQueryIndexes1764673200000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE INDEX report_archive_recent_idx ON report (accepted_at DESC, id DESC) WHERE status = 'ready'`)
    await q.query(`DROP INDEX report_archive_idx`)
    await q.query(`
      CREATE INDEX report_archive_idx ON report (project_id, accepted_at DESC, id)
        INCLUDE (fail_count, open_finding_count, technician_id, equipment_id, template_id) WHERE status = 'ready'`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP INDEX report_archive_recent_idx`)
    await q.query(`DROP INDEX report_archive_idx`)
    await q.query(`CREATE INDEX report_archive_idx ON report (project_id, accepted_at DESC, id) WHERE status = 'ready'`)
  }
}
