import type { DataSource, EntityManager } from 'typeorm';
import type { PasswordSignIn, Role, SessionUser } from '@evenhand/entities';
import type { AuthTokenKind } from '@evenhand/entities/orm';

// Sign-in's named SQL and the rows it answers (DEVELOPERS.md, "Data access").

type Db = DataSource | EntityManager;

/** The account with its grants and their schools' names, in one query on indexed keys (it runs on every request). */
export async function sessionRow(db: Db, id: string): Promise<(SessionUser & { active: boolean; session_version: number }) | undefined> {
  const [row] = await db.query(
    `SELECT u.id, u.email, u.name, u.active, u.session_version,
            coalesce(json_agg(json_build_object('role', g.role, 'siteId', g.site_id, 'siteName', s.name) ORDER BY g.created_at, g.id)
                     FILTER (WHERE g.id IS NOT NULL), '[]') AS roles
       FROM users u LEFT JOIN role_grants g ON g.user_id = u.id LEFT JOIN sites s ON s.id = g.site_id
      WHERE u.id = $1
      GROUP BY u.id`,
    [id],
  );
  return row;
}

/** Stores one single-use token per account (only its hash), in one statement. */
export async function insertTokens(manager: EntityManager, userIds: readonly string[], kind: AuthTokenKind, tokenHashes: readonly string[], expiresAt: Date): Promise<void> {
  await manager.query(
    `INSERT INTO auth_tokens (user_id, kind, token_hash, expires_at) SELECT user_id, $2, token_hash, $4 FROM unnest($1::uuid[], $3::text[]) AS t(user_id, token_hash)`,
    [userIds, kind, tokenHashes, expiresAt],
  );
}

/** Of these addresses, the active accounts that hold a role: one row each, with its first role by name and that role's school. */
export function demoAccountRows(db: Db, emails: readonly string[]): Promise<{ email: string; name: string; role: Role; site_name: string | null }[]> {
  return db.query(
    `SELECT DISTINCT ON (u.email) u.email, u.name, g.role, s.name AS site_name
       FROM users u JOIN role_grants g ON g.user_id = u.id LEFT JOIN sites s ON s.id = g.site_id
      WHERE u.email = ANY($1) AND u.active
      ORDER BY u.email, g.role`,
    [emails],
  );
}

/** Records a district sign-in just started (by its state's hash), open for `minutes`; requests that have expired go. */
export async function startSignInRequest(
  db: Db,
  request: { stateHash: string; nonce: string; verifier: string; returnPath: string | null },
  minutes: number,
): Promise<void> {
  await db.query(`DELETE FROM district_sign_in_requests WHERE expires_at < now()`);
  await db.query(
    `INSERT INTO district_sign_in_requests (state_hash, nonce, code_verifier, return_path, expires_at)
     VALUES ($1, $2, $3, $4, now() + make_interval(mins => $5))`,
    [request.stateHash, request.nonce, request.verifier, request.returnPath, minutes],
  );
}

/** Takes (deletes and answers) the unexpired sign-in request of a state's hash, so it can be used once. */
export async function takeSignInRequest(db: Db, stateHash: string): Promise<{ nonce: string; code_verifier: string; return_path: string | null } | undefined> {
  const [request]: { nonce: string; code_verifier: string; return_path: string | null }[] = await db.query(
    `WITH used AS (DELETE FROM district_sign_in_requests WHERE state_hash = $1 AND expires_at > now() RETURNING *)
     SELECT nonce, code_verifier, return_path FROM used`,
    [stateHash],
  );
  return request;
}

/** Up to three active admins, by name, for a sign-in problem to say whom to ask. */
export function adminContacts(db: Db): Promise<{ name: string; email: string }[]> {
  return db.query(
    `SELECT DISTINCT u.name, u.email FROM users u JOIN role_grants g ON g.user_id = u.id
      WHERE g.role = 'admin' AND u.active ORDER BY u.name, u.email LIMIT 3`,
  );
}

export interface SettingsRow {
  password_sign_in: PasswordSignIn;
  updated_at: Date | null;
  updated_by: string | null;
}

// The settings' one row; without it (a database emptied by `seed --reset`), passwords are for everyone.
const SETTINGS = `SELECT coalesce(s.password_sign_in, 'everyone') AS password_sign_in, s.updated_at, s.updated_by
                    FROM (VALUES (true)) AS one (singleton) LEFT JOIN sign_in_settings s USING (singleton)`;

/** The sign-in settings; `updated_by` is the account's ID. */
export async function settingsRow(db: Db): Promise<SettingsRow> {
  const [row]: SettingsRow[] = await db.query(SETTINGS);
  return row;
}

/** The sign-in settings with the name of the account that last changed them as `updated_by`. */
export async function settingsRowWithEditor(db: Db): Promise<SettingsRow> {
  const [row]: SettingsRow[] = await db.query(`SELECT s.password_sign_in, s.updated_at, u.name AS updated_by FROM (${SETTINGS}) s LEFT JOIN users u ON u.id = s.updated_by`);
  return row;
}

/** Locks the settings' row (if there is one) until the transaction ends. */
export async function lockSettings(manager: EntityManager): Promise<void> {
  await manager.query(`SELECT 1 FROM sign_in_settings FOR UPDATE`);
}

/** Writes the settings' one row, creating it the first time. */
export async function saveSettings(manager: EntityManager, passwordSignIn: PasswordSignIn, actorId: string): Promise<void> {
  await manager.query(
    `INSERT INTO sign_in_settings (singleton, password_sign_in, updated_at, updated_by) VALUES (true, $1, now(), $2)
     ON CONFLICT (singleton) DO UPDATE SET password_sign_in = $1, updated_at = now(), updated_by = $2`,
    [passwordSignIn, actorId],
  );
}

/** Whether this account may sign in with its password under the district's settings (the admin always may). */
export async function passwordSignInAllowed(db: Db, userId: string): Promise<boolean> {
  const [row]: { allowed: boolean }[] = await db.query(
    `SELECT s.password_sign_in = 'everyone'
            OR EXISTS (SELECT 1 FROM role_grants g WHERE g.user_id = $1 AND g.role = 'admin') AS allowed
       FROM (${SETTINGS}) s`,
    [userId],
  );
  return row.allowed;
}
