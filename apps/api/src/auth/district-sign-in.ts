import { createHash, timingSafeEqual } from 'node:crypto';
import jwt from 'jsonwebtoken';
import * as oidc from 'openid-client';
import type { PasswordSignIn, SessionUser, SignInSettings } from '@evenhand/entities';
import { UserEntity } from '@evenhand/entities/orm';
import type { Config } from '../config.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { recordAudit } from '../audit/service.js';
import { adminContacts, lockSettings, saveSettings, settingsRow, settingsRowWithEditor, startSignInRequest, takeSignInRequest } from './queries.js';
import { loadSessionUser } from './service.js';
import type { NewSession } from './session.js';

/** The browser's half of a sign-in in flight: its `state`, in an httpOnly cookie read only by the callback. */
export const DISTRICT_STATE_COOKIE = 'evenhand_district_state';
export const DISTRICT_COOKIE_PATH = '/api/auth/district';
export const REQUEST_MINUTES = 10;

export type DistrictProblem = 'expired' | 'refused_by_provider' | 'failed' | 'unverified_email' | 'no_account' | 'deactivated';

/** A sign-in that ends without a session; the sign-in page shows why (through a short-lived signed ticket). */
export class DistrictSignInProblem extends Error {
  constructor(
    readonly problem: DistrictProblem,
    readonly email?: string,
  ) {
    super(`district sign-in: ${problem}`);
  }
}

export const callbackUrl = (config: Config) => `${config.appUrl}/api/auth/district/callback`;

/** The provider's metadata, discovered once per app; a failed discovery is tried again on the next sign-in. */
export function districtClient(config: Config): () => Promise<oidc.Configuration> {
  const settings = config.districtSignIn;
  let discovered: Promise<oidc.Configuration> | null = null;
  return () => {
    if (!settings) throw new AppError('not_found', 'Sign-in with a district account is not set up on this server');
    discovered ??= oidc
      .discovery(new URL(settings.issuer), settings.clientId, settings.clientSecret, undefined, {
        // Plain http only for the local fake provider: production refuses a non-https issuer at start-up.
        execute: new URL(settings.issuer).protocol === 'http:' && !config.production ? [oidc.allowInsecureRequests] : [],
      })
      .catch((error: unknown) => {
        discovered = null;
        throw error;
      });
    return discovered;
  };
}

const hashState = (state: string) => createHash('sha256').update(state).digest('hex');

/** Starts a sign-in: remembers its state, nonce and PKCE verifier once, and answers the provider's address to go to. */
export async function startDistrictSignIn(
  { db, config }: Pick<Deps, 'db' | 'config'>,
  client: oidc.Configuration,
  returnPath: string | undefined,
): Promise<{ url: URL; state: string }> {
  const state = oidc.randomState();
  const nonce = oidc.randomNonce();
  const verifier = oidc.randomPKCECodeVerifier();
  await startSignInRequest(db, { stateHash: hashState(state), nonce, verifier, returnPath: returnPath ?? null }, REQUEST_MINUTES);
  const url = oidc.buildAuthorizationUrl(client, {
    redirect_uri: callbackUrl(config),
    scope: 'openid email',
    state,
    nonce,
    code_challenge: await oidc.calculatePKCECodeChallenge(verifier),
    code_challenge_method: 'S256',
  });
  return { url, state };
}

