import type { MigrationInterface, QueryRunner } from 'typeorm'

export class Runs1764648000000 implements MigrationInterface {
  name = 'Runs1764648000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE run (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        project_id uuid NOT NULL REFERENCES project(id) ON DELETE RESTRICT,
        equipment_id uuid NOT NULL REFERENCES equipment(id) ON DELETE RESTRICT,
        template_version_id uuid NOT NULL REFERENCES template_version(id) ON DELETE RESTRICT,
        state text NOT NULL CHECK (state IN ('in_progress', 'submitted', 'accepted', 'returned')),
        version integer NOT NULL DEFAULT 1,
        started_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        started_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`CREATE INDEX run_project_idx ON run (project_id, state)`)
    await q.query(`CREATE INDEX run_equipment_idx ON run (equipment_id)`)
    await q.query(`
      CREATE TABLE reading (
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        field_id text NOT NULL,
        entry jsonb,
        canonical_value double precision,
        verdict text NOT NULL CHECK (verdict IN ('pass', 'marginal', 'fail', 'incomplete')),
        evaluation jsonb NOT NULL,
        not_applicable boolean NOT NULL DEFAULT false,
        na_reason text,
        justification text,
        version integer NOT NULL DEFAULT 0,
        updated_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        updated_at timestamptz,
        PRIMARY KEY (run_id, field_id),
        CONSTRAINT reading_na_has_reason CHECK (NOT not_applicable OR coalesce(btrim(na_reason), '') <> '')
      )`)
    await q.query(`
      CREATE TABLE run_step (
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        step_id text NOT NULL,
        note text NOT NULL DEFAULT '',
        not_applicable boolean NOT NULL DEFAULT false,
        na_reason text,
        version integer NOT NULL DEFAULT 0,
        updated_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        updated_at timestamptz,
        PRIMARY KEY (run_id, step_id),
        CONSTRAINT run_step_na_has_reason CHECK (NOT not_applicable OR coalesce(btrim(na_reason), '') <> '')
      )`)
    await q.query(`
      CREATE TABLE run_change (
        id uuid PRIMARY KEY,
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        target text NOT NULL CHECK (target IN ('reading', 'step')),
        target_id text NOT NULL,
        user_id uuid REFERENCES app_user(id) ON DELETE SET NULL,
        applied_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`
      CREATE TABLE finding (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        step_id text NOT NULL,
        field_id text,
        severity text NOT NULL CHECK (severity IN ('minor', 'major', 'critical')),
        description text NOT NULL,
        status text NOT NULL DEFAULT 'open' CHECK (status IN ('open', 'resolved')),
        resolution text,
        resolved_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        resolved_at timestamptz,
        created_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT finding_resolved_has_resolution CHECK (status = 'open' OR coalesce(btrim(resolution), '') <> '')
      )`)
    await q.query(`CREATE INDEX finding_run_idx ON finding (run_id)`)
    await q.query(`
      CREATE TABLE run_attachment (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        attachment_id uuid NOT NULL REFERENCES attachment(id) ON DELETE RESTRICT,
        step_id text NOT NULL,
        field_id text,
        finding_id uuid REFERENCES finding(id) ON DELETE RESTRICT,
        thumbnail_key text,
        created_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`CREATE INDEX run_attachment_run_idx ON run_attachment (run_id)`)
    // An accepted run is the record: nothing of it, its readings, steps, findings or attachments changes any more.
    await q.query(`
      CREATE FUNCTION run_accepted_is_frozen() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        target_run uuid;
        run_state text;
      BEGIN
        IF TG_TABLE_NAME = 'run' THEN
          IF OLD.state = 'accepted' THEN
            RAISE EXCEPTION 'run % is accepted and cannot be changed', OLD.id USING ERRCODE = 'object_not_in_prerequisite_state';
          END IF;
          RETURN CASE WHEN TG_OP = 'DELETE' THEN OLD ELSE NEW END;
        END IF;
        target_run := CASE WHEN TG_OP = 'INSERT' THEN NEW.run_id ELSE OLD.run_id END;
        SELECT state INTO run_state FROM run WHERE id = target_run;
        IF run_state = 'accepted' THEN
          RAISE EXCEPTION 'run % is accepted; its % cannot be changed', target_run, TG_TABLE_NAME USING ERRCODE = 'object_not_in_prerequisite_state';
        END IF;
        RETURN CASE WHEN TG_OP = 'DELETE' THEN OLD ELSE NEW END;
      END $$`)
    await q.query(`CREATE TRIGGER run_frozen BEFORE UPDATE OR DELETE ON run FOR EACH ROW EXECUTE FUNCTION run_accepted_is_frozen()`)
    for (const table of ['reading', 'run_step', 'finding', 'run_attachment']) {
      await q.query(`CREATE TRIGGER ${table}_frozen BEFORE INSERT OR UPDATE OR DELETE ON ${table} FOR EACH ROW EXECUTE FUNCTION run_accepted_is_frozen()`)
    }
  }

  async down(q: QueryRunner): Promise<void> {
    for (const table of ['run_attachment', 'finding', 'run_change', 'run_step', 'reading', 'run']) await q.query(`DROP TABLE ${table}`)
    await q.query(`DROP FUNCTION run_accepted_is_frozen`)
  }
}
