import type { MigrationInterface, QueryRunner } from 'typeorm'
import { checkIndexOf, countRunRecord, parseRunSnapshot } from '../../shared/record'

/**
 * Supersession by check (docs/REFERENCES.md §Record keeping: supersession by check). Each report keeps, from its signed
 * snapshot, which checks its run performed and which it carried over from which report (`check_index`), so the archive
 * and Verify tell a partly superseded baseline from a superseded one without reading every snapshot; and what the
 * re-test superseded when it was accepted (`supersedes`), printed on its cover and never changed after.
 *
 * Reports issued before are indexed here from their kept snapshots (the same counting rule the application uses); a
 * report with no kept snapshot stays unindexed and is judged by the whole-report rule. Their `supersedes` stays null:
 * what they printed when issued is what they keep.
 */
/**
 * Fills `check_index` of every report that has none from its kept snapshot, 200 at a time; returns how many. Run by the
 * owner with `report_frozen` disabled (ready reports refuse every other change).
 */
export async function indexReportsFromSnapshots(q: { query(sql: string, params?: unknown[]): Promise<unknown> }): Promise<number> {
  let after = '00000000-0000-0000-0000-000000000000'
  let indexed = 0
  for (;;) {
    const rows = (await q.query(
      `SELECT r.id, s.content FROM report r JOIN run_snapshot s ON s.run_id = r.run_id AND s.sha256 = r.snapshot_sha256
        WHERE r.check_index IS NULL AND r.id > $1 ORDER BY r.id LIMIT 200`,
      [after],
    )) as { id: string; content: string }[]
    if (!rows.length) return indexed
    for (const row of rows) {
      const index = checkIndexOf(countRunRecord(parseRunSnapshot(row.content)))
      await q.query(`UPDATE report SET check_index = $2 WHERE id = $1`, [row.id, JSON.stringify(index)])
      indexed += 1
    }
    after = rows[rows.length - 1].id
  }
}

export class CheckSupersession1764730000000 implements MigrationInterface {
  name = 'CheckSupersession1764730000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE report ADD COLUMN check_index jsonb, ADD COLUMN supersedes jsonb`)
    await q.query(`ALTER TABLE report DISABLE TRIGGER report_frozen`)
    await indexReportsFromSnapshots(q)
    await q.query(`ALTER TABLE report ENABLE TRIGGER report_frozen`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE report DROP COLUMN supersedes, DROP COLUMN check_index`)
  }
}
