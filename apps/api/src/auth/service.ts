import { createHash, randomBytes } from 'node:crypto';
import { IsNull, MoreThan, type DataSource, type EntityManager } from 'typeorm';
import type { Role, SessionUser, SignInOptions } from '@evenhand/entities';
import { AuthTokenEntity, UserEntity, type AuthTokenKind } from '@evenhand/entities/orm';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { recordAudit } from '../audit/service.js';
import { invitationMail, passwordResetMail } from '../mail/templates.js';
import { DEMO_PASSWORD, featuredDemoAccounts } from '../seed/demo.js';
import { districtSignInOptions, PASSWORD_SIGN_IN_OFF, passwordSignInAllowed } from './district-sign-in.js';
import { burnPasswordCheck, checkPassword, hashPassword } from './passwords.js';
import type { NewSession } from './session.js';

const TOKEN_HOURS: Record<AuthTokenKind, number> = { password_reset: 1, invitation: 72 };

/**
 * The signed-in user with their grants (and their schools' names), or null if the account is gone or deactivated or,
 * given a session version, has moved past it. One query on indexed keys: it runs on every request.
 */
export async function loadSessionUser(db: DataSource | EntityManager, id: string, sessionVersion?: number): Promise<SessionUser | null> {
  const [row]: SessionUser[] = await db.query(
    `SELECT u.id, u.email, u.name,
            coalesce(json_agg(json_build_object('role', g.role, 'siteId', g.site_id, 'siteName', s.name) ORDER BY g.created_at, g.id)
                     FILTER (WHERE g.id IS NOT NULL), '[]') AS roles
       FROM users u LEFT JOIN role_grants g ON g.user_id = u.id LEFT JOIN sites s ON s.id = g.site_id
      WHERE u.id = $1 AND u.active AND ($2::int IS NULL OR u.session_version = $2)
      GROUP BY u.id`,
    [id, sessionVersion ?? null],
  );
  return row ?? null;
}

/** Ends every session of the account (all its tokens and cookies), inside the caller's transaction. */
export async function endSessions(manager: DataSource | EntityManager, userId: string): Promise<void> {
  await manager.query(`UPDATE users SET session_version = session_version + 1 WHERE id = $1`, [userId]);
}

const WRONG_CREDENTIALS = 'The e-mail address or password is not right';

/** Checks the password; the session to sign is the account at its current session version. */
export async function signIn({ db }: Deps, email: string, password: string): Promise<{ user: SessionUser; session: NewSession }> {
  const user = await db.getRepository(UserEntity).findOne({ where: { email } });
  // Unknown e-mail, no password yet and deactivated accounts all get the same answer and the same delay.
  if (!user || !user.passwordHash || !user.active) {
    await burnPasswordCheck(password);
    throw new AppError('unauthenticated', WRONG_CREDENTIALS);
  }
  if (!(await checkPassword(password, user.passwordHash))) throw new AppError('unauthenticated', WRONG_CREDENTIALS);
  // Only after the right password, so the answer reveals nothing about other accounts.
  if (!(await passwordSignInAllowed(db, user.id))) throw new AppError('forbidden', PASSWORD_SIGN_IN_OFF);
  await db.getRepository(UserEntity).update(user.id, { lastSignInAt: new Date() });
  return { user: (await loadSessionUser(db, user.id))!, session: { userId: user.id, sessionVersion: user.sessionVersion } };
}

const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

/** Creates a single-use token; only its hash is stored, the plain value goes into the e-mail. */
export async function issueToken(manager: EntityManager, userId: string, kind: AuthTokenKind): Promise<string> {
  const token = randomBytes(32).toString('base64url');
  await manager.insert(AuthTokenEntity, {
    userId,
    kind,
    tokenHash: hashToken(token),
    expiresAt: new Date(Date.now() + TOKEN_HOURS[kind] * 3600_000),
  });
  return token;
}

export function setPasswordLink(deps: Deps, token: string): string {
  return `${deps.config.appUrl}/set-password?token=${encodeURIComponent(token)}`;
}

export async function sendInvitation(deps: Deps, user: { email: string; name: string }, token: string, invitedBy: string) {
  await deps.mailer.send({ to: user.email, ...invitationMail({ name: user.name, invitedBy, link: setPasswordLink(deps, token) }) });
}

/** Always answers the same way, whether or not the address has an account. */
export async function requestPasswordReset(deps: Deps, email: string): Promise<void> {
  const user = await deps.db.getRepository(UserEntity).findOne({ where: { email, active: true } });
  if (!user) return;
  const token = await issueToken(deps.db.manager, user.id, 'password_reset');
  await deps.mailer.send({ to: user.email, ...passwordResetMail({ name: user.name, link: setPasswordLink(deps, token) }) });
}

/** Sets a password from an invitation or reset token; the token works once, before it expires. */
export async function confirmPasswordReset(deps: Deps, token: string, password: string): Promise<void> {
  const passwordHash = await hashPassword(password);
  await deps.db.transaction(async (manager) => {
    const row = await manager.findOne(AuthTokenEntity, {
      where: { tokenHash: hashToken(token), usedAt: IsNull(), expiresAt: MoreThan(new Date()) },
      lock: { mode: 'pessimistic_write' },
    });
    if (!row) throw AppError.validation('This link has expired or has already been used; ask for a new one');
    const user = await manager.findOne(UserEntity, { where: { id: row.userId, active: true } });
    if (!user) throw AppError.validation('This account is no longer active');
    await manager.update(AuthTokenEntity, row.id, { usedAt: new Date() });
    // Any other open links for this account stop working too.
    await manager.update(AuthTokenEntity, { userId: user.id, usedAt: IsNull() }, { usedAt: new Date() });
    await manager.update(UserEntity, user.id, { passwordHash });
    // A new password ends every session signed in with the old one.
    await endSessions(manager, user.id);
    await recordAudit(manager, {
      actorId: user.id,
      action: row.kind === 'invitation' ? 'user.invitation_accepted' : 'user.password_reset',
      entityType: 'user',
      entityId: user.id,
    });
  });
}

/**
 * The demo accounts for the sign-in page: never in production, and only those the demo seed created and that can
 * still sign in, so an unseeded database offers nothing.
 */
export async function signInOptions({ config, db }: Pick<Deps, 'config' | 'db'>): Promise<SignInOptions> {
  const district = await districtSignInOptions({ config, db });
  if (config.production) return { demo: null, ...district };
  const emails = featuredDemoAccounts.map((a) => a.email);
  const rows: { email: string; name: string; role: Role; site_name: string | null }[] = await db.query(
    `SELECT DISTINCT ON (u.email) u.email, u.name, g.role, s.name AS site_name
       FROM users u JOIN role_grants g ON g.user_id = u.id LEFT JOIN sites s ON s.id = g.site_id
      WHERE u.email = ANY($1) AND u.active
      ORDER BY u.email, g.role`,
    [emails],
  );
  const accounts = rows
    .sort((a, b) => emails.indexOf(a.email) - emails.indexOf(b.email))
    .map((r) => ({ email: r.email, name: r.name, role: r.role, siteName: r.site_name }));
  return { demo: accounts.length ? { password: DEMO_PASSWORD, accounts } : null, ...district };
}
