import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * `run.revision` counts every change to what a save judges by: a reading or step written, verdicts re-judged after a
 * design or site change, the run's state. A save reads the run without a lock and writes only if the revision is still
 * the one it read (one statement, no transaction held across the two); if it moved, the save is redone under the
 * run's row lock. `run.version` stays what the run page shows (signing, returns).
 */
export class RunRevision1764750000000 implements MigrationInterface {
  name = 'RunRevision1764750000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE run ADD COLUMN revision integer NOT NULL DEFAULT 0`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE run DROP COLUMN revision`)
  }
}
