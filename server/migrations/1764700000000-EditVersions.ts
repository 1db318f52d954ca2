import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * Edit versions: projects, equipment, findings and template versions carry the version an edit must be made on, so two
 * people editing at once get a conflict instead of a silent overwrite. The audit trail keeps a deleted project's id as
 * plain data: its foreign key said ON DELETE SET NULL, an UPDATE of append-only rows, so every project delete failed.
 */
export class EditVersions1764700000000 implements MigrationInterface {
  name = 'EditVersions1764700000000'

  async up(q: QueryRunner): Promise<void> {
    for (const table of ['project', 'equipment', 'finding', 'template_version']) {
      await q.query(`ALTER TABLE ${table} ADD COLUMN version integer NOT NULL DEFAULT 1 CHECK (version > 0)`)
    }
    // Whatever the constraint was named, no foreign key from audit_event to project may remain.
    await q.query(`
      DO $$
      DECLARE c text;
      BEGIN
        FOR c IN SELECT conname FROM pg_constraint
                  WHERE conrelid = 'audit_event'::regclass AND confrelid = 'project'::regclass AND contype = 'f' LOOP
          EXECUTE format('ALTER TABLE audit_event DROP CONSTRAINT %I', c);
        END LOOP;
      END $$`)
    // A published version stays frozen with its edit version too: retiring it changes nothing else.
    await q.query(guard(true))
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(guard(false))
    // NOT VALID: events of projects deleted meanwhile keep their id, which no longer matches a row.
    await q.query(`ALTER TABLE audit_event ADD CONSTRAINT audit_event_project_id_fkey FOREIGN KEY (project_id) REFERENCES project(id) ON DELETE SET NULL NOT VALID`)
    for (const table of ['template_version', 'finding', 'equipment', 'project']) await q.query(`ALTER TABLE ${table} DROP COLUMN version`)
  }
}

/** `template_version_guard` as created with the table, with (`withVersion`) or without the edit version compared. */
function guard(withVersion: boolean): string {
  return `
    CREATE OR REPLACE FUNCTION template_version_guard() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF TG_OP = 'DELETE' THEN
        IF OLD.status <> 'draft' THEN
          RAISE EXCEPTION 'template version % is % and cannot be deleted', OLD.number, OLD.status USING ERRCODE = 'object_not_in_prerequisite_state';
        END IF;
        RETURN OLD;
      END IF;
      IF OLD.status = 'draft' THEN
        RETURN NEW;
      END IF;
      IF OLD.status = 'published' AND NEW.status = 'retired'
         AND NEW.definition = OLD.definition AND NEW.number = OLD.number AND NEW.template_id = OLD.template_id
         AND NEW.changelog IS NOT DISTINCT FROM OLD.changelog
         AND NEW.published_at IS NOT DISTINCT FROM OLD.published_at AND NEW.published_by IS NOT DISTINCT FROM OLD.published_by
         AND NEW.created_at = OLD.created_at AND NEW.created_by IS NOT DISTINCT FROM OLD.created_by${withVersion ? '\n         AND NEW.version = OLD.version' : ''} THEN
        RETURN NEW;
      END IF;
      RAISE EXCEPTION 'template version % is % and cannot be changed', OLD.number, OLD.status USING ERRCODE = 'object_not_in_prerequisite_state';
    END $$`
}
