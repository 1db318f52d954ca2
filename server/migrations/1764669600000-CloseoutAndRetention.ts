import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * Closeout documents (O&M manuals, warranty letters, test certificates) attached to a project, and closing a project.
 * Retention: a closeout document is never changed or deleted, and a closed project keeps its reports.
 */
export class CloseoutAndRetention1764669600000 implements MigrationInterface {
  name = 'CloseoutAndRetention1764669600000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE project ADD COLUMN closed_at timestamptz, ADD COLUMN closed_by uuid REFERENCES app_user(id) ON DELETE RESTRICT`)
    await q.query(`
      CREATE TABLE closeout_document (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        project_id uuid NOT NULL REFERENCES project(id) ON DELETE RESTRICT,
        attachment_id uuid NOT NULL REFERENCES attachment(id) ON DELETE RESTRICT,
        title text NOT NULL CHECK (length(title) BETWEEN 1 AND 200),
        category text NOT NULL CHECK (category IN ('om_manual', 'warranty', 'test_certificate', 'drawing', 'training_record', 'other')),
        document_date date NOT NULL,
        uploaded_by uuid NOT NULL REFERENCES app_user(id) ON DELETE RESTRICT,
        uploaded_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`CREATE INDEX closeout_document_project_idx ON closeout_document (project_id, document_date DESC, id)`)
    await q.query(`
      CREATE FUNCTION closeout_document_is_kept() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION 'closeout document % is part of the handover record and cannot be changed or deleted', OLD.id USING ERRCODE = 'object_not_in_prerequisite_state';
      END $$`)
    await q.query(`CREATE TRIGGER closeout_document_kept BEFORE UPDATE OR DELETE ON closeout_document FOR EACH ROW EXECUTE FUNCTION closeout_document_is_kept()`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE closeout_document`)
    await q.query(`DROP FUNCTION closeout_document_is_kept`)
    await q.query(`ALTER TABLE project DROP COLUMN closed_by, DROP COLUMN closed_at`)
  }
}
