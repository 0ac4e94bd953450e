import { createHash, randomBytes } from 'node:crypto';
import { DataSource, IsNull, MoreThan, type EntityManager } from 'typeorm';
import type { SessionUser, SignInOptions } from '@evenhand/entities';
import { AuthTokenEntity, UserEntity, type AuthTokenKind } from '@evenhand/entities/orm';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { recordAudit } from '../audit/service.js';
import { changeFeed, TaggedCache } from '../db/change-feed.js';
import { queueMail, queueMails, type MailContext } from '../mail/outbox.js';
import { invitationMail, passwordResetMail } from '../mail/templates.js';
import { DEMO_PASSWORD, featuredDemoAccounts } from '../seed/demo.js';
import { districtSignInOptions, PASSWORD_SIGN_IN_OFF } from './district-sign-in.js';
import { demoAccountRows, insertTokens, passwordSignInAllowed, sessionRow } from './queries.js';
import { burnPasswordCheck, checkPassword, hashPassword } from './passwords.js';
import type { NewSession } from './session.js';

const TOKEN_HOURS: Record<AuthTokenKind, number> = { password_reset: 1, invitation: 72 };

const sessionUser = ({ id, email, name, roles }: SessionUser): SessionUser => ({ id, email, name, roles });

/** The signed-in user with their grants, or null if the account is gone or deactivated. */
export async function loadSessionUser(db: DataSource | EntityManager, id: string): Promise<SessionUser | null> {
  const row = await sessionRow(db, id);
  return row?.active ? sessionUser(row) : null;
}

type SessionRow = Awaited<ReturnType<typeof sessionRow>>;
const sessionRows = new WeakMap<DataSource, TaggedCache<SessionRow>>();

export type SessionCheck = { user: SessionUser } | { problem: string };

function judgeSession(row: SessionRow, sessionVersion: number): SessionCheck {
  if (!row?.active) return { problem: 'This account is no longer active' };
  if (row.session_version !== sessionVersion) return { problem: 'Your session has ended (signed out, or the password or roles changed); please sign in again' };
  return { user: sessionUser(row) };
}

/**
 * A token's account, if it is active and still at the token's session version; else why the token is refused. The
 * row comes from memory when nothing it holds has changed since it was read (the change feed drops it at the commit
 * of any change to the account, its grants or their schools), and then the answer is given at once, not as a promise.
 */
export function checkSession(db: DataSource, id: string, sessionVersion: number): SessionCheck | Promise<SessionCheck> {
  let cache = sessionRows.get(db);
  if (!cache) sessionRows.set(db, (cache = new TaggedCache<SessionRow>(changeFeed(db), 10_000)));
  const kept = cache.peek(id);
  if (kept) return judgeSession(kept.value, sessionVersion);
  return cache
    .read(id, () => sessionRow(db, id), (row) => (row ? [`user:${id}`, ...row.roles.flatMap((g) => (g.siteId ? [`site:${g.siteId}`] : []))] : null))
    .then((row) => judgeSession(row, sessionVersion));
}

/** Marks the account's session row as changing, before the caller's transaction commits (see ChangeFeed.expect). */
export function sessionChanging(manager: DataSource | EntityManager, userId: string): void {
  changeFeed(manager instanceof DataSource ? manager : manager.connection).expect(`user:${userId}`);
}

/** Ends every session of the account (all its tokens and cookies), inside the caller's transaction. */
export async function endSessions(manager: DataSource | EntityManager, userId: string): Promise<void> {
  sessionChanging(manager, userId);
  await (manager instanceof DataSource ? manager.manager : manager).increment(UserEntity, { id: userId }, 'sessionVersion', 1);
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
  return (await issueTokens(manager, [userId], kind))[0];
}

/** `issueToken` for many accounts in one statement: one token each, in their order. */
export async function issueTokens(manager: EntityManager, userIds: readonly string[], kind: AuthTokenKind): Promise<string[]> {
  const tokens = userIds.map(() => randomBytes(32).toString('base64url'));
  if (!tokens.length) return tokens;
  await insertTokens(manager, userIds, kind, tokens.map(hashToken), new Date(Date.now() + TOKEN_HOURS[kind] * 3600_000));
  return tokens;
}

export function setPasswordLink(ctx: { config: Pick<Deps['config'], 'appUrl'> }, token: string): string {
  return `${ctx.config.appUrl}/set-password?token=${encodeURIComponent(token)}`;
}

interface NewAccountInvitation {
  userId: string;
  email: string;
  name: string;
  token: string;
  invitedBy: { id: string; name: string };
  studyId?: string | null;
}

/** Puts a new account's invitation (a set-password link) in the outbox, inside the caller's transaction. */
export async function queueInvitation(manager: EntityManager, ctx: MailContext & { config: Pick<Deps['config'], 'appUrl'> }, invitation: NewAccountInvitation): Promise<void> {
  await queueInvitations(manager, ctx, [invitation]);
}

/** `queueInvitation` for many new accounts at once. */
export async function queueInvitations(manager: EntityManager, ctx: MailContext & { config: Pick<Deps['config'], 'appUrl'> }, invitations: readonly NewAccountInvitation[]): Promise<void> {
  await queueMails(
    manager,
    ctx,
    invitations.map((i) => ({
      kind: 'invitation' as const,
      recipient: { id: i.userId, email: i.email },
      message: invitationMail({ name: i.name, invitedBy: i.invitedBy.name, link: setPasswordLink(ctx, i.token) }),
      actorId: i.invitedBy.id,
      studyId: i.studyId,
    })),
  );
}

/**
 * Answers before anything about the address is looked up or written: the request only enqueues a job, so a known
 * and an unknown address cost the same (the job writes the token and the e-mail for an address with an account).
 */
export async function requestPasswordReset(deps: Pick<Deps, 'jobs'>, email: string): Promise<void> {
  await deps.jobs.enqueuePasswordReset(email);
}

/** The queued half of a password reset: for an active account, a single-use token and its e-mail, in one transaction. */
export async function sendPasswordReset(ctx: { db: DataSource; config: Pick<Deps['config'], 'appUrl'>; jobs: MailContext['jobs'] }, email: string): Promise<void> {
  await ctx.db.transaction(async (manager) => {
    const user = await manager.findOne(UserEntity, { where: { email, active: true } });
    if (!user) return;
    const token = await issueToken(manager, user.id, 'password_reset');
    const message = passwordResetMail({ name: user.name, link: setPasswordLink(ctx, token) });
    await queueMail(manager, ctx, { kind: 'password_reset', recipient: { id: user.id, email: user.email }, message, actorId: null });
  });
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
  const rows = await demoAccountRows(db, emails);
  const accounts = rows
    .sort((a, b) => emails.indexOf(a.email) - emails.indexOf(b.email))
    .map((r) => ({ email: r.email, name: r.name, role: r.role, siteName: r.site_name }));
  return { demo: accounts.length ? { password: DEMO_PASSWORD, accounts } : null, ...district };
}
