import type { MigrationInterface, QueryRunner } from 'typeorm';

const guard = (rewritable: string) => `
  CREATE OR REPLACE FUNCTION digest_guard() RETURNS trigger LANGUAGE plpgsql AS $$
  BEGIN
    IF TG_OP = 'DELETE' THEN
      RAISE EXCEPTION 'digests cannot be deleted' USING ERRCODE = 'integrity_constraint_violation';
    END IF;
    IF OLD.state IN ('sent','undeliverable') THEN
      RAISE EXCEPTION 'digest % is % and cannot change', OLD.id, OLD.state USING ERRCODE = 'integrity_constraint_violation';
    END IF;
    IF (NEW.recipient_id, NEW.recipient_email, NEW.unique_key, NEW.kind) IS DISTINCT FROM (OLD.recipient_id, OLD.recipient_email, OLD.unique_key, OLD.kind)
       OR ((NEW.subject, NEW.html, NEW.text) IS DISTINCT FROM (OLD.subject, OLD.html, OLD.text) AND NOT (${rewritable})) THEN
      RAISE EXCEPTION 'the message of digest % cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
    END IF;
    RETURN NEW;
  END $$`;

/**
 * One "Result locked" e-mail per principal when a lead locks several results in a row: a lock digest that no worker
 * has tried to send yet may be rewritten to name every result locked since. Any other message still never changes,
 * and a sent or undeliverable digest stays final.
 */
export class GatheredLockDigests1796209000000 implements MigrationInterface {
  name = 'GatheredLockDigests1796209000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(guard(`OLD.kind = 'lock' AND OLD.state = 'queued' AND OLD.attempts = 0 AND NEW.attempts = 0`));
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(guard('false'));
  }
}
