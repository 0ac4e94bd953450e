import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, send, type StudySetup } from '../../test/fixtures.js';
import { linkToken, mailTo, uniqueAddress, waitForMail, type CaughtMail } from '../../test/mail.js';

let t: TestApp;
let s: StudySetup;
beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
});
afterAll(() => t.close());

const count = async (table: string) => (await t.db.query(`SELECT count(*)::int AS n FROM ${table}`))[0].n as number;

describe('sites', () => {
  it('when a site is enrolled with a new principal, then the principal is invited, scoped to the site, and the study is enrolling', async () => {
    const email = uniqueAddress('principal');
    const site = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/sites`, { name: 'Quarry Lane Elementary', code: 'qle', principal: { email, name: 'Ines Marrow' } }, 201);
    expect(site).toMatchObject({ code: 'QLE', principal: { email, invitationPending: true } });
    const [mail] = await waitForMail(email);
    await request(t.app).post('/api/auth/password-reset/confirm').send({ token: linkToken(mail), password: 'principal-password' }).expect(200);
    const principal = await signIn(t.app, email, 'principal-password');
    expect((await principal.agent.get('/api/auth/me')).body.user.roles).toEqual([{ role: 'principal', siteId: site.id, siteName: 'Quarry Lane Elementary' }]);
    expect((await principal.agent.get(`/api/sites/${site.id}`)).status).toBe(200);
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}`)).body.status).toBe('enrolling');
  });

  it('when a site code is already used, then it answers 409 and nothing is written', async () => {
    const before = await count('sites');
    const res = await s.coordinator.agent.post(`/api/studies/${s.studyId}/sites`).set('x-csrf-token', s.coordinator.csrf).send({ name: 'Another', code: 'ALD' });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe('Site code ALD is already used by Alderquill Elementary');
    expect(await count('sites')).toBe(before);
  });

  it('when an existing district site is enrolled twice, then the second answers 409', async () => {
    const [ald] = await t.db.query(`SELECT id FROM sites WHERE code = 'ALD'`);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/sites`, { siteId: ald.id }, 201);
    const again = await s.coordinator.agent.post(`/api/studies/${s.studyId}/sites`).set('x-csrf-token', s.coordinator.csrf).send({ siteId: ald.id });
    expect(again.status).toBe(409);
  });

  it('when a principal asks for another school, then it answers 404', async () => {
    const [brk] = await t.db.query(`SELECT id FROM sites WHERE code = 'BRK'`);
    const principal1 = await signIn(t.app, 'principal1@evenhand.test');
    expect((await principal1.agent.get(`/api/sites/${brk.id}`)).status).toBe(404);
  });
});

describe('classrooms', () => {
  it('when a classroom is added with a new teacher, then the teacher is invited and, once signed in, sees only that classroom', async () => {
    const { classrooms, cohortId } = await enrolClassrooms(s, 1, 2);
    const [mine] = classrooms;
    const [mail] = await waitForMail(mine.teacherEmail);
    expect(mail.subject).toBe('You are invited to Evenhand');
    await request(t.app).post('/api/auth/password-reset/confirm').send({ token: linkToken(mail), password: 'teacher-password' }).expect(200);
    const teacher = await signIn(t.app, mine.teacherEmail, 'teacher-password');
    const seen = await teacher.agent.get(`/api/studies/${s.studyId}/classrooms`);
    expect(seen.status).toBe(200);
    expect(seen.body.items.map((c: { id: string }) => c.id)).toEqual([mine.id]);
    expect((await teacher.agent.get('/api/studies')).body.items.map((x: { id: string }) => x.id)).toEqual([s.studyId]);
    expect((await teacher.agent.get(`/api/studies/${s.studyId}/sites`)).status).toBe(403);
    expect(cohortId).toBeTruthy();
  });

  it('when a teacher asks for a study without their classrooms, then it answers 404', async () => {
    const other = await createStudy(t.app);
    const teacher = await signIn(t.app, 'teacher1@evenhand.test');
    expect((await teacher.agent.get(`/api/studies/${other.studyId}`)).status).toBe(404);
    expect((await teacher.agent.get(`/api/studies/${other.studyId}/classrooms`)).status).toBe(404);
  });

  it('when a classroom has no teacher or a site outside the study, then it is refused with field messages', async () => {
    const [brk] = await t.db.query(`SELECT id FROM sites WHERE code = 'BRK'`);
    const [cohort] = await t.db.query(`SELECT id FROM cohorts WHERE study_id = $1`, [s.studyId]);
    const noTeacher = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms`)
      .set('x-csrf-token', s.coordinator.csrf)
      .send({ siteId: brk.id, cohortId: cohort.id, name: 'Room 9', grade: '4', expectedSize: 20 });
    expect(noTeacher.status).toBe(400);
    expect(noTeacher.body.error.details.issues.map((i: { path: string }) => i.path)).toEqual(['teacher']);
    const notEnrolled = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms`)
      .set('x-csrf-token', s.coordinator.csrf)
      .send({ siteId: brk.id, cohortId: cohort.id, name: 'Room 9', grade: '4', expectedSize: 20, teacher: { email: uniqueAddress('t'), name: 'T' } });
    expect(notEnrolled.status).toBe(400);
    expect(notEnrolled.body.error.details.issues).toEqual([{ path: 'siteId', message: 'Enrol this site in the study first' }]);
  });

  it('imports classrooms from a CSV with a BOM, semicolons and CRLF, creating the cohort it names', async () => {
    const [ald] = await t.db.query(`SELECT code FROM sites WHERE code = 'ALD'`);
    const csv =
      '\uFEFFsite_code;cohort;classroom;grade;expected_size;teacher_email;teacher_name\r\n' +
      `${ald.code};Grade 5, 2026–27;Room 12;5;24;${uniqueAddress('csv')};Olu Baptiste\r\n` +
      `${ald.code};Grade 5, 2026–27;Room 14;5;23;teacher1@evenhand.test;Tomasz Thimblewick\r\n`;
    const res = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms/import`)
      .set('x-csrf-token', s.coordinator.csrf)
      .attach('file', Buffer.from(csv), 'classrooms.csv');
    expect(res.status).toBe(201);
    expect(res.body.created).toBe(2);
    const room14 = res.body.classrooms.find((c: { name: string }) => c.name === 'Room 14');
    expect(room14).toMatchObject({ cohortName: 'Grade 5, 2026–27', expectedSize: 23, teacher: { email: 'teacher1@evenhand.test' } });
  });

  it('when one CSV row is bad, then every problem is listed by row and nothing is written', async () => {
    const before = await count('classrooms');
    const csv =
      'site_code,cohort,classroom,grade,expected_size,teacher_email,teacher_name\n' +
      `ALD,Grade 4,Room 30,4,22,${uniqueAddress('ok')},Fine Row\n` +
      `NOPE,Grade 4,Room 31,4,twenty,not-an-email,Bad Row\n` +
      `ALD,Grade 4,Room 30,4,22,${uniqueAddress('dup')},Duplicate Row\n`;
    const res = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms/import`)
      .set('x-csrf-token', s.coordinator.csrf)
      .attach('file', Buffer.from(csv), 'classrooms.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.details.rows).toEqual([
      { row: 3, column: 'expected_size', message: 'expected_size is not a number' },
      { row: 3, column: 'teacher_email', message: 'Enter a valid e-mail address' },
      { row: 4, column: 'classroom', message: 'Same site and classroom as row 2' },
    ]);
    expect(await count('classrooms')).toBe(before);
  });

  it.each([
    { label: 'an empty file', body: '', message: /empty/ },
    { label: 'a header only', body: 'site_code,cohort,classroom,grade,expected_size,teacher_email,teacher_name\n', message: /no data rows/ },
    { label: 'a missing column', body: 'site_code,cohort,classroom\nALD,G4,R1\n', message: /lacks the column\(s\) grade, expected_size, teacher_email, teacher_name/ },
    { label: 'a binary file', body: Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x00, 0x00]), message: /binary/ },
    { label: '10 000 columns', body: `${Array.from({ length: 10_000 }, (_, i) => `c${i}`).join(',')}\n1\n`, message: /more than 200 columns/ },
  ])('when the CSV is $label, then it answers 400 and writes nothing', async ({ body, message }) => {
    const before = await count('classrooms');
    const res = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms/import`)
      .set('x-csrf-token', s.coordinator.csrf)
      .attach('file', Buffer.isBuffer(body) ? body : Buffer.from(body), 'classrooms.csv');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(message);
    expect(await count('classrooms')).toBe(before);
  });

  it('when the CSV is over the size limit, then it answers 413', async () => {
    const res = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms/import`)
      .set('x-csrf-token', s.coordinator.csrf)
      .attach('file', Buffer.alloc(1024 * 1024 + 10, 'a'), 'big.csv');
    expect(res.status).toBe(413);
    expect(res.body.error.message).toMatch(/larger than the 1 MB limit/);
  });
});

describe('naming people for school roles', () => {
  const acceptLink = (text: string) => decodeURIComponent(text.match(/invitations\/accept\?token=([A-Za-z0-9_%-]+)/)![1]);
  let siteId: string;
  let siteName: string;
  let cohortId: string;
  beforeAll(async () => {
    const code = `N${Math.random().toString(36).slice(2, 7).toUpperCase()}`;
    siteName = `Naming School ${code}`;
    siteId = (await send(s.coordinator, 'post', `/api/studies/${s.studyId}/sites`, { name: siteName, code }, 201)).id;
    cohortId = (await send(s.coordinator, 'post', `/api/studies/${s.studyId}/cohorts`, { name: `Naming cohort ${code}` }, 201)).id;
  });
  const room = (name: string, email: string) => ({ siteId, cohortId, name, grade: '4', expectedSize: 20, teacher: { email, name: 'Named Person' } });
  const grants = async (email: string) =>
    (await t.db.query(`SELECT g.role, g.site_id FROM role_grants g JOIN users u ON u.id = g.user_id WHERE u.email = $1 ORDER BY g.role`, [email])).map((g: { role: string; site_id: string | null }) => `${g.role}@${g.site_id ?? '-'}`);

  it('refuses to name the coordinator themselves or an account with the reviewer role, with 409, and changes nothing', async () => {
    const before = await count('classrooms');
    const self = await s.coordinator.agent.post(`/api/studies/${s.studyId}/classrooms`).set('x-csrf-token', s.coordinator.csrf).send(room('Self Room', 'coordinator@evenhand.test'));
    expect(self.status).toBe(409);
    expect(self.body.error.message).toBe('You cannot name yourself as teacher; name the person who will do it');
    const reviewer = await s.coordinator.agent.post(`/api/studies/${s.studyId}/classrooms`).set('x-csrf-token', s.coordinator.csrf).send(room('Review Room', 'reviewer@evenhand.test'));
    expect(reviewer.status).toBe(409);
    expect(reviewer.body.error).toMatchObject({ message: 'reviewer@evenhand.test has the reviewer role, which cannot also be a school’s teacher; name someone else', details: { issues: [{ path: 'teacher.email' }] } });
    const principal = await s.coordinator.agent.patch(`/api/sites/${siteId}`).set('x-csrf-token', s.coordinator.csrf).send({ principal: { email: 'reviewer@evenhand.test', name: 'R' } });
    expect(principal.status).toBe(409);
    expect(await count('classrooms')).toBe(before);
    expect(await grants('coordinator@evenhand.test')).toEqual(['coordinator@-']);
    expect(await grants('reviewer@evenhand.test')).toEqual(['reviewer@-']);
  });

  it('when an existing account is named teacher of a second classroom while its offer is open, then the first link stands and no second e-mail goes out', async () => {
    const email = 'teacher4@evenhand.test';
    const offered = async () => (await mailTo(email)).filter((m) => m.subject === `Accept your role at ${siteName}`);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/classrooms`, room('Twin Room A', email), 201);
    await expect.poll(async () => (await offered()).length, { timeout: 30_000 }).toBe(1);
    const second = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/classrooms`, room('Twin Room B', email), 201);
    expect(second.teacher).toMatchObject({ email, invitationPending: true });
    const [pending] = await t.db.query(
      `SELECT count(*)::int AS n FROM role_invitations i JOIN users u ON u.id = i.user_id WHERE u.email = $1 AND i.site_id = $2 AND i.state = 'pending'`,
      [email, siteId],
    );
    expect(pending.n).toBe(1);
    // The mail job has had its chance to send a second message; the first link still works.
    await new Promise((r) => setTimeout(r, 1500));
    const mails = await offered();
    expect(mails).toHaveLength(1);
    const teacher = await signIn(t.app, email);
    const accepted = await teacher.agent.post('/api/role-invitations/accept').set('x-csrf-token', teacher.csrf).send({ token: acceptLink(mails[0].text) });
    expect(accepted.status).toBe(200);
  });

  it('when an existing account is named teacher, then it gets a link and no role until it accepts; replacing it removes the role', async () => {
    const email = 'teacher3@evenhand.test';
    const before = await grants(email);
    const classroom = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/classrooms`, room('Offer Room', email), 201);
    expect(classroom.teacher).toMatchObject({ email, invitationPending: true });
    expect(await grants(email)).toEqual(before);
    let mail: CaughtMail | undefined;
    await expect.poll(async () => (mail = (await mailTo(email)).find((m) => m.subject === `Accept your role at ${siteName}`)), { timeout: 30_000 }).toBeTruthy();
    expect(mail!.text).toContain(`has named you teacher at ${siteName}`);

    // Named but not accepted: the classroom's sheets are not theirs yet.
    const teacher = await signIn(t.app, email);
    expect((await teacher.agent.get(`/api/score-sheets?studyId=${s.studyId}`)).status).toBe(404);
    // Someone else's link does not work for this account, and the link works once.
    const other = await signIn(t.app, 'teacher4@evenhand.test');
    expect((await other.agent.post('/api/role-invitations/accept').set('x-csrf-token', other.csrf).send({ token: acceptLink(mail!.text) })).status).toBe(404);
    const accepted = await teacher.agent.post('/api/role-invitations/accept').set('x-csrf-token', teacher.csrf).send({ token: acceptLink(mail!.text) });
    expect(accepted.status).toBe(200);
    expect(accepted.body).toEqual({ role: 'teacher', siteId, siteName });
    expect((await teacher.agent.post('/api/role-invitations/accept').set('x-csrf-token', teacher.csrf).send({ token: acceptLink(mail!.text) })).status).toBe(404);
    expect(await grants(email)).toContain(`teacher@${siteId}`);
    const sheets = await teacher.agent.get(`/api/score-sheets?studyId=${s.studyId}`);
    expect(sheets.body.items.map((x: { classroomId: string }) => x.classroomId)).toContain(classroom.id);

    // Another teacher named for the classroom: the first loses the school's teacher role and its session ends.
    await send(s.coordinator, 'patch', `/api/classrooms/${classroom.id}`, { teacher: { email: uniqueAddress('successor'), name: 'Successor Teacher' } }, 200);
    expect(await grants(email)).toEqual(before);
    expect((await teacher.agent.get('/api/auth/me')).status).toBe(401);
  });
});
