import type { MigrationInterface, QueryRunner } from 'typeorm';

export class Foundation1796169600000 implements MigrationInterface {
  name = 'Foundation1796169600000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE sites (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        name varchar(160) NOT NULL,
        code varchar(20) NOT NULL UNIQUE,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`
      CREATE TABLE users (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        email varchar(254) NOT NULL UNIQUE CHECK (email = lower(email)),
        name varchar(120) NOT NULL,
        password_hash varchar(100),
        active boolean NOT NULL DEFAULT true,
        created_at timestamptz NOT NULL DEFAULT now(),
        updated_at timestamptz NOT NULL DEFAULT now(),
        last_sign_in_at timestamptz
      )`);
    await q.query(`
      CREATE TABLE role_grants (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
        role varchar(20) NOT NULL CHECK (role IN ('admin','coordinator','teacher','research_lead','principal','reviewer')),
        site_id uuid REFERENCES sites(id),
        created_at timestamptz NOT NULL DEFAULT now(),
        CHECK (role NOT IN ('teacher','principal') OR site_id IS NOT NULL)
      )`);
    await q.query(`CREATE UNIQUE INDEX role_grants_unique ON role_grants (user_id, role, COALESCE(site_id, '00000000-0000-0000-0000-000000000000'))`);
    await q.query(`
      CREATE TABLE auth_tokens (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        user_id uuid NOT NULL REFERENCES users(id) ON DELETE CASCADE,
        kind varchar(20) NOT NULL CHECK (kind IN ('password_reset','invitation')),
        token_hash char(64) NOT NULL UNIQUE,
        expires_at timestamptz NOT NULL,
        used_at timestamptz,
        created_at timestamptz NOT NULL DEFAULT now()
      )`);
    await q.query(`
      CREATE TABLE audit_events (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        at timestamptz NOT NULL DEFAULT clock_timestamp(),
        actor_id uuid REFERENCES users(id),
        study_id uuid,
        action varchar(60) NOT NULL,
        entity_type varchar(40) NOT NULL,
        entity_id varchar(80),
        before jsonb,
        after jsonb
      )`);
    await q.query(`CREATE INDEX audit_events_study_at ON audit_events (study_id, at DESC)`);
    await q.query(`CREATE INDEX audit_events_at ON audit_events (at DESC)`);
    // The audit trail is append-only, whatever the application does.
    await q.query(`
      CREATE FUNCTION refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION '% rows cannot be changed or deleted', TG_TABLE_NAME USING ERRCODE = 'integrity_constraint_violation';
      END $$`);
    await q.query(`CREATE TRIGGER audit_events_append_only BEFORE UPDATE OR DELETE ON audit_events FOR EACH ROW EXECUTE FUNCTION refuse_change()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: drops the accounts, sites, role grants, sign-in tokens and the audit trail.
    await q.query('DROP TABLE audit_events');
    await q.query('DROP FUNCTION refuse_change()');
    await q.query('DROP TABLE auth_tokens');
    await q.query('DROP TABLE role_grants');
    await q.query('DROP TABLE users');
    await q.query('DROP TABLE sites');
  }
}
