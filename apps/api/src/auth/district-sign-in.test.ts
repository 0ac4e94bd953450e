import type { Express } from 'express';
import * as oidc from 'openid-client';
import { pino } from 'pino';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { FAKE_CLIENT, OTHER_CLIENT, startFakeIdentityProvider, type FakeIdentityProvider } from '../../dev/identity-provider.js';
import { signIn, startTestApp, testConfig, type TestApp } from '../../test/app.js';
import { createApp } from '../app.js';
import { createMailer, type Mailer } from '../mail/mailer.js';
import { DEMO_PASSWORD } from '../seed/demo.js';

let t: TestApp;
let idp: FakeIdentityProvider;
let app: Express;
let mailer: Mailer;
const warnings: string[] = [];

/** The test app's APP_URL is http://127.0.0.1:3999 (test/app.ts). */
const CALLBACK = 'http://127.0.0.1:3999/api/auth/district/callback';

beforeAll(async () => {
  t = await startTestApp();
  idp = await startFakeIdentityProvider({ port: 0, redirectUris: [CALLBACK] });
  const config = testConfig(t.databaseUrl, {
    OIDC_ISSUER_URL: idp.issuer,
    OIDC_CLIENT_ID: FAKE_CLIENT.id,
    OIDC_CLIENT_SECRET: FAKE_CLIENT.secret,
  });
  mailer = createMailer(config);
  const logger = pino({ level: 'warn' }, { write: (line: string) => void warnings.push(line) });
  app = createApp({ config, db: t.db, mailer, logger, jobs: t.jobs });
});
afterAll(async () => {
  mailer?.close();
  await idp?.close();
  await t?.close();
});

