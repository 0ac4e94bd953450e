import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Naming a person as a classroom's teacher or a school's principal offers the role; the grant is made only when the
 * person accepts (a link to an existing account, or setting the password of a new one). Only the token's hash is kept.
 */
export class RoleInvitations1796200800000 implements MigrationInterface {
  name = 'RoleInvitations1796200800000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE role_invitations (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
        role varchar(20) NOT NULL CHECK (role IN ('teacher','principal')),
        site_id uuid NOT NULL REFERENCES sites(id),
        invited_by uuid NOT NULL REFERENCES users(id),
        token_hash char(64) NOT NULL UNIQUE,
        state varchar(20) NOT NULL DEFAULT 'pending' CHECK (state IN ('pending','accepted','withdrawn')),
        created_at timestamptz NOT NULL DEFAULT now(),
        expires_at timestamptz NOT NULL,
        decided_at timestamptz,
        CHECK ((state = 'pending') = (decided_at IS NULL))
      )`);
    await q.query(`CREATE UNIQUE INDEX role_invitations_open ON role_invitations (user_id, role, site_id) WHERE state = 'pending'`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE role_invitations`);
  }
}
