import type { MigrationInterface, QueryRunner } from 'typeorm'

export class EquipmentAndTemplates1764640800000 implements MigrationInterface {
  name = 'EquipmentAndTemplates1764640800000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE project ADD COLUMN distribution_list text[] NOT NULL DEFAULT '{}'`)
    await q.query(`
      CREATE TABLE attachment (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        organization_id uuid NOT NULL REFERENCES organization(id) ON DELETE RESTRICT,
        storage_key text NOT NULL,
        sha256 char(64) NOT NULL CHECK (sha256 ~ '^[0-9a-f]{64}$'),
        mime_type text NOT NULL,
        size_bytes bigint NOT NULL CHECK (size_bytes > 0),
        original_name text NOT NULL,
        uploaded_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        created_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`
      CREATE TABLE equipment (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        project_id uuid NOT NULL REFERENCES project(id) ON DELETE RESTRICT,
        tag text NOT NULL,
        kind text NOT NULL,
        location text NOT NULL DEFAULT '',
        manufacturer text NOT NULL,
        model text NOT NULL,
        serial_number text NOT NULL,
        year_built integer CHECK (year_built BETWEEN 1950 AND 2100),
        refrigerant text,
        design_point jsonb NOT NULL,
        notes text NOT NULL DEFAULT '',
        nameplate_photo_id uuid REFERENCES attachment(id) ON DELETE RESTRICT,
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT equipment_project_tag_key UNIQUE (project_id, tag)
      )`)
    await q.query(`
      CREATE TABLE checklist_template (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        organization_id uuid NOT NULL REFERENCES organization(id) ON DELETE RESTRICT,
        key text NOT NULL,
        name text NOT NULL,
        equipment_kind text NOT NULL,
        description text NOT NULL DEFAULT '',
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        CONSTRAINT checklist_template_org_key_key UNIQUE (organization_id, key)
      )`)
    await q.query(`
      CREATE TABLE template_version (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        template_id uuid NOT NULL REFERENCES checklist_template(id) ON DELETE RESTRICT,
        number integer NOT NULL CHECK (number > 0),
        status text NOT NULL CHECK (status IN ('draft', 'published', 'retired')),
        definition jsonb NOT NULL,
        changelog text,
        created_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        published_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        published_at timestamptz,
        retired_by uuid REFERENCES app_user(id) ON DELETE SET NULL,
        retired_at timestamptz,
        CONSTRAINT template_version_number_key UNIQUE (template_id, number),
        CONSTRAINT template_version_published_has_changelog CHECK (status = 'draft' OR (changelog IS NOT NULL AND published_at IS NOT NULL))
      )`)
    await q.query(`CREATE UNIQUE INDEX template_version_one_draft ON template_version (template_id) WHERE status = 'draft'`)
    // A published version is frozen: only its retirement may be recorded, and nothing of a retired one changes.
    await q.query(`
      CREATE FUNCTION template_version_guard() RETURNS trigger LANGUAGE plpgsql AS $$
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
           AND NEW.created_at = OLD.created_at AND NEW.created_by IS NOT DISTINCT FROM OLD.created_by THEN
          RETURN NEW;
        END IF;
        RAISE EXCEPTION 'template version % is % and cannot be changed', OLD.number, OLD.status USING ERRCODE = 'object_not_in_prerequisite_state';
      END $$`)
    await q.query(`
      CREATE TRIGGER template_version_frozen BEFORE UPDATE OR DELETE ON template_version
      FOR EACH ROW EXECUTE FUNCTION template_version_guard()`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE template_version`)
    await q.query(`DROP FUNCTION template_version_guard`)
    await q.query(`DROP TABLE checklist_template`)
    await q.query(`DROP TABLE equipment`)
    await q.query(`DROP TABLE attachment`)
    await q.query(`ALTER TABLE project DROP COLUMN distribution_list`)
  }
}