/** The person's browser at the fake provider: follows its redirects with its cookies, picks the person, returns the callback URL. */
async function atProvider(authorizationUrl: URL, personId: string): Promise<URL> {
  const jar = new Map<string, string>();
  const go = async (url: URL, init: RequestInit = {}) => {
    const res = await fetch(url, {
      ...init,
      redirect: 'manual',
      headers: { ...(init.headers as Record<string, string>), cookie: [...jar].map(([k, v]) => `${k}=${v}`).join('; ') },
    });
    for (const cookie of res.headers.getSetCookie()) {
      const [pair] = cookie.split(';');
      jar.set(pair.slice(0, pair.indexOf('=')), pair.slice(pair.indexOf('=') + 1));
    }
    expect(res.status, `${url.pathname} answered ${res.status}`).toBe(303);
    return new URL(res.headers.get('location')!, url);
  };
  const interaction = await go(authorizationUrl);
  expect(interaction.pathname).toMatch(/^\/interaction\//);
  const resume = await go(new URL(`${interaction.pathname}/login`, interaction), {
    method: 'POST',
    body: new URLSearchParams({ account: personId }),
    headers: { 'content-type': 'application/x-www-form-urlencoded' },
  });
  return go(resume);
}

/** Starts a sign-in in Evenhand; the agent keeps the state cookie as the browser would. */
async function start(agent: ReturnType<typeof request.agent>, next?: string): Promise<URL> {
  const res = await agent.get('/api/auth/district/start').query(next ? { next } : {});
  expect(res.status).toBe(302);
  return new URL(res.headers.location);
}

/** Follows the callback; answers where Evenhand sent the browser and, for a refusal, the sign-in page's message. */
async function callback(agent: ReturnType<typeof request.agent>, url: URL) {
  const res = await agent.get(url.pathname + url.search);
  expect(res.status).toBe(302);
  const location = new URL(res.headers.location, 'http://127.0.0.1:3999');
  const ticket = location.searchParams.get('district_problem');
  const message = ticket ? (await request(app).get('/api/auth/district/problem').query({ ticket })).body.message : null;
  return { location, message: message as string | null, setCookie: (res.headers['set-cookie'] ?? []) as unknown as string[] };
}

async function signedInAs(agent: ReturnType<typeof request.agent>): Promise<string | null> {
  const me = await agent.get('/api/auth/me');
  return me.status === 200 ? me.body.user.email : null;
}

describe('sign-in with the district account', () => {
  it('when a demo person signs in at the provider, then the code flow uses PKCE, state and nonce, and their session starts where they were going', async () => {
    const agent = request.agent(app);
    const authorization = await start(agent, '/studies');
    expect(authorization.origin).toBe(idp.issuer);
    expect(Object.fromEntries(authorization.searchParams)).toMatchObject({
      client_id: FAKE_CLIENT.id,
      response_type: 'code',
      scope: 'openid email',
      redirect_uri: CALLBACK,
      code_challenge_method: 'S256',
    });
    for (const param of ['state', 'nonce', 'code_challenge']) expect(authorization.searchParams.get(param)).toMatch(/^[\w-]{43,}$/);

    const done = await callback(agent, await atProvider(authorization, 'teacher1'));
    expect(done.location.pathname).toBe('/studies');
    expect(done.setCookie.some((c) => c.startsWith('evenhand_session=') && /HttpOnly/i.test(c))).toBe(true);
    expect(await signedInAs(agent)).toBe('teacher1@evenhand.test');
    const [user] = await t.db.query(`SELECT last_sign_in_at FROM users WHERE email = 'teacher1@evenhand.test'`);
    expect(Date.now() - new Date(user.last_sign_in_at).getTime()).toBeLessThan(60_000);
  });

  it('refuses a callback whose state is not the one this browser started with, and starts no session', async () => {
    const agent = request.agent(app);
    const returned = await atProvider(await start(agent), 'coordinator');
    const tampered = new URL(returned);
    tampered.searchParams.set('state', `${returned.searchParams.get('state')}x`);
    const done = await callback(agent, tampered);
    expect(done.location.pathname).toBe('/sign-in');
    expect(done.message).toMatch(/expired or was started in another browser/);
    expect(await signedInAs(agent)).toBeNull();

    // Another browser (without this one's state cookie) cannot finish it either.
    const elsewhere = await callback(request.agent(app), returned);
    expect(elsewhere.message).toMatch(/expired or was started in another browser/);
  });

  it('refuses a replayed code, even with the state cookie copied back in', async () => {
    const agent = request.agent(app);
    const returned = await atProvider(await start(agent), 'lead');
    const state = returned.searchParams.get('state')!;
    expect((await callback(agent, returned)).location.pathname).toBe('/');

    const replay = request.agent(app);
    const res = await replay.get(returned.pathname + returned.search).set('cookie', `evenhand_district_state=${state}`);
    expect(res.status).toBe(302);
    expect(res.headers.location).toMatch(/^\/sign-in\?district_problem=/);
    expect(await signedInAs(replay)).toBeNull();
  });

  it('refuses an e-mail address the provider has not verified, though an Evenhand account uses it', async () => {
    const agent = request.agent(app);
    const done = await callback(agent, await atProvider(await start(agent), 'unverified'));
    expect(done.location.pathname).toBe('/sign-in');
    expect(done.message).toContain('did not confirm that coordinator@evenhand.test is verified');
    expect(await signedInAs(agent)).toBeNull();
  });

  it('refuses an address without an Evenhand account, creates none, and says whom to ask', async () => {
    const agent = request.agent(app);
    const done = await callback(agent, await atProvider(await start(agent), 'newcomer'));
    expect(done.message).toContain('no Evenhand account uses newcomer@evenhand.test');
    expect(done.message).toContain('ask your district\'s Evenhand administrator (Avery Inkwhistle, admin@evenhand.test) to invite newcomer@evenhand.test');
    expect(await signedInAs(agent)).toBeNull();
    expect(await t.db.query(`SELECT 1 FROM users WHERE email = 'newcomer@evenhand.test'`)).toHaveLength(0);
  });

  it('refuses an ID token issued to another client (its audience), even when signed by the provider with the right nonce', async () => {
    const agent = request.agent(app);
    const authorization = await start(agent);
    // A real ID token from the same provider for the same person and nonce, but for another application.
    const other = await oidc.discovery(new URL(idp.issuer), OTHER_CLIENT.id, OTHER_CLIENT.secret, undefined, { execute: [oidc.allowInsecureRequests] });
    const verifier = oidc.randomPKCECodeVerifier();
    const otherUrl = oidc.buildAuthorizationUrl(other, {
      redirect_uri: CALLBACK,
      scope: 'openid email',
      state: 'other-state',
      nonce: authorization.searchParams.get('nonce')!,
      code_challenge: await oidc.calculatePKCECodeChallenge(verifier),
      code_challenge_method: 'S256',
    });
    const otherTokens = await oidc.authorizationCodeGrant(other, await atProvider(otherUrl, 'teacher2'), {
      pkceCodeVerifier: verifier,
      expectedState: 'other-state',
      expectedNonce: authorization.searchParams.get('nonce')!,
    });
    expect(otherTokens.claims()).toMatchObject({ aud: OTHER_CLIENT.id, email: 'teacher2@evenhand.test', email_verified: true });

    const returned = await atProvider(authorization, 'teacher2');
    idp.replaceNextTokenResponse({ access_token: otherTokens.access_token, token_type: 'Bearer', expires_in: 60, id_token: otherTokens.id_token });
    warnings.length = 0;
    const done = await callback(agent, returned);
    expect(done.message).toMatch(/could not complete the sign-in/);
    expect(await signedInAs(agent)).toBeNull();
    expect(warnings.join('\n')).toContain('(audience) claim value');
  });

  it('refuses a deactivated account, which cannot sign in with its password either', async () => {
    await t.db.query(`UPDATE users SET active = false WHERE email = 'teacher4@evenhand.test'`);
    try {
      const agent = request.agent(app);
      const done = await callback(agent, await atProvider(await start(agent), 'teacher4'));
      expect(done.message).toContain('The Evenhand account for teacher4@evenhand.test is deactivated');
      expect(done.message).toContain('Avery Inkwhistle');
      expect(await signedInAs(agent)).toBeNull();
      const password = await request(app).post('/api/auth/login').send({ email: 'teacher4@evenhand.test', password: DEMO_PASSWORD });
      expect(password.status).toBe(401);
    } finally {
      await t.db.query(`UPDATE users SET active = true WHERE email = 'teacher4@evenhand.test'`);
    }
  });

  it('when the provider cannot be reached, then the browser returns to the sign-in page with a message, not an error page', async () => {
    const config = testConfig(t.databaseUrl, { OIDC_ISSUER_URL: 'http://127.0.0.1:9', OIDC_CLIENT_ID: FAKE_CLIENT.id, OIDC_CLIENT_SECRET: FAKE_CLIENT.secret });
    const unreachable = createApp({ config, db: t.db, mailer, logger: pino({ level: 'silent' }), jobs: t.jobs });
    const res = await request(unreachable).get('/api/auth/district/start');
    expect(res.status).toBe(302);
    const ticket = new URL(res.headers.location, 'http://127.0.0.1:3999').searchParams.get('district_problem');
    const problem = await request(unreachable).get('/api/auth/district/problem').query({ ticket });
    expect(problem.body.message).toMatch(/could not complete the sign-in with your district account/);
  });

  it('refuses a forged or expired problem ticket with a 400 in the error shape', async () => {
    const res = await request(app).get('/api/auth/district/problem').query({ ticket: 'eyJhbGciOiJub25lIn0.e30.' });
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({ code: 'validation_failed', message: 'This sign-in message has expired; sign in again' });
  });

  it('refuses a return path that leaves the app', async () => {
    for (const next of ['//elsewhere.example/', 'https://elsewhere.example/', '/api/accounts', '/\\elsewhere.example']) {
      const res = await request(app).get('/api/auth/district/start').query({ next });
      expect([next, res.status]).toEqual([next, 400]);
    }
  });
});

describe('password sign-in turned off for everyone but the admin', () => {
  it('when the admin turns it off, then others must use the district account, the admin still may, and the change is audited', async () => {
    const admin = await signIn(app, 'admin@evenhand.test');
    const off = await admin.agent.put('/api/sign-in-settings').set('x-csrf-token', admin.csrf).send({ passwordSignIn: 'admin_only' });
    try {
      expect(off.status).toBe(200);
      expect(off.body).toMatchObject({ passwordSignIn: 'admin_only', districtSignIn: true, updatedBy: 'Avery Inkwhistle' });
      const [audit] = await t.db.query(`SELECT actor_id, before, after FROM audit_events WHERE action = 'sign_in_settings.changed' ORDER BY at DESC LIMIT 1`);
      expect(audit).toEqual({ actor_id: admin.userId, before: { passwordSignIn: 'everyone' }, after: { passwordSignIn: 'admin_only' } });
      expect((await request(app).get('/api/auth/sign-in-options')).body).toMatchObject({ districtSignIn: true, passwordSignIn: 'admin_only' });

      const teacher = await request(app).post('/api/auth/login').send({ email: 'teacher1@evenhand.test', password: DEMO_PASSWORD });
      expect(teacher.status).toBe(403);
      expect(teacher.body.error).toEqual({ code: 'forbidden', message: expect.stringContaining('Sign in with your district account') });
      expect(teacher.headers['set-cookie']).toBeUndefined();
      // A wrong password still gets the usual answer, so the setting reveals nothing about the account.
      const wrong = await request(app).post('/api/auth/login').send({ email: 'teacher1@evenhand.test', password: 'not-the-password' });
      expect(wrong.status).toBe(401);

      expect((await request(app).post('/api/auth/login').send({ email: 'admin@evenhand.test', password: DEMO_PASSWORD })).status).toBe(200);
      const agent = request.agent(app);
      await callback(agent, await atProvider(await start(agent), 'teacher1'));
      expect(await signedInAs(agent)).toBe('teacher1@evenhand.test');
    } finally {
      const on = await admin.agent.put('/api/sign-in-settings').set('x-csrf-token', admin.csrf).send({ passwordSignIn: 'everyone' });
      expect(on.status).toBe(200);
    }
    expect((await request(app).post('/api/auth/login').send({ email: 'teacher1@evenhand.test', password: DEMO_PASSWORD })).status).toBe(200);
  });

  it('refuses to turn it off on a server without a district provider, which also offers no district sign-in', async () => {
    const admin = await signIn(t.app, 'admin@evenhand.test');
    const res = await admin.agent.put('/api/sign-in-settings').set('x-csrf-token', admin.csrf).send({ passwordSignIn: 'admin_only' });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues[0].path).toBe('passwordSignIn');
    expect((await admin.agent.get('/api/sign-in-settings')).body.passwordSignIn).toBe('everyone');
    expect((await request(t.app).get('/api/auth/sign-in-options')).body.districtSignIn).toBe(false);
    const startThere = await request(t.app).get('/api/auth/district/start');
    expect(startThere.status).toBe(404);
    expect(startThere.body.error.code).toBe('not_found');
  });

  it('when the settings row is gone (a database emptied by seed --reset), then passwords are for everyone until the admin changes it', async () => {
    await t.db.query(`DELETE FROM sign_in_settings`);
    expect((await request(app).get('/api/auth/sign-in-options')).body.passwordSignIn).toBe('everyone');
    const admin = await signIn(app, 'admin@evenhand.test');
    expect((await admin.agent.get('/api/sign-in-settings')).body).toMatchObject({ passwordSignIn: 'everyone', updatedAt: null, updatedBy: null });
    const off = await admin.agent.put('/api/sign-in-settings').set('x-csrf-token', admin.csrf).send({ passwordSignIn: 'admin_only' });
    expect(off.body).toMatchObject({ passwordSignIn: 'admin_only', updatedBy: 'Avery Inkwhistle' });
    expect((await request(app).post('/api/auth/login').send({ email: 'lead@evenhand.test', password: DEMO_PASSWORD })).status).toBe(403);
    await admin.agent.put('/api/sign-in-settings').set('x-csrf-token', admin.csrf).send({ passwordSignIn: 'everyone' });
    expect((await request(app).post('/api/auth/login').send({ email: 'lead@evenhand.test', password: DEMO_PASSWORD })).status).toBe(200);
  });

  it('refuses a setting outside the two choices, or with extra fields', async () => {
    const admin = await signIn(app, 'admin@evenhand.test');
    for (const body of [{ passwordSignIn: 'nobody' }, { passwordSignIn: 'everyone', extra: 1 }, {}]) {
      const res = await admin.agent.put('/api/sign-in-settings').set('x-csrf-token', admin.csrf).send(body);
      expect(res.status).toBe(400);
      expect(res.body.error.code).toBe('validation_failed');
    }
  });
});
