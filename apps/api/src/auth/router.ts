import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import {
  loginRequestSchema,
  loginResponseSchema,
  meResponseSchema,
  messageResponseSchema,
  passwordResetConfirmSchema,
  passwordResetRequestSchema,
  signInOptionsSchema,
} from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { passwordResetLimiter, signInLimiters } from './rate-limit.js';
import { confirmPasswordReset, endSessions, requestPasswordReset, signIn, signInOptions } from './service.js';
import { clearSessionCookies, setSessionCookies, signSession } from './session.js';

export function authRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Sign-in';

  r.route(
    {
      method: 'post',
      path: '/auth/login',
      summary: 'Sign in; sets the session cookie and returns a bearer token for integrations',
      access: 'anyone',
      tag,
      body: loginRequestSchema,
      before: signInLimiters(),
      responses: { 200: { description: 'Signed in', schema: loginResponseSchema } },
    },
    async ({ body, res }) => {
      const { user, session } = await signIn(deps, body.email, body.password);
      const token = signSession(deps.config, session);
      setSessionCookies(res, deps.config, token);
      return { body: { user, token } };
    },
  );

  r.route(
    {
      method: 'get',
      path: '/auth/sign-in-options',
      summary: 'What the sign-in page offers: the demo accounts outside production',
      access: 'anyone',
      tag,
      responses: { 200: { description: 'The options', schema: signInOptionsSchema } },
    },
    async () => ({ body: await signInOptions(deps) }),
  );

  r.route(
    {
      method: 'post',
      path: '/auth/logout',
      summary: 'Sign out: ends every session of the account (its cookies and bearer tokens)',
      access: 'signed-in',
      tag,
      responses: { 204: { description: 'Signed out' } },
    },
    async ({ res, user }) => {
      await endSessions(deps.db, user!.id);
      clearSessionCookies(res, deps.config);
    },
  );

  r.route(
    {
      method: 'get',
      path: '/auth/me',
      summary: 'The signed-in account and its role grants',
      access: 'signed-in',
      tag,
      responses: { 200: { description: 'The account', schema: meResponseSchema } },
    },
    ({ user }) => ({ body: { user } }),
  );

  r.route(
    {
      method: 'post',
      path: '/auth/password-reset',
      summary: 'E-mail a single-use link to choose a new password',
      access: 'anyone',
      tag,
      body: passwordResetRequestSchema,
      before: [passwordResetLimiter()],
      responses: { 202: { description: 'Sent if the address has an account', schema: messageResponseSchema } },
    },
    async ({ body }) => {
      await requestPasswordReset(deps, body.email);
      return { status: 202, body: { message: 'If this address has an account, a link to choose a new password is on its way.' } };
    },
  );

  r.route(
    {
      method: 'post',
      path: '/auth/password-reset/confirm',
      summary: 'Choose a password with an invitation or reset token',
      access: 'anyone',
      tag,
      body: passwordResetConfirmSchema,
      responses: { 200: { description: 'Password set', schema: messageResponseSchema } },
    },
    async ({ body }) => {
      await confirmPasswordReset(deps, body.token, body.password);
      return { body: { message: 'Your password is set; you can sign in now.' } };
    },
  );

  return r.router;
}
