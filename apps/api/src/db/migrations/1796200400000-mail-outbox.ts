import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * One way of sending mail: the outbox (the `digests` table) also holds invitations, password resets and reminders,
 * written in the transaction of the event that causes them and sent, with retries, by the same job. Only digests
 * belong to a study's school; the other kinds may have neither study nor school.
 */
export class MailOutbox1796200400000 implements MigrationInterface {
  name = 'MailOutbox1796200400000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE digests ALTER COLUMN study_id DROP NOT NULL, ALTER COLUMN site_id DROP NOT NULL`);
    await q.query(`ALTER TABLE digests DROP CONSTRAINT digests_kind_check`);
    await q.query(`
      ALTER TABLE digests ADD CONSTRAINT digests_kind_check
        CHECK (kind IN ('weekly','lock','manual','invitation','role_invitation','password_reset','reminder'))`);
    await q.query(`
      ALTER TABLE digests ADD CONSTRAINT digests_of_a_school
        CHECK (kind NOT IN ('weekly','lock','manual') OR (study_id IS NOT NULL AND site_id IS NOT NULL))`);
  }

  // Destroys data: messages of the new kinds are deleted (the guard trigger is set aside for it).
  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE digests DISABLE TRIGGER digests_guard`);
    await q.query(`DELETE FROM digests WHERE kind NOT IN ('weekly','lock','manual')`);
    await q.query(`ALTER TABLE digests ENABLE TRIGGER digests_guard`);
    await q.query(`ALTER TABLE digests DROP CONSTRAINT digests_of_a_school`);
    await q.query(`ALTER TABLE digests DROP CONSTRAINT digests_kind_check`);
    await q.query(`ALTER TABLE digests ADD CONSTRAINT digests_kind_check CHECK (kind IN ('weekly','lock','manual'))`);
    await q.query(`ALTER TABLE digests ALTER COLUMN study_id SET NOT NULL, ALTER COLUMN site_id SET NOT NULL`);
  }
}
