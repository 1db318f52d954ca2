import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * Dispositions: a reading or step without a reading of its own says why (not applicable, by others, verified earlier,
 * deferred, not done) instead of one "not applicable" flag; the old flag stays for records made before. The acceptance
 * signature keeps the exceptions its signer acknowledged. A starter template's versions say which revision of the
 * starter library they came from, so a library change is published as a new version of the firm's template.
 */
export class Dispositions1764710000000 implements MigrationInterface {
  name = 'Dispositions1764710000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE reading ADD COLUMN disposition jsonb`)
    // A value with no acceptance criterion is recorded, never a pass.
    await q.query(`ALTER TABLE reading DROP CONSTRAINT reading_verdict_check`)
    await q.query(`ALTER TABLE reading ADD CONSTRAINT reading_verdict_check CHECK (verdict IN ('pass', 'marginal', 'fail', 'incomplete', 'recorded'))`)
    await q.query(`ALTER TABLE run_step ADD COLUMN disposition jsonb`)
    // A disposition says what makes it a record (shared/record/disposition.ts); the old flag still needs its reason.
    for (const table of ['reading', 'run_step']) {
      await q.query(`ALTER TABLE ${table} DROP CONSTRAINT ${table}_na_has_reason`)
      await q.query(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_na_has_reason CHECK (NOT not_applicable OR disposition IS NOT NULL OR coalesce(btrim(na_reason), '') <> '')`)
      await q.query(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_disposition_sets_na CHECK (disposition IS NULL OR not_applicable)`)
    }
    await q.query(`ALTER TABLE signature ADD COLUMN acknowledged_exceptions jsonb`)
    await q.query(`ALTER TABLE template_version ADD COLUMN starter_revision integer CHECK (starter_revision > 0)`)
    // Versions installed from the starter library so far were its first revision.
    await q.query(`ALTER TABLE template_version DISABLE TRIGGER template_version_frozen`)
    await q.query(`
      UPDATE template_version v SET starter_revision = 1
        FROM checklist_template t
       WHERE v.template_id = t.id AND v.number = 1 AND t.key IN ('centrifugal-chiller-startup', 'pump-startup')
         AND EXISTS (SELECT 1 FROM audit_event a WHERE a.entity_id = v.id::text AND a.action = 'template.starter_install')`)
    await q.query(`ALTER TABLE template_version ENABLE TRIGGER template_version_frozen`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE template_version DROP COLUMN starter_revision`)
    await q.query(`ALTER TABLE signature DROP COLUMN acknowledged_exceptions`)
    for (const table of ['reading', 'run_step']) {
      await q.query(`ALTER TABLE ${table} DROP CONSTRAINT ${table}_disposition_sets_na`)
      await q.query(`ALTER TABLE ${table} DROP CONSTRAINT ${table}_na_has_reason`)
      await q.query(`UPDATE ${table} SET na_reason = coalesce(na_reason, disposition ->> 'kind') WHERE not_applicable`)
      await q.query(`ALTER TABLE ${table} ADD CONSTRAINT ${table}_na_has_reason CHECK (NOT not_applicable OR coalesce(btrim(na_reason), '') <> '')`)
    }
    await q.query(`ALTER TABLE run_step DROP COLUMN disposition`)
    await q.query(`ALTER TABLE reading DROP COLUMN disposition`)
    await q.query(`ALTER TABLE reading DROP CONSTRAINT reading_verdict_check`)
    await q.query(`UPDATE reading SET verdict = 'pass' WHERE verdict = 'recorded'`)
    await q.query(`ALTER TABLE reading ADD CONSTRAINT reading_verdict_check CHECK (verdict IN ('pass', 'marginal', 'fail', 'incomplete'))`)
  }
}
