import type { MigrationInterface, QueryRunner } from 'typeorm'

export class Foundation1764633600000 implements MigrationInterface {
  name = 'Foundation1764633600000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE organization (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        name text NOT NULL,
        created_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`
      CREATE TABLE app_user (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        organization_id uuid NOT NULL REFERENCES organization(id) ON DELETE RESTRICT,
        email text NOT NULL,
        display_name text NOT NULL,
        role text NOT NULL CHECK (role IN ('admin', 'technician', 'owner_rep', 'contractor')),
        password_hash text NOT NULL,
        active boolean NOT NULL DEFAULT true,
        last_sign_in_at timestamptz,
        password_changed_at timestamptz,
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT app_user_email_lower CHECK (email = lower(email)),
        CONSTRAINT "UQ_app_user_email" UNIQUE (email)
      )`)
    await q.query(`
      CREATE TABLE project (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        organization_id uuid NOT NULL REFERENCES organization(id) ON DELETE RESTRICT,
        code text NOT NULL,
        name text NOT NULL,
        site_name text NOT NULL,
        site_address text NOT NULL,
        time_zone text NOT NULL,
        unit_system text NOT NULL DEFAULT 'IP' CHECK (unit_system IN ('IP', 'SI')),
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT "UQ_project_code" UNIQUE (code)
      )`)
    await q.query(`
      CREATE TABLE project_member (
        project_id uuid NOT NULL REFERENCES project(id) ON DELETE CASCADE,
        user_id uuid NOT NULL REFERENCES app_user(id) ON DELETE CASCADE,
        added_at timestamptz NOT NULL DEFAULT now(),
        PRIMARY KEY (project_id, user_id)
      )`)
    await q.query(`CREATE INDEX project_member_user_idx ON project_member (user_id)`)
    await q.query(`
      CREATE TABLE audit_event (
        id bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
        occurred_at timestamptz NOT NULL DEFAULT now(),
        actor_id uuid REFERENCES app_user(id) ON DELETE SET NULL,
        action text NOT NULL,
        entity_type text NOT NULL,
        entity_id text,
        project_id uuid REFERENCES project(id) ON DELETE SET NULL,
        before jsonb,
        after jsonb,
        ip inet
      )`)
    await q.query(`CREATE INDEX audit_event_entity_idx ON audit_event (entity_type, entity_id, occurred_at)`)
    await q.query(`
      CREATE FUNCTION audit_event_is_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'audit_event is append-only (% refused)', TG_OP USING ERRCODE = 'insufficient_privilege';
      END $$`)
    await q.query(`
      CREATE TRIGGER audit_event_append_only BEFORE UPDATE OR DELETE ON audit_event
      FOR EACH ROW EXECUTE FUNCTION audit_event_is_append_only()`)
    // Sessions for express-session through connect-pg-simple (its documented table layout).
    await q.query(`
      CREATE TABLE session (
        sid varchar NOT NULL PRIMARY KEY,
        sess json NOT NULL,
        expire timestamp(6) NOT NULL
      )`)
    await q.query(`CREATE INDEX session_expire_idx ON session (expire)`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE session`)
    await q.query(`DROP TABLE audit_event`)
    await q.query(`DROP FUNCTION audit_event_is_append_only`)
    await q.query(`DROP TABLE project_member`)
    await q.query(`DROP TABLE project`)
    await q.query(`DROP TABLE app_user`)
    await q.query(`DROP TABLE organization`)
  }
}
