import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Sessions that end: every token carries its account's session version, and the session check compares it in the
 * same indexed lookup of the user. Sign-out, a password reset, a change of roles and deactivation bump the version,
 * so every token issued before stops working at once.
 */
export class SessionVersions1796200000000 implements MigrationInterface {
  name = 'SessionVersions1796200000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE users ADD COLUMN session_version integer NOT NULL DEFAULT 0 CHECK (session_version >= 0)`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: forgets each account's session version, so sessions signed out everywhere become valid again.
    await q.query(`ALTER TABLE users DROP COLUMN session_version`);
  }
}
