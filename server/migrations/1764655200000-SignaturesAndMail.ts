import type { MigrationInterface, QueryRunner } from 'typeorm'

export class SignaturesAndMail1764655200000 implements MigrationInterface {
  name = 'SignaturesAndMail1764655200000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE signature (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        run_id uuid NOT NULL REFERENCES run(id) ON DELETE RESTRICT,
        meaning text NOT NULL CHECK (meaning IN ('performed_by', 'accepted_by')),
        signer_id uuid NOT NULL REFERENCES app_user(id) ON DELETE RESTRICT,
        printed_name text NOT NULL,
        role text NOT NULL,
        signed_at timestamptz NOT NULL DEFAULT now(),
        time_zone text NOT NULL,
        image_data_url text NOT NULL CHECK (image_data_url LIKE 'data:image/png;base64,%'),
        snapshot_sha256 char(64) NOT NULL CHECK (snapshot_sha256 ~ '^[0-9a-f]{64}$'),
        voided boolean NOT NULL DEFAULT false,
        voided_at timestamptz,
        void_reason text
      )`)
    await q.query(`CREATE UNIQUE INDEX signature_one_live_per_meaning ON signature (run_id, meaning) WHERE NOT voided`)
    // A signature is never edited or removed; the only change allowed is voiding it (kept, with its reason).
    await q.query(`
      CREATE FUNCTION signature_guard() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP = 'DELETE' THEN
          RAISE EXCEPTION 'signatures are never deleted' USING ERRCODE = 'object_not_in_prerequisite_state';
        END IF;
        IF OLD.voided OR NOT NEW.voided OR NEW.run_id <> OLD.run_id OR NEW.meaning <> OLD.meaning OR NEW.signer_id <> OLD.signer_id
           OR NEW.printed_name <> OLD.printed_name OR NEW.role <> OLD.role OR NEW.signed_at <> OLD.signed_at
           OR NEW.image_data_url <> OLD.image_data_url OR NEW.snapshot_sha256 <> OLD.snapshot_sha256 THEN
          RAISE EXCEPTION 'a signature can only be voided, once' USING ERRCODE = 'object_not_in_prerequisite_state';
        END IF;
        RETURN NEW;
      END $$`)
    await q.query(`CREATE TRIGGER signature_immutable BEFORE UPDATE OR DELETE ON signature FOR EACH ROW EXECUTE FUNCTION signature_guard()`)
    await q.query(`CREATE TRIGGER signature_frozen BEFORE INSERT OR UPDATE OR DELETE ON signature FOR EACH ROW EXECUTE FUNCTION run_accepted_is_frozen()`)
    await q.query(`
      CREATE TABLE outbound_mail (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        kind text NOT NULL,
        run_id uuid REFERENCES run(id) ON DELETE SET NULL,
        to_addresses text[] NOT NULL,
        subject text NOT NULL,
        body_text text NOT NULL,
        attachments jsonb NOT NULL DEFAULT '[]',
        status text NOT NULL DEFAULT 'queued' CHECK (status IN ('queued', 'sent', 'failed')),
        attempts integer NOT NULL DEFAULT 0,
        last_error text,
        next_attempt_at timestamptz NOT NULL DEFAULT now(),
        sent_at timestamptz,
        message_id text,
        created_at timestamptz NOT NULL DEFAULT now()
      )`)
    await q.query(`CREATE INDEX outbound_mail_due_idx ON outbound_mail (next_attempt_at) WHERE status = 'queued'`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE outbound_mail`)
    await q.query(`DROP TABLE signature`)
    await q.query(`DROP FUNCTION signature_guard`)
  }
}