function sameString(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/**
 * Finishes a sign-in from the provider's redirect: the state must be this browser's and unused, the library exchanges
 * the code (with the PKCE verifier) and validates the ID token (signature, issuer, audience, expiry, nonce); then the
 * provider's verified e-mail must belong to an active Evenhand account. No account is ever created here.
 */
export async function finishDistrictSignIn(
  { db, config, logger }: Pick<Deps, 'db' | 'config' | 'logger'>,
  client: oidc.Configuration,
  query: string,
  browserState: string | undefined,
): Promise<{ user: SessionUser; session: NewSession; returnPath: string | null }> {
  // Build the URL from our own redirect URI, never from the request's Host header.
  const url = new URL(callbackUrl(config));
  url.search = query;
  const state = url.searchParams.get('state');
  if (!state || !browserState || !sameString(state, browserState)) throw new DistrictSignInProblem('expired');
  const request = await takeSignInRequest(db, hashState(state));
  if (!request) throw new DistrictSignInProblem('expired');

  let claims: oidc.IDToken;
  try {
    const tokens = await oidc.authorizationCodeGrant(client, url, {
      pkceCodeVerifier: request.code_verifier,
      expectedState: state,
      expectedNonce: request.nonce,
      idTokenExpected: true,
    });
    claims = tokens.claims()!;
  } catch (error) {
    if (error instanceof oidc.AuthorizationResponseError) throw new DistrictSignInProblem('refused_by_provider');
    logger.warn({ err: error }, 'district sign-in: the code exchange or the ID token was refused');
    throw new DistrictSignInProblem('failed');
  }

  const email = typeof claims.email === 'string' ? claims.email.trim().toLowerCase() : '';
  if (!email || claims.email_verified !== true) throw new DistrictSignInProblem('unverified_email', email || undefined);
  const account = await db.getRepository(UserEntity).findOne({ where: { email }, select: { id: true, active: true, sessionVersion: true } });
  if (!account) throw new DistrictSignInProblem('no_account', email);
  if (!account.active) throw new DistrictSignInProblem('deactivated', email);
  await db.getRepository(UserEntity).update(account.id, { lastSignInAt: new Date() });
  const user = await loadSessionUser(db, account.id);
  if (!user) throw new DistrictSignInProblem('deactivated', email);
  return { user, session: { userId: account.id, sessionVersion: account.sessionVersion }, returnPath: request.return_path };
}

const TICKET_AUDIENCE = 'evenhand:district-sign-in-problem';

export function problemTicket(config: Config, problem: DistrictSignInProblem): string {
  return jwt.sign({ problem: problem.problem, email: problem.email }, config.jwtSecret, {
    algorithm: 'HS256',
    audience: TICKET_AUDIENCE,
    expiresIn: REQUEST_MINUTES * 60,
  });
}

/** The sign-in page's explanation of a ticket; for a person without a usable account, it names whom to ask. */
export async function describeProblem({ db, config }: Pick<Deps, 'db' | 'config'>, ticket: string): Promise<string> {
  let claims: { problem: DistrictProblem; email?: string };
  try {
    claims = jwt.verify(ticket, config.jwtSecret, { algorithms: ['HS256'], audience: TICKET_AUDIENCE }) as typeof claims;
  } catch {
    throw AppError.validation('This sign-in message has expired; sign in again');
  }
  const email = claims.email ?? 'your address';
  const admins = await adminContacts(db);
  const whom = admins.length
    ? `your district's Evenhand administrator (${admins.map((a) => `${a.name}, ${a.email}`).join('; ')})`
    : "your district's Evenhand administrator";
  switch (claims.problem) {
    case 'no_account':
      return `Your district account is fine, but no Evenhand account uses ${email}. Evenhand accounts are by invitation only: ask ${whom} to invite ${email}.`;
    case 'deactivated':
      return `The Evenhand account for ${email} is deactivated, so it cannot sign in. If you still need it, ask ${whom} to turn it back on.`;
    case 'unverified_email':
      return `Your district's sign-in did not confirm that ${email} is verified, so Evenhand cannot match it to an account. Ask your district's IT team to verify the address, then try again.`;
    case 'refused_by_provider':
      return 'The sign-in with your district account was cancelled or refused. Please try again.';
    case 'expired':
      return 'This sign-in expired or was started in another browser or tab. Please start again.';
    default:
      return `Evenhand could not complete the sign-in with your district account. Please try again; if it keeps failing, tell ${whom}.`;
  }
}

export async function signInSettings({ db, config }: Pick<Deps, 'db' | 'config'>): Promise<SignInSettings> {
  const row = await settingsRowWithEditor(db);
  return {
    passwordSignIn: row.password_sign_in,
    districtSignIn: config.districtSignIn !== null,
    updatedAt: row.updated_at?.toISOString() ?? null,
    updatedBy: row.updated_by,
  };
}

/** Turning password sign-in off needs the district's provider, or nobody but the admin could sign in at all. */
export async function updateSignInSettings(deps: Pick<Deps, 'db' | 'config'>, actorId: string, passwordSignIn: PasswordSignIn) {
  if (passwordSignIn === 'admin_only' && !deps.config.districtSignIn) {
    throw AppError.validation('Password sign-in can only be turned off once sign-in with the district account is set up', [
      { path: 'passwordSignIn', message: 'Set up the district identity provider first (OIDC_ISSUER_URL and its client)' },
    ]);
  }
  await deps.db.transaction(async (manager) => {
    await lockSettings(manager);
    const before = await settingsRow(manager);
    if (before.password_sign_in === passwordSignIn) return;
    await saveSettings(manager, passwordSignIn, actorId);
    await recordAudit(manager, {
      actorId,
      action: 'sign_in_settings.changed',
      entityType: 'sign_in_settings',
      before: { passwordSignIn: before.password_sign_in },
      after: { passwordSignIn },
    });
  });
  return signInSettings(deps);
}

/** What the sign-in page offers besides the demo accounts. */
export async function districtSignInOptions({ db, config }: Pick<Deps, 'db' | 'config'>) {
  const row = await settingsRow(db);
  return { districtSignIn: config.districtSignIn !== null, passwordSignIn: row.password_sign_in };
}

export const PASSWORD_SIGN_IN_OFF = 'Your district signs in with its own accounts: use "Sign in with your district account"';
