import { timingSafeEqual } from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import type { SessionUser } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import type { Access } from '../http/route.js';
import { checkSession, type SessionCheck } from './service.js';
import { CSRF_HEADER, csrfTokenFor, renewSession, SESSION_COOKIE, setSessionCookies, verifySession, type SessionClaims } from './session.js';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      user?: SessionUser;
      /** How the caller proved who they are; cookie callers must also pass the CSRF check. */
      authVia?: 'cookie' | 'bearer';
      /** Why a presented credential was refused (forged, expired, ended, deactivated account). */
      authProblem?: string;
      /** The CSRF token of the sign-in this request belongs to (derived from the token's id). */
      csrfToken?: string;
    }
  }
}

/** Reads the bearer token or the session cookie; never rejects by itself (routes decide, via `authorize`). */
export function authenticate({ config, db }: Deps): RequestHandler {
  function admit(req: Request, res: Response, claims: SessionClaims, via: 'cookie' | 'bearer', session: SessionCheck): void {
    if ('problem' in session) {
      req.authProblem = session.problem;
      return;
    }
    req.user = session.user;
    req.authVia = via;
    // Only a cookie caller is asked for it (a bearer token cannot be sent by another site's page).
    if (via === 'cookie') req.csrfToken = csrfTokenFor(config, claims.jti);
    // Sliding session for the browser: renew once half of the lifetime has passed, within the sign-in's absolute lifetime.
    const remaining = claims.exp * 1000 - Date.now();
    if (via === 'cookie' && remaining < (config.sessionMinutes * 60 * 1000) / 2) {
      const renewed = renewSession(config, claims);
      if (renewed) setSessionCookies(res, config, renewed);
    }
  }

  return (req, res, next) => {
    const header = req.get('authorization');
    const bearer = header?.match(/^Bearer\s+(\S+)$/i)?.[1];
    const token = bearer ?? (req.cookies?.[SESSION_COOKIE] as string | undefined);
    if (!token) return next();
    const claims = verifySession(config, token);
    if (!claims) {
      req.authProblem = 'Your session is not valid or has expired; please sign in again';
      return next();
    }
    const via = bearer ? 'bearer' : 'cookie';
    // One indexed query at most: the account, still active, at the token's session version, with its grants. Mostly
    // answered from memory at once, so the request goes on without waiting for a promise.
    const session = checkSession(db, claims.sub, claims.sv);
    if (session instanceof Promise) {
      return session.then((s) => {
        admit(req, res, claims, via, s);
        next();
      });
    }
    admit(req, res, claims, via, session);
    next();
  };
}

const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

function sameToken(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/** Deny by default: every route names its access, and this is the one place that enforces it. */
export function authorize(access: Access): RequestHandler {
  return (req, _res, next) => {
    if (access === 'anyone') return next();
    if (!req.user) {
      throw new AppError('unauthenticated', req.authProblem ?? 'Please sign in first');
    }
    if (req.authVia === 'cookie' && !SAFE_METHODS.has(req.method)) {
      // Bound to the sign-in: only the server can derive it, so a cookie and header made up together do not pass.
      const header = req.get(CSRF_HEADER) ?? '';
      if (!req.csrfToken || !sameToken(header, req.csrfToken)) {
        throw new AppError('csrf_failed', 'The request is missing its security token; reload the page and try again');
      }
    }
    if (access !== 'signed-in' && !req.user.roles.some((g) => access.includes(g.role))) {
      throw AppError.forbidden();
    }
    next();
  };
}
