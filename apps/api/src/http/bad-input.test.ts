import { randomBytes } from 'node:crypto';
import jwt from 'jsonwebtoken';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, send, type StudySetup } from '../../test/fixtures.js';

let t: TestApp;
let s: StudySetup;
let admin: SignedIn;
let teacher: SignedIn;
let sheetId: string;
let classrooms: { id: string }[];

const NUL = '\u0000';
const LONE = '\uD800';

beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
  ({ classrooms } = await enrolClassrooms(s, 1, 2, ['teacher1@evenhand.test', 'teacher2@evenhand.test'], t.db));
  admin = await signIn(t.app, 'admin@evenhand.test');
  teacher = await signIn(t.app, 'teacher1@evenhand.test');
  const mine = (await teacher.agent.get(`/api/score-sheets?studyId=${s.studyId}`)).body.items;
  sheetId = mine.find((x: { waveId: string }) => x.waveId === s.baselineId).id;
});
afterAll(() => t.close());

const auditCount = async () => (await t.db.query(`SELECT count(*)::int AS n FROM audit_events`))[0].n as number;

describe('text that is not plain text', () => {
  it('refuses a NUL character in any text field with a 400 that names the field, and changes nothing', async () => {
    const before = await auditCount();
    const cases: [SignedIn, 'post' | 'put' | 'patch', string, object, string][] = [
      [s.lead, 'post', '/api/studies', { title: `Reading${NUL}`, intervention: 'Paired reading', comparisonCondition: 'Usual teaching' }, 'title'],
      [s.lead, 'patch', `/api/studies/${s.studyId}`, { intervention: `Paired ${NUL} reading` }, 'intervention'],
      [s.coordinator, 'patch', `/api/classrooms/${classrooms[0].id}`, { name: `Room${NUL}` }, 'name'],
      [s.coordinator, 'post', `/api/studies/${s.studyId}/cohorts`, { name: `Grade 5${NUL}` }, 'name'],
      [admin, 'post', '/api/accounts', { email: 'nul.test@example.org', name: `Ada${NUL}`, roles: [{ role: 'reviewer' }] }, 'name'],
      [teacher, 'put', `/api/score-sheets/${sheetId}`, { rows: [{ studentCode: 'NU-1', score: 50, note: `absent${NUL}` }] }, 'rows.0.note'],
    ];
    for (const [who, method, url, body, field] of cases) {
      const res = await who.agent[method](url).set('x-csrf-token', who.csrf).send(body);
      expect(res.status, `${method} ${url}`).toBe(400);
      expect(res.body.error.code).toBe('validation_failed');
      expect(res.body.error.message).toContain(field);
      expect(res.body.error.details.issues.map((i: { path: string }) => i.path)).toContain(field);
    }
    expect(await auditCount()).toBe(before);
  });

  it('refuses a NUL character in a score sheet’s CSV upload (a note, say) before anything is copied', async () => {
    const res = await teacher.agent
      .post(`/api/score-sheets/${sheetId}/upload`)
      .set('x-csrf-token', teacher.csrf)
      .attach('file', Buffer.from(`student_code,score,left,note\nNU-1,50,no,fine\nNU-2,51,no,bad${NUL}note\n`), 'scores.csv');
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({ code: 'validation_failed', message: 'This does not look like a CSV file (it contains binary data)' });
    expect((await t.db.query(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1`, [sheetId]))[0].n).toBe(0);
  });

  it('refuses a lone UTF-16 surrogate in fields that go into the audit trail', async () => {
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'bad-input', commit: true }, 201);
    const before = await auditCount();
    const reassign = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/draw/reassignments`)
      .set('x-csrf-token', s.coordinator.csrf)
      .send({ classroomId: classrooms[0].id, arm: 'comparison', reason: `The teacher left ${LONE} mid-year.` });
    expect(reassign.status).toBe(400);
    expect(reassign.body.error.message).toContain('reason');
    const rename = await s.lead.agent.patch(`/api/studies/${s.studyId}`).set('x-csrf-token', s.lead.csrf).send({ title: `Paired reading ${LONE}` });
    expect(rename.status).toBe(400);
    expect(rename.body.error.message).toContain('title');
    expect(await auditCount()).toBe(before);
    // A well-formed pair (an emoji) is text.
    expect((await send(s.lead, 'patch', `/api/studies/${s.studyId}`, { title: 'Paired reading 📚' }, 200)).title).toBe('Paired reading 📚');
  });
});

describe('clashes and forged tokens', () => {
  it('answers 409 when a classroom is renamed to a name its school already has', async () => {
    const [first] = await t.db.query(`SELECT name FROM classrooms WHERE id = $1`, [classrooms[0].id]);
    const res = await s.coordinator.agent.patch(`/api/classrooms/${classrooms[1].id}`).set('x-csrf-token', s.coordinator.csrf).send({ name: first.name.toUpperCase() });
    expect(res.status).toBe(409);
    expect(res.body.error).toEqual({ code: 'conflict', message: 'This school already has a classroom with this name' });
  });

  it('makes one account from 20 simultaneous invitations of one e-mail address; the others get 409, none 500', async () => {
    const email = `race-${randomBytes(4).toString('hex')}@example.org`;
    const answers = await Promise.all(
      Array.from({ length: 20 }, () => admin.agent.post('/api/accounts').set('x-csrf-token', admin.csrf).send({ email, name: 'Rae Simultaneous', roles: [{ role: 'reviewer' }] })),
    );
    const statuses = answers.map((a) => a.status).sort();
    expect(statuses.filter((x) => x === 201)).toHaveLength(1);
    expect(statuses.filter((x) => x === 409)).toHaveLength(19);
    expect(answers.find((a) => a.status === 409)!.body.error.message).toBe('An account with this e-mail address already exists');
    expect((await t.db.query(`SELECT count(*)::int AS n FROM users WHERE email = $1`, [email]))[0].n).toBe(1);
  });

  it('answers 401 to a correctly signed token whose subject is not a user id', async () => {
    const now = Math.floor(Date.now() / 1000);
    for (const subject of ['admin', '-'.repeat(36), 'ffffffff-ffff-ffff-ffff-ffffffffffffx', `${'0'.repeat(8)}-0000-0000-0000-${'0'.repeat(12)}`]) {
      const token = jwt.sign({ jti: randomBytes(8).toString('hex'), sv: 0, auth_time: now, exp: now + 600 }, t.config.jwtSecret, { algorithm: 'HS256', subject });
      const res = await request(t.app).get('/api/auth/me').set('authorization', `Bearer ${token}`);
      expect(res.status, subject).toBe(401);
      expect(res.body.error.code).toBe('unauthenticated');
    }
  });
});
