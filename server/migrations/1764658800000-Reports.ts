import type { MigrationInterface, QueryRunner } from 'typeorm'

export class Reports1764658800000 implements MigrationInterface {
  name = 'Reports1764658800000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE project ADD COLUMN report_paper text NOT NULL DEFAULT 'Letter' CHECK (report_paper IN ('A4', 'Letter'))`)
    await q.query(`UPDATE project SET report_paper = 'A4' WHERE unit_system = 'SI'`)
    await q.query(`CREATE SEQUENCE report_number_seq`)
    await q.query(`
      CREATE TABLE report (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        report_number text NOT NULL CONSTRAINT report_number_key UNIQUE,
        status text NOT NULL CHECK (status IN ('pending', 'ready', 'failed')),
        paper text NOT NULL CHECK (paper IN ('A4', 'Letter')),
        attempts integer NOT NULL DEFAULT 0,
        last_error text,
        storage_key text,
        sha256 char(64),
        content_sha256 char(64),
        size_bytes bigint,
        seal_info jsonb,
        created_at timestamptz NOT NULL DEFAULT now(),
        ready_at timestamptz,
        CONSTRAINT report_one_per_run UNIQUE (run_id),
        CONSTRAINT report_ready_has_file CHECK (status <> 'ready' OR (storage_key IS NOT NULL AND sha256 IS NOT NULL))
      )`)
    // A ready report is the archived record: its file and hashes never change and it is never deleted.
    await q.query(`
      CREATE FUNCTION report_ready_is_frozen() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP = 'DELETE' OR OLD.status = 'ready' THEN
          RAISE EXCEPTION 'report % is archived and cannot be changed or deleted', OLD.report_number USING ERRCODE = 'object_not_in_prerequisite_state';
        END IF;
        RETURN NEW;
      END $$`)
    await q.query(`CREATE TRIGGER report_frozen BEFORE UPDATE OR DELETE ON report FOR EACH ROW EXECUTE FUNCTION report_ready_is_frozen()`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE report`)
    await q.query(`DROP FUNCTION report_ready_is_frozen`)
    await q.query(`DROP SEQUENCE report_number_seq`)
    await q.query(`ALTER TABLE project DROP COLUMN report_paper`)
  }
}
