import jwt from 'jsonwebtoken';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { createApp } from '../app.js';
import { createLogger } from '../logger.js';
import { createMailer } from '../mail/mailer.js';
import { cookieValue, signIn, startTestApp, testConfig, type TestApp } from '../../test/app.js';
import { linkToken, mailTo, waitForMail } from '../../test/mail.js';
import { issueToken } from './service.js';
import { DEMO_PASSWORD, featuredDemoAccounts } from '../seed/demo.js';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('sign-in', () => {
  it('when the password is right, then it sets an httpOnly SameSite=Lax session cookie, a readable CSRF cookie, and returns the user and a token', async () => {
    const res = await request(t.app).post('/api/auth/login').send({ email: 'Lead@Evenhand.test', password: DEMO_PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ email: 'lead@evenhand.test', roles: [{ role: 'research_lead', siteId: null }] });
    const cookies = res.headers['set-cookie'] as unknown as string[];
    const session = cookies.find((c) => c.startsWith('evenhand_session='))!;
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
    expect(session).not.toMatch(/Secure/i); // Secure only in production
    const csrf = cookies.find((c) => c.startsWith('evenhand_csrf='))!;
    expect(csrf).not.toMatch(/HttpOnly/i);
    expect(cookieValue(cookies, 'evenhand_session')).toBe(res.body.token);
    const claims = jwt.decode(res.body.token) as { sub: string; exp: number; iat: number };
    expect(claims.sub).toBe(res.body.user.id);
    expect(claims.exp - claims.iat).toBe(t.config.sessionMinutes * 60);
  });

  it('when the password is wrong or the e-mail unknown, then both get the same 401 answer', async () => {
    const wrong = await request(t.app).post('/api/auth/login').send({ email: 'lead@evenhand.test', password: 'not-the-password' });
    const unknown = await request(t.app).post('/api/auth/login').send({ email: 'nobody@evenhand.test', password: 'not-the-password' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body).toEqual(unknown.body);
    expect(wrong.body.error).toEqual({ code: 'unauthenticated', message: 'The e-mail address or password is not right' });
  });

  it('when the body is malformed, then it answers 400 with field issues', async () => {
    const res = await request(t.app).post('/api/auth/login').send({ email: 'not an address' });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(res.body.error.details.issues.map((i: { path: string }) => i.path).sort()).toEqual(['email', 'password']);
  });

  it('when the JSON is broken, then it answers 400 in the error shape', async () => {
    const res = await request(t.app).post('/api/auth/login').set('content-type', 'application/json').send('{"email":');
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
  });
});

describe('sessions', () => {
  it('when a bearer token is sent, then /me answers with the user and no CSRF header is needed for writes', async () => {
    const { token } = await signIn(t.app, 'coordinator@evenhand.test');
    const me = await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${token}`);
    expect(me.status).toBe(200);
    expect(me.body.user.email).toBe('coordinator@evenhand.test');
    const out = await request(t.app).post('/api/auth/logout').set('authorization', `Bearer ${token}`);
    expect(out.status).toBe(204);
  });

  it('when a token is forged with another secret, then it is refused with a clear 401', async () => {
    const { userId } = await signIn(t.app, 'admin@evenhand.test');
    const forged = jwt.sign({}, 'someone-elses-secret-of-enough-length!!', { subject: userId, expiresIn: 600 });
    const res = await request(t.app).get('/api/accounts').set('authorization', `Bearer ${forged}`);
    expect(res.status).toBe(401);
    expect(res.body.error.message).toMatch(/not valid or has expired/);
  });

  it('when a token uses the "none" algorithm, then it is refused', async () => {
    const { userId } = await signIn(t.app, 'admin@evenhand.test');
    const unsigned = jwt.sign({ sub: userId }, '', { algorithm: 'none' });
    const res = await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${unsigned}`);
    expect(res.status).toBe(401);
  });

  it('when a token has expired, then it is refused', async () => {
    const { userId } = await signIn(t.app, 'admin@evenhand.test');
    const old = jwt.sign({ iat: Math.floor(Date.now() / 1000) - 7200 }, t.config.jwtSecret, { subject: userId, expiresIn: 60 });
    expect((await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${old}`)).status).toBe(401);
  });

  it('when a cookie session writes without the CSRF header, then it is refused; with it, it passes', async () => {
    const s = await signIn(t.app, 'reviewer@evenhand.test');
    const missing = await s.agent.post('/api/auth/logout');
    expect(missing.status).toBe(403);
    expect(missing.body.error.code).toBe('csrf_failed');
    const wrong = await s.agent.post('/api/auth/logout').set('x-csrf-token', 'guess');
    expect(wrong.status).toBe(403);
    // A cookie and header made up together (double submit) do not pass: the token is derived from the session.
    const forged = await request(t.app)
      .post('/api/auth/logout')
      .set('Cookie', [`evenhand_session=${s.token}`, 'evenhand_csrf=made-up-by-an-attacker'])
      .set('x-csrf-token', 'made-up-by-an-attacker');
    expect(forged.status).toBe(403);
    expect(forged.body.error.code).toBe('csrf_failed');
    // Another session's token does not pass either.
    const other = await signIn(t.app, 'reviewer@evenhand.test');
    expect(other.csrf).not.toBe(s.csrf);
    expect((await s.agent.post('/api/auth/logout').set('x-csrf-token', other.csrf)).status).toBe(403);
    const ok = await s.agent.post('/api/auth/logout').set('x-csrf-token', s.csrf);
    expect(ok.status).toBe(204);
    const cleared = (ok.headers['set-cookie'] as unknown as string[]).find((c) => c.startsWith('evenhand_session='))!;
    expect(cleared).toMatch(/Expires=Thu, 01 Jan 1970/);
  });

  it('when a user signs out, then the old cookie and the bearer token no longer work', async () => {
    const s = await signIn(t.app, 'principal2@evenhand.test');
    const session = `evenhand_session=${s.token}`;
    expect((await request(t.app).get('/api/auth/me').set('cookie', session)).status).toBe(200);
    await s.agent.post('/api/auth/logout').set('x-csrf-token', s.csrf).expect(204);
    const cookie = await request(t.app).get('/api/auth/me').set('cookie', session);
    expect(cookie.status).toBe(401);
    expect(cookie.body.error.message).toMatch(/session has ended/);
    expect((await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${s.token}`)).status).toBe(401);
    // Signing in again works as before.
    await signIn(t.app, 'principal2@evenhand.test');
  });

  it('when the password is reset, then sessions signed in before stop working', async () => {
    const s = await signIn(t.app, 'teacher5@evenhand.test');
    const [{ id }] = await t.db.query(`SELECT id FROM users WHERE email = 'teacher5@evenhand.test'`);
    const token = await issueToken(t.db.manager, id, 'password_reset');
    await request(t.app).post('/api/auth/password-reset/confirm').send({ token, password: 'a-newly-chosen-password' }).expect(200);
    expect((await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${s.token}`)).status).toBe(401);
    expect((await s.agent.get('/api/auth/me')).status).toBe(401);
  });

  it('when an admin changes an account’s roles or deactivates it, then its sessions end', async () => {
    const admin = await signIn(t.app, 'admin@evenhand.test');
    const s = await signIn(t.app, 'teacher6@evenhand.test');
    const roles = (await admin.agent.get(`/api/accounts?q=teacher6@evenhand.test`)).body.items[0].roles;
    await admin.agent.patch(`/api/accounts/${s.userId}`).set('x-csrf-token', admin.csrf).send({ roles: [...roles, { role: 'research_lead', siteId: null }] }).expect(200);
    expect((await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${s.token}`)).status).toBe(401);
    const again = await signIn(t.app, 'teacher6@evenhand.test');
    await admin.agent.patch(`/api/accounts/${s.userId}`).set('x-csrf-token', admin.csrf).send({ roles }).expect(200);
    expect((await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${again.token}`)).status).toBe(401);
  });

  it('when a token already checked (kept in memory) has its session ended or its account deactivated, then the very next request is refused', async () => {
    const admin = await signIn(t.app, 'admin@evenhand.test');
    const me = (token: string) => request(t.app).get('/api/auth/me').set('authorization', `Bearer ${token}`);
    const s = await signIn(t.app, 'teacher7@evenhand.test');
    await me(s.token).expect(200);
    await me(s.token).expect(200);
    await s.agent.post('/api/auth/logout').set('x-csrf-token', s.csrf).expect(204);
    expect((await me(s.token)).body.error.message).toMatch(/session has ended/);
    const again = await signIn(t.app, 'teacher7@evenhand.test');
    await me(again.token).expect(200);
    await admin.agent.patch(`/api/accounts/${again.userId}`).set('x-csrf-token', admin.csrf).send({ active: false }).expect(200);
    const refused = await me(again.token);
    expect(refused.status).toBe(401);
    expect(refused.body.error.message).toMatch(/no longer active|session has ended/);
  });

  it('when a token is older than the absolute lifetime, then it is refused, and a renewal never goes past that lifetime', async () => {
    const s = await signIn(t.app, 'lead@evenhand.test');
    const { jti, sv, auth_time } = jwt.decode(s.token) as { jti: string; sv: number; auth_time: number };
    const now = Math.floor(Date.now() / 1000);
    const absolute = t.config.sessionAbsoluteHours * 3600;
    const sign = (authTime: number, exp: number) => jwt.sign({ jti, sv, auth_time: authTime, exp }, t.config.jwtSecret, { subject: s.userId });
    const tooOld = sign(now - absolute - 1, now + 600);
    expect((await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${tooOld}`)).status).toBe(401);
    // A cookie near its end, five minutes before the sign-in's absolute end: renewed only up to that end.
    const late = await request(t.app).get('/api/auth/me').set('cookie', `evenhand_session=${sign(now - absolute + 300, now + 60)}`);
    expect(late.status).toBe(200);
    const renewed = jwt.decode(cookieValue(late.headers['set-cookie'], 'evenhand_session')) as { exp: number; auth_time: number; jti: string };
    expect(renewed.auth_time).toBe(now - absolute + 300);
    expect(renewed.exp).toBe(now + 300);
    expect(renewed.jti).toBe(jti);
    expect(auth_time).toBeGreaterThanOrEqual(now - 5);
  });

  it('checks a session with one query, whatever the number of grants', async () => {
    const { token } = await signIn(t.app, 'principal1@evenhand.test');
    const pg = await import('pg');
    const seen: string[] = [];
    const original = pg.default.Client.prototype.query;
    const spy = vi.spyOn(pg.default.Client.prototype, 'query').mockImplementation(function (this: unknown, ...args: unknown[]) {
      const text = typeof args[0] === 'string' ? args[0] : (args[0] as { text?: string })?.text;
      if (text && /\busers\b|role_grants/.test(text)) seen.push(text);
      return (original as (...a: unknown[]) => unknown).apply(this, args);
    } as typeof original);
    try {
      const me = await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${token}`);
      expect(me.status).toBe(200);
      expect(me.body.user.roles[0]).toMatchObject({ role: 'principal', siteName: 'Alderquill Elementary' });
    } finally {
      spy.mockRestore();
    }
    expect(seen).toHaveLength(1);
  });

  it('when the session cookie is cleared by sign-out, then the next request is not signed in', async () => {
    const s = await signIn(t.app, 'reviewer@evenhand.test');
    await s.agent.post('/api/auth/logout').set('x-csrf-token', s.csrf);
    expect((await s.agent.get('/api/auth/me')).status).toBe(401);
  });
});

describe('throttling of failed sign-ins', () => {
  const login = (app: ReturnType<typeof t.freshApp>, email: string, password: string, from?: string) => {
    const req = request(app).post('/api/auth/login');
    if (from) req.set('x-forwarded-for', from);
    return req.send({ email, password });
  };

  it('when one account fails repeatedly, then further attempts wait 1, 2, 4 … seconds instead of being locked out, and the owner gets in once the wait is over', async () => {
    const app = t.freshApp(); // its own counters
    for (let i = 0; i < 5; i++) expect((await login(app, 'teacher3@evenhand.test', `wrong-${i}`)).status).toBe(401);
    const slowed = await login(app, 'teacher3@evenhand.test', DEMO_PASSWORD);
    expect(slowed.status).toBe(429);
    expect(slowed.headers['retry-after']).toBe('1');
    expect(slowed.body.error).toEqual({ code: 'rate_limited', message: 'Too many failed sign-ins for this account; try again in 1 second' });
    await new Promise((r) => setTimeout(r, 1100));
    expect((await login(app, 'teacher3@evenhand.test', DEMO_PASSWORD)).status).toBe(200);
    // Success clears the count: the next failure is free again.
    expect((await login(app, 'teacher3@evenhand.test', 'wrong-again')).status).toBe(401);
    expect((await login(app, 'teacher3@evenhand.test', DEMO_PASSWORD)).status).toBe(200);
  }, 90_000); // many bcrypt checks: slow on a busy machine

  it('when a stranger fails on an account from their address, then the owner signing in from another address is not slowed (TRUST_PROXY gives the address)', async () => {
    const config = testConfig(t.databaseUrl, { TRUST_PROXY: '1' });
    const app = createApp({ config, db: t.db, mailer: createMailer(config), logger: createLogger(config), jobs: t.jobs });
    for (let i = 0; i < 7; i++) await login(app, 'teacher4@evenhand.test', `wrong-${i}`, '203.0.113.66');
    const stranger = await login(app, 'teacher4@evenhand.test', 'wrong-8', '203.0.113.66');
    expect(stranger.status).toBe(429);
    expect(Number(stranger.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect((await login(app, 'teacher4@evenhand.test', DEMO_PASSWORD, '198.51.100.7')).status).toBe(200);
  }, 90_000); // many bcrypt checks: slow on a busy machine

  it('when one address fails 20 times across different accounts, then it is refused with 429; another address is not', async () => {
    const config = testConfig(t.databaseUrl, { TRUST_PROXY: '1' });
    const app = createApp({ config, db: t.db, mailer: createMailer(config), logger: createLogger(config), jobs: t.jobs });
    for (let i = 0; i < 20; i++) await login(app, `guess${i}@evenhand.test`, 'wrong-password', '203.0.113.9');
    const blocked = await login(app, 'admin@evenhand.test', DEMO_PASSWORD, '203.0.113.9');
    expect(blocked.status).toBe(429);
    expect(blocked.body.error.message).toMatch(/from this address/);
    expect((await login(app, 'admin@evenhand.test', DEMO_PASSWORD, '203.0.113.10')).status).toBe(200);
  }, 90_000); // many bcrypt checks: slow on a busy machine

  it('when sign-ins succeed, then they do not count against the limit', async () => {
    const app = t.freshApp(); // its own counters
    for (let i = 0; i < 12; i++) {
      const res = await request(app).post('/api/auth/login').send({ email: 'principal1@evenhand.test', password: DEMO_PASSWORD });
      expect(res.status).toBe(200);
    }
  }, 90_000); // many bcrypt checks: slow on a busy machine
});

describe('password reset', () => {
  it('when asked for a known address, then a single-use link arrives that sets a new password', async () => {
    const email = 'teacher4@evenhand.test';
    const count = (await mailTo(email)).length;
    const asked = await request(t.app).post('/api/auth/password-reset').send({ email });
    expect(asked.status).toBe(202);
    const mails = await waitForMail(email, count + 1);
    const mail = mails[mails.length - 1];
    expect(mail.subject).toBe('Reset your Evenhand password');
    const token = linkToken(mail);
    expect(mail.text).toContain(`${t.config.appUrl}/set-password?token=`);

    const set = await request(t.app).post('/api/auth/password-reset/confirm').send({ token, password: 'a-brand-new-password' });
    expect(set.status).toBe(200);
    expect((await request(t.app).post('/api/auth/login').send({ email, password: 'a-brand-new-password' })).status).toBe(200);
    expect((await request(t.app).post('/api/auth/login').send({ email, password: DEMO_PASSWORD })).status).toBe(401);

    const again = await request(t.app).post('/api/auth/password-reset/confirm').send({ token, password: 'yet-another-password' });
    expect(again.status).toBe(400);
    expect(again.body.error.message).toMatch(/expired or has already been used/);
  });

  it('when asked for a known and an unknown address, then the request does the same work (it only queues the ask), answers the same, and only the known one gets mail', async () => {
    // An app whose database and queue record every use: the answer must come before anything about the address is read or written.
    let work: string[] = [];
    const db = new Proxy(t.db, { get: (target, key) => (work.push(`database.${String(key)}`), Reflect.get(target, key)) });
    const jobs = { ...t.jobs, enqueuePasswordReset: (email: string) => (work.push('queue password reset'), t.jobs.enqueuePasswordReset(email)) };
    const logger = createLogger(t.config);
    const app = createApp({ config: t.config, db, mailer: createMailer(t.config), logger, jobs });
    const ask = async (email: string) => {
      work = [];
      const res = await request(app).post('/api/auth/password-reset').send({ email });
      return { res, work };
    };
    const before = (await mailTo('admin@evenhand.test')).length;
    const known = await ask('admin@evenhand.test');
    const unknown = await ask('ghost@evenhand.test');
    expect(known.work).toEqual(['queue password reset']);
    expect(unknown.work).toEqual(known.work);
    expect(unknown.res.status).toBe(202);
    expect(unknown.res.body).toEqual(known.res.body);
    // The queued half then writes the token and the e-mail for the account only.
    await waitForMail('admin@evenhand.test', before + 1);
    const [{ n }] = await t.db.query(`SELECT count(*)::int AS n FROM pgboss.job WHERE name = 'password-reset-request' AND data->>'email' = 'ghost@evenhand.test'`);
    expect(n).toBe(1);
    await expect.poll(async () => (await t.db.query(`SELECT state FROM pgboss.job WHERE name = 'password-reset-request' AND data->>'email' = 'ghost@evenhand.test'`))[0].state).toBe('completed');
    expect(await mailTo('ghost@evenhand.test')).toHaveLength(0);
  });

  it('when the token has expired, then it is refused', async () => {
    const user = await t.db.query(`SELECT id FROM users WHERE email = 'teacher2@evenhand.test'`);
    const token = await issueToken(t.db.manager, user[0].id, 'password_reset');
    await t.db.query(`UPDATE auth_tokens SET expires_at = now() - interval '1 minute' WHERE user_id = $1`, [user[0].id]);
    const res = await request(t.app).post('/api/auth/password-reset/confirm').send({ token, password: 'another-new-password' });
    expect(res.status).toBe(400);
  });
});

describe('sign-in options', () => {
  it('when the API does not run in production, then it lists the seeded demo accounts with their shared password', async () => {
    const res = await request(t.app).get('/api/auth/sign-in-options');
    expect(res.status).toBe(200);
    expect(res.body.demo.password).toBe(DEMO_PASSWORD);
    expect(res.body.demo.accounts.map((a: { email: string }) => a.email)).toEqual(featuredDemoAccounts.map((a) => a.email));
    expect(res.body.demo.accounts[0]).toEqual({ email: 'admin@evenhand.test', name: 'Avery Inkwhistle', role: 'admin', siteName: null });
    expect(res.body.demo.accounts.find((a: { email: string }) => a.email === 'principal1@evenhand.test')).toMatchObject({ role: 'principal', siteName: 'Alderquill Elementary' });
  });

  it('when a demo account is deactivated, then it is not offered', async () => {
    await t.db.query(`UPDATE users SET active = false WHERE email = 'teacher4@evenhand.test'`);
    try {
      const res = await request(t.app).get('/api/auth/sign-in-options');
      expect(res.body.demo.accounts.map((a: { email: string }) => a.email)).not.toContain('teacher4@evenhand.test');
      expect(res.body.demo.accounts).toHaveLength(featuredDemoAccounts.length - 1);
    } finally {
      await t.db.query(`UPDATE users SET active = true WHERE email = 'teacher4@evenhand.test'`);
    }
  });

  it('when the API runs in production, then it lists no demo account, even with the demo accounts in its database', async () => {
    const config = testConfig(t.databaseUrl, {
      NODE_ENV: 'production',
      JWT_SECRET: 'a-production-secret-of-at-least-32-characters',
      ROSTER_LINK_SECRET: 'a-production-roster-key-of-at-least-32-characters',
    });
    const mailer = createMailer(config);
    try {
      const production = createApp({ config, db: t.db, mailer, logger: createLogger(config), jobs: t.jobs });
      const res = await request(production).get('/api/auth/sign-in-options');
      expect(res.status).toBe(200);
      expect(res.body).toEqual({ demo: null, districtSignIn: false, passwordSignIn: 'everyone' });
      expect(JSON.stringify(res.body)).not.toContain(DEMO_PASSWORD);
    } finally {
      mailer.close();
    }
  });
});
