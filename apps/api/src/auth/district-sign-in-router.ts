import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import type { CookieOptions } from 'express';
import {
  districtSignInCallbackQuerySchema,
  districtSignInProblemQuerySchema,
  districtSignInProblemSchema,
  districtSignInStartQuerySchema,
  signInSettingsSchema,
  signInSettingsUpdateSchema,
} from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { ResourceRouter } from '../http/route.js';
import {
  describeProblem,
  DISTRICT_COOKIE_PATH,
  DISTRICT_STATE_COOKIE,
  districtClient,
  DistrictSignInProblem,
  finishDistrictSignIn,
  problemTicket,
  REQUEST_MINUTES,
  signInSettings,
  startDistrictSignIn,
  updateSignInSettings,
} from './district-sign-in.js';
import { setSessionCookies, signSession } from './session.js';

/** Sign-in with the district's OpenID Connect provider (browser redirects), and the admin's sign-in settings. */
export function districtSignInRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Sign-in';
  const client = districtClient(deps.config);
  // Lax: the provider's redirect back is a top-level navigation, which still carries it.
  const stateCookie: CookieOptions = { httpOnly: true, sameSite: 'lax', secure: deps.config.production, path: DISTRICT_COOKIE_PATH };
  const toSignIn = (problem: DistrictSignInProblem) => `/sign-in?district_problem=${encodeURIComponent(problemTicket(deps.config, problem))}`;

  r.route(
    {
      method: 'get',
      path: '/auth/district/start',
      summary: "Sign in with the district's identity provider: redirects there (authorization code flow with PKCE)",
      access: 'anyone',
      tag,
      query: districtSignInStartQuerySchema,
      responses: { 302: { description: "To the district's provider" } },
    },
    async ({ query, res }) => {
      let target: string;
      try {
        const { url, state } = await startDistrictSignIn(deps, await client(), query.next);
        res.cookie(DISTRICT_STATE_COOKIE, state, { ...stateCookie, maxAge: REQUEST_MINUTES * 60_000 });
        target = url.href;
      } catch (error) {
        if (error instanceof AppError) throw error; // not set up: 404 in the error shape
        deps.logger.warn({ err: error }, "district sign-in: the provider's metadata could not be read");
        target = toSignIn(new DistrictSignInProblem('failed'));
      }
      res.redirect(302, target);
    },
  );

  r.route(
    {
      method: 'get',
      path: '/auth/district/callback',
      summary: "Where the district's provider returns: checks the sign-in, starts the session, returns to the app",
      access: 'anyone',
      tag,
      query: districtSignInCallbackQuerySchema,
      responses: { 302: { description: 'Signed in (to the app) or not (to the sign-in page, which says why)' } },
    },
    async ({ req, res }) => {
      const browserState = req.cookies?.[DISTRICT_STATE_COOKIE] as string | undefined;
      res.clearCookie(DISTRICT_STATE_COOKIE, stateCookie);
      try {
        const query = req.originalUrl.includes('?') ? req.originalUrl.slice(req.originalUrl.indexOf('?')) : '';
        const { session, returnPath } = await finishDistrictSignIn(deps, await client(), query, browserState);
        // The same session as a password sign-in: one token, one pair of cookies.
        setSessionCookies(res, deps.config, signSession(deps.config, session));
        res.redirect(302, returnPath ?? '/');
      } catch (error) {
        if (!(error instanceof DistrictSignInProblem)) throw error;
        res.redirect(302, toSignIn(error));
      }
    },
  );

  r.route(
    {
      method: 'get',
      path: '/auth/district/problem',
      summary: 'Why a sign-in with the district account did not succeed, and whom to ask',
      access: 'anyone',
      tag,
      query: districtSignInProblemQuerySchema,
      responses: { 200: { description: 'The explanation', schema: districtSignInProblemSchema } },
    },
    async ({ query }) => ({ body: { message: await describeProblem(deps, query.ticket) } }),
  );

  r.route(
    {
      method: 'get',
      path: '/sign-in-settings',
      summary: "The district's sign-in settings: who may sign in with a password",
      access: ['admin'],
      tag,
      responses: { 200: { description: 'The settings', schema: signInSettingsSchema } },
    },
    async () => ({ body: await signInSettings(deps) }),
  );

  r.route(
    {
      method: 'put',
      path: '/sign-in-settings',
      summary: 'Turn password sign-in off for everyone but the admin, or back on (audited)',
      access: ['admin'],
      tag,
      body: signInSettingsUpdateSchema,
      responses: { 200: { description: 'The settings', schema: signInSettingsSchema } },
    },
    async ({ body, user }) => ({ body: await updateSignInSettings(deps, user!.id, body.passwordSignIn) }),
  );

  return r.router;
}
