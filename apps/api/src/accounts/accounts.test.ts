import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { linkToken, uniqueAddress, waitForMail } from '../../test/mail.js';
import { demoAccounts } from '../seed/demo.js';

let t: TestApp;
let admin: SignedIn;
let siteId: string;
beforeAll(async () => {
  t = await startTestApp();
  admin = await signIn(t.app, 'admin@evenhand.test');
  siteId = (await t.db.query(`SELECT id FROM sites WHERE code = 'CDH'`))[0].id;
});
afterAll(() => t.close());

const audit = (entityId: string) =>
  t.db.query(`SELECT action, before, after, actor_id FROM audit_events WHERE entity_id = $1 ORDER BY at`, [entityId]);

describe('accounts (admin)', () => {
  it('lists accounts with a total, filters by role and text, sorts and paginates', async () => {
    const all = await admin.agent.get('/api/accounts?limit=100');
    expect(all.status).toBe(200);
    expect(all.body.total).toBe(demoAccounts.length);
    const principals = await admin.agent.get('/api/accounts?role=principal&sort=email&order=desc');
    expect(principals.body.items.map((u: { email: string }) => u.email)).toEqual([6, 5, 4, 3, 2, 1].map((i) => `principal${i}@evenhand.test`));
    const page = await admin.agent.get('/api/accounts?role=principal&sort=email&limit=2&offset=2');
    expect(page.body).toMatchObject({ total: 6, items: [{ email: 'principal3@evenhand.test' }, { email: 'principal4@evenhand.test' }] });
    const search = await admin.agent.get('/api/accounts?q=PRINCIPAL2');
    expect(search.body.items.map((u: { email: string }) => u.email)).toEqual(['principal2@evenhand.test']);
    expect((await admin.agent.get('/api/accounts?q=%25')).body.total).toBe(0); // a literal %, not a wildcard
  });

  it('when sorted by last sign-in, then accounts that never signed in come last either way, ties by ID; a page past the end keeps the total', async () => {
    const ids = async (order: string) => (await t.db.query(`SELECT id FROM users WHERE last_sign_in_at IS NOT NULL ORDER BY last_sign_in_at ${order}, id`)).map((r: { id: string }) => r.id);
    const signedIn = await ids('DESC');
    const never = (await t.db.query(`SELECT id FROM users WHERE last_sign_in_at IS NULL ORDER BY id`)).map((r: { id: string }) => r.id);
    expect(signedIn.length).toBeGreaterThan(0);
    expect(never.length).toBeGreaterThan(0);
    const desc = await admin.agent.get('/api/accounts?sort=lastSignInAt&order=desc&limit=100');
    expect(desc.body.items.map((u: { id: string }) => u.id)).toEqual([...signedIn, ...never]);
    const asc = await admin.agent.get('/api/accounts?sort=lastSignInAt&order=asc&limit=100');
    expect(asc.body.items.map((u: { id: string }) => u.id)).toEqual([...(await ids('ASC')), ...never]);
    const beyond = await admin.agent.get('/api/accounts?role=principal&offset=50');
    expect(beyond.body).toEqual({ items: [], total: 6 });
  });

  it('when an admin invites a teacher, then an e-mail link lets them choose a password and sign in, and the invitation is audited', async () => {
    const email = uniqueAddress('new-teacher');
    const res = await admin.agent
      .post('/api/accounts')
      .set('x-csrf-token', admin.csrf)
      .send({ email, name: 'Nadia Brightwater', roles: [{ role: 'teacher', siteId }] });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ email, invitationPending: true, roles: [{ role: 'teacher', siteId }] });

    const [mail] = await waitForMail(email);
    expect(mail.subject).toBe('You are invited to Evenhand');
    expect(mail.text).toContain('Avery Inkwhistle has invited you');
    expect(mail.html).toContain('Set your password');

    const before = await request(t.app).post('/api/auth/login').send({ email, password: 'anything-at-all' });
    expect(before.status).toBe(401);
    const accept = await request(t.app).post('/api/auth/password-reset/confirm').send({ token: linkToken(mail), password: 'my-classroom-password' });
    expect(accept.status).toBe(200);
    const teacher = await signIn(t.app, email, 'my-classroom-password');
    const me = await teacher.agent.get('/api/auth/me');
    expect(me.body.user.roles).toEqual([{ role: 'teacher', siteId, siteName: 'Cinderhaze Elementary' }]);

    expect((await audit(res.body.id)).map((e: { action: string }) => e.action)).toEqual(['user.invited', 'user.invitation_accepted']);
  });

  it('when the e-mail already has an account, then the invitation is refused with 409 and nothing is written', async () => {
    const count = (await t.db.query('SELECT count(*)::int AS n FROM users'))[0].n;
    const res = await admin.agent
      .post('/api/accounts')
      .set('x-csrf-token', admin.csrf)
      .send({ email: 'TEACHER1@evenhand.test', name: 'Duplicate', roles: [{ role: 'reviewer' }] });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('conflict');
    expect((await t.db.query('SELECT count(*)::int AS n FROM users'))[0].n).toBe(count);
  });

  it('when a teacher grant has no site or names an unknown site, then it is refused with field issues', async () => {
    const noSite = await admin.agent
      .post('/api/accounts')
      .set('x-csrf-token', admin.csrf)
      .send({ email: uniqueAddress('x'), name: 'X', roles: [{ role: 'teacher' }] });
    expect(noSite.status).toBe(400);
    expect(noSite.body.error.details.issues).toEqual([{ path: 'roles.0.siteId', message: 'A teacher grant needs a site' }]);
    const unknownSite = await admin.agent
      .post('/api/accounts')
      .set('x-csrf-token', admin.csrf)
      .send({ email: uniqueAddress('y'), name: 'Y', roles: [{ role: 'principal', siteId: '00000000-0000-4000-8000-000000000000' }] });
    expect(unknownSite.status).toBe(400);
    expect(unknownSite.body.error.message).toMatch(/site that does not exist/);
  });

  it('when grants change, then the change is audited with before and after, the live session ends, and the next one has the new roles', async () => {
    const reviewer = await signIn(t.app, 'reviewer@evenhand.test');
    const res = await admin.agent
      .patch(`/api/accounts/${reviewer.userId}`)
      .set('x-csrf-token', admin.csrf)
      .send({ roles: [{ role: 'reviewer' }, { role: 'principal', siteId }] });
    expect(res.status).toBe(200);
    expect(res.body.roles).toEqual([
      { role: 'principal', siteId },
      { role: 'reviewer', siteId: null },
    ]);
    const [event] = await audit(reviewer.userId);
    expect(event).toMatchObject({ action: 'user.roles_changed', actor_id: admin.userId, before: [{ role: 'reviewer', siteId: null }] });
    expect((await reviewer.agent.get('/api/auth/me')).status).toBe(401);
    expect((await (await signIn(t.app, 'reviewer@evenhand.test')).agent.get('/api/auth/me')).body.user.roles).toHaveLength(2);
  });

  it('when an account is deactivated, then its live session stops working at once and it cannot sign in', async () => {
    const teacher = await signIn(t.app, 'teacher2@evenhand.test');
    const res = await admin.agent.patch(`/api/accounts/${teacher.userId}`).set('x-csrf-token', admin.csrf).send({ active: false });
    expect(res.status).toBe(200);
    const me = await teacher.agent.get('/api/auth/me');
    expect(me.status).toBe(401);
    expect(me.body.error.message).toBe('This account is no longer active');
    expect((await request(t.app).post('/api/auth/login').send({ email: 'teacher2@evenhand.test', password: 'evenhand-demo' })).status).toBe(401);
    expect((await audit(teacher.userId)).map((e: { action: string }) => e.action)).toContain('user.activation_changed');
  });

  it('when the admin tries to deactivate themself, then it is refused', async () => {
    const res = await admin.agent.patch(`/api/accounts/${admin.userId}`).set('x-csrf-token', admin.csrf).send({ active: false });
    expect(res.status).toBe(409);
  });

  it('when the user does not exist, then PATCH answers 404', async () => {
    const res = await admin.agent
      .patch('/api/accounts/00000000-0000-4000-8000-000000000000')
      .set('x-csrf-token', admin.csrf)
      .send({ name: 'Nobody' });
    expect(res.status).toBe(404);
  });

  it('when a teacher calls the accounts API, then it is forbidden', async () => {
    const teacher = await signIn(t.app, 'teacher1@evenhand.test');
    const res = await teacher.agent.get('/api/accounts');
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('forbidden');
  });
});
