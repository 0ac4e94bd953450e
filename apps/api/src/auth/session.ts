import { randomBytes } from 'node:crypto';
import type { CookieOptions, Response } from 'express';
import jwt from 'jsonwebtoken';
import type { Config } from '../config.js';

export const SESSION_COOKIE = 'evenhand_session';
export const CSRF_COOKIE = 'evenhand_csrf';
export const CSRF_HEADER = 'x-csrf-token';

interface SessionClaims {
  sub: string;
  iat: number;
  exp: number;
}

export function signSession(config: Config, userId: string): string {
  return jwt.sign({}, config.jwtSecret, {
    algorithm: 'HS256',
    subject: userId,
    expiresIn: config.sessionMinutes * 60,
  });
}

/** Returns the claims of a valid token, or null for a forged, malformed or expired one. */
export function verifySession(config: Config, token: string): SessionClaims | null {
  try {
    const claims = jwt.verify(token, config.jwtSecret, { algorithms: ['HS256'] });
    if (typeof claims === 'string' || typeof claims.sub !== 'string') return null;
    return claims as SessionClaims;
  } catch {
    return null;
  }
}

function cookieOptions(config: Config, httpOnly: boolean): CookieOptions {
  return {
    httpOnly,
    sameSite: 'lax',
    secure: config.production,
    path: '/',
    maxAge: config.sessionMinutes * 60 * 1000,
  };
}

/** Sets the httpOnly session cookie and the readable CSRF cookie the browser echoes back (double submit). */
export function setSessionCookies(res: Response, config: Config, token: string, csrf?: string): void {
  res.cookie(SESSION_COOKIE, token, cookieOptions(config, true));
  res.cookie(CSRF_COOKIE, csrf ?? randomBytes(24).toString('base64url'), cookieOptions(config, false));
}

export function clearSessionCookies(res: Response, config: Config): void {
  const { maxAge: _drop, ...options } = cookieOptions(config, true);
  res.clearCookie(SESSION_COOKIE, options);
  res.clearCookie(CSRF_COOKIE, { ...options, httpOnly: false });
}
