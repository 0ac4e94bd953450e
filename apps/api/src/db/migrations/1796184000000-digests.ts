import type { MigrationInterface, QueryRunner } from 'typeorm';

export class Digests1796184000000 implements MigrationInterface {
  name = 'Digests1796184000000';

  async up(q: QueryRunner): Promise<void> {
    // One row per study that changed the default (weekly on Mondays at 07:00 UTC).
    await q.query(`
      CREATE TABLE digest_schedules (
        study_id uuid PRIMARY KEY REFERENCES studies(id),
        weekly_enabled boolean NOT NULL,
        weekday smallint NOT NULL CHECK (weekday BETWEEN 1 AND 7),
        hour smallint NOT NULL CHECK (hour BETWEEN 0 AND 23),
        timezone varchar(64) NOT NULL,
        updated_by uuid NOT NULL REFERENCES users(id),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`);
    // A person without a row gets weekly digests.
    await q.query(`
      CREATE TABLE digest_preferences (
        user_id uuid PRIMARY KEY REFERENCES users(id) ON DELETE CASCADE,
        frequency varchar(20) NOT NULL CHECK (frequency IN ('weekly','locked','none')),
        updated_at timestamptz NOT NULL DEFAULT now()
      )`);
    // The outbox: a digest is written with the event that causes it and holds the whole message.
    await q.query(`
      CREATE TABLE digests (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        site_id uuid NOT NULL REFERENCES sites(id),
        recipient_id uuid NOT NULL REFERENCES users(id),
        recipient_email varchar(254) NOT NULL,
        kind varchar(20) NOT NULL CHECK (kind IN ('weekly','lock','manual')),
        unique_key varchar(300) NOT NULL UNIQUE,
        run_id uuid REFERENCES runs(id),
        subject varchar(300) NOT NULL,
        html text NOT NULL,
        text text NOT NULL,
        state varchar(20) NOT NULL DEFAULT 'queued' CHECK (state IN ('queued','sent','retrying','undeliverable')),
        attempts integer NOT NULL DEFAULT 0 CHECK (attempts >= 0),
        last_error text,
        next_attempt_at timestamptz DEFAULT now(),
        created_at timestamptz NOT NULL DEFAULT now(),
        sent_at timestamptz,
        CHECK ((state = 'sent') = (sent_at IS NOT NULL)),
        CHECK ((state IN ('queued','retrying')) = (next_attempt_at IS NOT NULL))
      )`);
    await q.query(`CREATE INDEX digests_study_created ON digests (study_id, created_at DESC, id)`);
    await q.query(`CREATE INDEX digests_pending ON digests (next_attempt_at) WHERE state IN ('queued','retrying')`);
    // A message never changes, and a sent or undeliverable digest is final: no second delivery, whatever the application does.
    await q.query(`
      CREATE FUNCTION digest_guard() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP = 'DELETE' THEN
          RAISE EXCEPTION 'digests cannot be deleted' USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        IF OLD.state IN ('sent','undeliverable') THEN
          RAISE EXCEPTION 'digest % is % and cannot change', OLD.id, OLD.state USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        IF (NEW.subject, NEW.html, NEW.text, NEW.recipient_id, NEW.recipient_email, NEW.unique_key, NEW.kind)
           IS DISTINCT FROM (OLD.subject, OLD.html, OLD.text, OLD.recipient_id, OLD.recipient_email, OLD.unique_key, OLD.kind) THEN
          RAISE EXCEPTION 'the message of digest % cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NEW;
      END $$`);
    await q.query(`CREATE TRIGGER digests_guard BEFORE UPDATE OR DELETE ON digests FOR EACH ROW EXECUTE FUNCTION digest_guard()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: drops the outbox (every digest sent or waiting), digest schedules and preferences.
    await q.query('DROP TABLE digests');
    await q.query('DROP FUNCTION digest_guard()');
    await q.query('DROP TABLE digest_preferences');
    await q.query('DROP TABLE digest_schedules');
  }
}
