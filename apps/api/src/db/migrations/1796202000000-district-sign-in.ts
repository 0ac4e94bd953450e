import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Sign-in with the district's identity provider: the district's sign-in settings (one row) and the sign-in requests
 * in flight, each used once (its state, nonce and PKCE verifier), so a replayed callback finds nothing.
 */
export class DistrictSignIn1796202000000 implements MigrationInterface {
  name = 'DistrictSignIn1796202000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE sign_in_settings (
        singleton boolean PRIMARY KEY DEFAULT true CHECK (singleton),
        password_sign_in varchar(20) NOT NULL DEFAULT 'everyone' CHECK (password_sign_in IN ('everyone', 'admin_only')),
        updated_at timestamptz NOT NULL DEFAULT now(),
        updated_by uuid REFERENCES users(id)
      )`);
    await q.query(`INSERT INTO sign_in_settings DEFAULT VALUES`);
    await q.query(`
      CREATE TABLE district_sign_in_requests (
        state_hash char(64) PRIMARY KEY,
        nonce varchar(128) NOT NULL,
        code_verifier varchar(128) NOT NULL,
        return_path varchar(500),
        expires_at timestamptz NOT NULL
      )`);
    await q.query(`CREATE INDEX district_sign_in_requests_expiry ON district_sign_in_requests (expires_at)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE district_sign_in_requests`);
    await q.query(`DROP TABLE sign_in_settings`);
  }
}
