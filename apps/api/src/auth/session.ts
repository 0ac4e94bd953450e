import { createHmac, createSecretKey, randomBytes, type KeyObject } from 'node:crypto';
import type { CookieOptions, Response } from 'express';
import jwt from 'jsonwebtoken';
import { idSchema } from '@evenhand/entities';
import type { Config } from '../config.js';

export const SESSION_COOKIE = 'evenhand_session';
export const CSRF_COOKIE = 'evenhand_csrf';
export const CSRF_HEADER = 'x-csrf-token';

/** What a session token says: who, which sign-in (`jti`), the account's session version, and when the sign-in was. */
export interface SessionClaims {
  sub: string;
  jti: string;
  /** The account's session version when the token was issued; a bump (sign-out, reset, role change) ends it. */
  sv: number;
  /** The sign-in's time (seconds): renewals keep it, so a session ends after `sessionAbsoluteHours` whatever its use. */
  auth_time: number;
  iat: number;
  exp: number;
}

/** A new sign-in of an account at its current session version. */
export interface NewSession {
  userId: string;
  sessionVersion: number;
}

const nowSeconds = () => Math.floor(Date.now() / 1000);

/** Tokens verified under one secret are kept at most this many at a time (oldest dropped first). */
const VERIFIED_MAX = 10_000;

interface Secret {
  key: KeyObject;
  /** Tokens whose signature and claims checked out, by their exact text: only their time is checked again. */
  verified: Map<string, SessionClaims>;
}

const secrets = new Map<string, Secret>();
/**
 * The secret as a key object, made once: given a string, the token library first tries to read it as a public key
 * and builds a thrown error on every call, which cost most of a signed-in request's time.
 */
function secretOf(config: Config): Secret {
  let secret = secrets.get(config.jwtSecret);
  if (!secret) secrets.set(config.jwtSecret, (secret = { key: createSecretKey(Buffer.from(config.jwtSecret)), verified: new Map() }));
  return secret;
}

function sign(config: Config, claims: Pick<SessionClaims, 'sub' | 'jti' | 'sv' | 'auth_time'>, exp: number): string {
  const { sub, ...rest } = claims;
  return jwt.sign({ ...rest, exp }, secretOf(config).key, { algorithm: 'HS256', subject: sub });
}

/** Signs the token of a new sign-in. */
export function signSession(config: Config, session: NewSession): string {
  const now = nowSeconds();
  const claims = { sub: session.userId, jti: randomBytes(16).toString('base64url'), sv: session.sessionVersion, auth_time: now };
  return sign(config, claims, now + config.sessionMinutes * 60);
}

/** The sign-in's absolute end: renewals never go past it. */
const absoluteEnd = (config: Config, claims: Pick<SessionClaims, 'auth_time'>) => claims.auth_time + config.sessionAbsoluteHours * 3600;

/** A renewed token of the same sign-in, or null once the sign-in's absolute lifetime leaves nothing to renew. */
export function renewSession(config: Config, claims: SessionClaims): string | null {
  const exp = Math.min(nowSeconds() + config.sessionMinutes * 60, absoluteEnd(config, claims));
  if (exp <= claims.exp) return null;
  return sign(config, claims, exp);
}

/** A token's signature and claims, checked afresh; its time is checked by `verifySession`. */
function checkToken(key: KeyObject, token: string): SessionClaims | null {
  try {
    const claims = jwt.verify(token, key, { algorithms: ['HS256'] });
    if (typeof claims === 'string') return null;
    const { sub, jti, sv, auth_time, exp } = claims as Partial<SessionClaims>;
    if (!idSchema.safeParse(sub).success || typeof jti !== 'string' || !Number.isInteger(sv) || !Number.isInteger(auth_time) || typeof exp !== 'number') return null;
    return Object.freeze(claims as SessionClaims);
  } catch {
    return null;
  }
}

/**
 * Returns the claims of a valid token, or null for a forged, malformed, expired or too old one. A token is the same
 * signed text on every request of a sign-in, so its signature is checked once and the claims kept by that exact text
 * until it expires: checking it cost about a quarter of a signed-in request's time (CPU profile at 50 connections).
 * Only a token this secret signed is kept, and whether its session still stands (sign-out, reset, deactivation, role
 * change) is asked on every request.
 */
export function verifySession(config: Config, token: string): SessionClaims | null {
  const { key, verified } = secretOf(config);
  let claims = verified.get(token);
  if (!claims) {
    claims = checkToken(key, token) ?? undefined;
    if (!claims) return null;
    if (verified.size >= VERIFIED_MAX) verified.delete(verified.keys().next().value!);
    verified.set(token, claims);
  }
  const now = nowSeconds();
  // As the token library does: a token is expired from its `exp` second on.
  if (now >= claims.exp || now >= absoluteEnd(config, claims)) {
    verified.delete(token);
    return null;
  }
  return claims;
}

/**
 * The CSRF token of a sign-in: a keyed hash of the token's id, so only the server can make it and a cookie + header
 * pair made by anyone else fails. The browser reads it from its cookie and echoes it in `X-CSRF-Token`.
 */
export function csrfTokenFor(config: Config, sessionId: string): string {
  return createHmac('sha256', config.jwtSecret).update(`evenhand-csrf:${sessionId}`).digest('base64url');
}

function cookieOptions(config: Config, httpOnly: boolean, maxAgeMs: number): CookieOptions {
  return { httpOnly, sameSite: 'lax', secure: config.production, path: '/', maxAge: maxAgeMs };
}

/** Sets the httpOnly session cookie and the readable CSRF cookie bound to it; both last as long as the token. */
export function setSessionCookies(res: Response, config: Config, token: string): void {
  const claims = jwt.decode(token) as SessionClaims;
  const maxAge = Math.max(0, claims.exp * 1000 - Date.now());
  res.cookie(SESSION_COOKIE, token, cookieOptions(config, true, maxAge));
  res.cookie(CSRF_COOKIE, csrfTokenFor(config, claims.jti), cookieOptions(config, false, maxAge));
}

export function clearSessionCookies(res: Response, config: Config): void {
  const { maxAge: _drop, ...options } = cookieOptions(config, true, 0);
  res.clearCookie(SESSION_COOKIE, options);
  res.clearCookie(CSRF_COOKIE, { ...options, httpOnly: false });
}
