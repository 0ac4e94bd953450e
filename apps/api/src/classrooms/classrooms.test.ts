import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, send, type StudySetup } from '../../test/fixtures.js';
import { linkToken, uniqueAddress, waitForMail } from '../../test/mail.js';

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
