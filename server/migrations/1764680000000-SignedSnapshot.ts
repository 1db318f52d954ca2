import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * The signed snapshot is the record: the exact canonical JSON a performer signed is kept (append-only), the report
 * names the snapshot it was issued from and keeps the identity it printed (tag, serial, project), so later renames
 * change nothing issued. Report rendering is claimed with a lease, and a client's change id is unique per target.
 */
export class SignedSnapshot1764680000000 implements MigrationInterface {
  name = 'SignedSnapshot1764680000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE run_snapshot (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        sha256 char(64) NOT NULL,
        content text NOT NULL,
        created_by uuid REFERENCES app_user(id) ON DELETE RESTRICT,
        created_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT run_snapshot_once UNIQUE (run_id, sha256),
        CONSTRAINT run_snapshot_hash_form CHECK (sha256 ~ '^[0-9a-f]{64}$')
      )`)
    await q.query(`
      CREATE FUNCTION run_snapshot_is_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'a signed snapshot is never changed or deleted' USING ERRCODE = 'object_not_in_prerequisite_state';
      END $$`)
    await q.query(`CREATE TRIGGER run_snapshot_append_only BEFORE UPDATE OR DELETE ON run_snapshot FOR EACH ROW EXECUTE FUNCTION run_snapshot_is_append_only()`)
    await q.query(`CREATE TRIGGER run_snapshot_frozen BEFORE INSERT ON run_snapshot FOR EACH ROW EXECUTE FUNCTION run_accepted_is_frozen()`)

    await q.query(`
      ALTER TABLE report
        ADD COLUMN snapshot_sha256 char(64),
        ADD COLUMN equipment_tag text,
        ADD COLUMN equipment_kind text,
        ADD COLUMN serial_number text,
        ADD COLUMN project_code text,
        ADD COLUMN project_name text,
        ADD COLUMN time_zone text,
        ADD COLUMN template_name text,
        ADD COLUMN template_version integer,
        ADD COLUMN claim_token uuid,
        ADD COLUMN claimed_until timestamptz`)
    // Reports issued before this migration keep the identity their rows point at now (nothing renamed them before, as
    // renaming under an issued report was not refused either; this is the best record there is).
    await q.query(`ALTER TABLE report DISABLE TRIGGER report_frozen`)
    await q.query(`
      UPDATE report r SET equipment_tag = e.tag, equipment_kind = e.kind, serial_number = e.serial_number, project_code = p.code,
             project_name = p.name, time_zone = p.time_zone, template_name = t.name, template_version = v.number,
             snapshot_sha256 = (SELECT s.snapshot_sha256 FROM signature s WHERE s.run_id = r.run_id AND s.meaning = 'accepted_by' AND NOT s.voided)
        FROM run JOIN equipment e ON e.id = run.equipment_id JOIN project p ON p.id = run.project_id
        JOIN template_version v ON v.id = run.template_version_id JOIN checklist_template t ON t.id = v.template_id
       WHERE run.id = r.run_id`)
    await q.query(`ALTER TABLE report ENABLE TRIGGER report_frozen`)

    await q.query(`ALTER TABLE run_change DROP CONSTRAINT run_change_pkey`)
    await q.query(`ALTER TABLE run_change ADD CONSTRAINT run_change_pkey PRIMARY KEY (run_id, target, target_id, id)`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE run_change DROP CONSTRAINT run_change_pkey`)
    await q.query(`ALTER TABLE run_change ADD CONSTRAINT run_change_pkey PRIMARY KEY (id)`)
    await q.query(`ALTER TABLE report DROP COLUMN snapshot_sha256, DROP COLUMN equipment_tag, DROP COLUMN equipment_kind, DROP COLUMN serial_number,
      DROP COLUMN project_code, DROP COLUMN project_name, DROP COLUMN time_zone, DROP COLUMN template_name, DROP COLUMN template_version,
      DROP COLUMN claim_token, DROP COLUMN claimed_until`)
    await q.query(`DROP TABLE run_snapshot`)
    await q.query(`DROP FUNCTION run_snapshot_is_append_only`)
  }
}
