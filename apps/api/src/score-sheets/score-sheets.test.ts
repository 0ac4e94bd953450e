import { createHash } from 'node:crypto';
import { completionMatrixSchema } from '@evenhand/entities';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, samplePlan, send, type StudySetup } from '../../test/fixtures.js';
import { mailTo, waitForMail } from '../../test/mail.js';

let t: TestApp;
let s: StudySetup;
let teacher1: SignedIn;
let teacher2: SignedIn;
let sheet1: string; // teacher1's baseline sheet
let sheet2: string; // teacher2's baseline sheet
let outcomeSheet1: string;

const storedDigest = async (sheetId: string): Promise<string | null> =>
  (await t.db.query(`SELECT encode(rows_sha256, 'hex') AS digest FROM score_sheets WHERE id = $1`, [sheetId]))[0].digest;

beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
  await enrolClassrooms(s, 1, 2, ['teacher1@evenhand.test', 'teacher2@evenhand.test'], t.db);
  teacher1 = await signIn(t.app, 'teacher1@evenhand.test');
  teacher2 = await signIn(t.app, 'teacher2@evenhand.test');
  const mine = (await teacher1.agent.get(`/api/score-sheets?studyId=${s.studyId}`)).body.items;
  sheet1 = mine.find((x: { waveId: string }) => x.waveId === s.baselineId).id;
  outcomeSheet1 = mine.find((x: { waveId: string }) => x.waveId === s.outcomeId).id;
  sheet2 = (await teacher2.agent.get(`/api/score-sheets?studyId=${s.studyId}&waveId=${s.baselineId}`)).body.items[0].id;
});
afterAll(() => t.close());

const scores = async (sheetId: string) => (await t.db.query(`SELECT student_code, score::float8 AS score, left_study FROM scores WHERE sheet_id = $1 ORDER BY student_code`, [sheetId]));
const put = (who: SignedIn, id: string, rows: object[]) => who.agent.put(`/api/score-sheets/${id}`).set('x-csrf-token', who.csrf).send({ rows });
const upload = (who: SignedIn, id: string, body: Buffer | string, query = '') =>
  who.agent.post(`/api/score-sheets/${id}/upload${query}`).set('x-csrf-token', who.csrf).attach('file', Buffer.isBuffer(body) ? body : Buffer.from(body), 'scores.csv');

describe('teacher entry by form', () => {
  it('lists only the teacher’s own sheets, one per wave and measure', async () => {
    const mine = (await teacher1.agent.get(`/api/score-sheets?studyId=${s.studyId}`)).body;
    expect(mine.total).toBe(2);
    expect(new Set(mine.items.map((x: { teacherName: string }) => x.teacherName))).toEqual(new Set(['Tomasz Thimblewick']));
    expect(mine.items.find((x: { id: string }) => x.id === sheet1)).toMatchObject({ state: 'open', editable: true, minScore: 0, maxScore: 200, summaryAllowed: false });
    expect(mine.items.find((x: { id: string }) => x.id === outcomeSheet1).editable).toBe(false); // its wave has not opened
  });

  it('saves rows as numbers, with attrition marks, and audits every change old → new', async () => {
    const res = await put(teacher1, sheet1, [
      { studentCode: 'LV-0001', score: 81.5 },
      { studentCode: 'LV-0002', score: 64 },
      { studentCode: 'LV-0003', score: null, left: true, note: 'moved away in October' },
    ]);
    expect(res.status).toBe(200);
    expect(res.body.counts).toEqual({ rows: 3, scored: 2, left: 1 });
    expect(await scores(sheet1)).toEqual([
      { student_code: 'LV-0001', score: 81.5, left_study: false },
      { student_code: 'LV-0002', score: 64, left_study: false },
      { student_code: 'LV-0003', score: null, left_study: true },
    ]);
    await put(teacher1, sheet1, [
      { studentCode: 'LV-0001', score: 82 },
      { studentCode: 'LV-0002', score: 64 },
      { studentCode: 'LV-0003', score: null, left: true },
    ]).expect(200);
    const [last] = await t.db.query(`SELECT actor_id, after FROM audit_events WHERE action = 'scores.changed' AND entity_id = $1 ORDER BY at DESC LIMIT 1`, [sheet1]);
    expect(last.actor_id).toBe(teacher1.userId);
    expect(last.after.changes).toEqual([{ studentCode: 'LV-0001', from: { score: 81.5, left: false }, to: { score: 82, left: false } }]);
  });

  it('when rows are out of range or duplicated, then every problem is listed by row and nothing changes', async () => {
    const before = await scores(sheet1);
    const res = await put(teacher1, sheet1, [
      { studentCode: 'LV-0001', score: 250 },
      { studentCode: 'LV-0004', score: null },
      { studentCode: 'lv-0001', score: 70 },
    ]);
    expect(res.status).toBe(400);
    expect(res.body.error.details.rows).toEqual([
      { row: 1, column: 'score', message: "The score 250 is outside the measure's range 0–200" },
      { row: 3, column: 'student_code', message: 'Student code LV-0001 is also on row 1' },
    ]);
    expect(await scores(sheet1)).toEqual(before);
  });

  it('keeps a draft row whose score is still to come, and refuses to submit until it has one', async () => {
    const before = await scores(sheet1);
    await put(teacher1, sheet1, [...before.map((r: { student_code: string; score: number | null; left_study: boolean }) => ({ studentCode: r.student_code, score: r.score, left: r.left_study })), { studentCode: 'LV-0009', score: null }]).expect(200);
    expect((await scores(sheet1)).find((r: { student_code: string }) => r.student_code === 'LV-0009')).toEqual({ student_code: 'LV-0009', score: null, left_study: false });
    const refused = await teacher1.agent.post(`/api/score-sheets/${sheet1}/submit`).set('x-csrf-token', teacher1.csrf);
    expect(refused.status).toBe(409);
    expect(refused.body.error).toMatchObject({ message: '1 student has no score yet: enter a score, or mark the student as having left the study, then submit', details: { studentsWithoutScore: 1 } });
    await put(teacher1, sheet1, before.map((r: { student_code: string; score: number | null; left_study: boolean }) => ({ studentCode: r.student_code, score: r.score, left: r.left_study }))).expect(200);
    expect(await scores(sheet1)).toEqual(before);
  });

  it('when a score is not a number or a code looks like a name, then it answers 400', async () => {
    const text = await put(teacher1, sheet1, [{ studentCode: 'LV-0001', score: 'eighty' }]);
    expect(text.status).toBe(400);
    const name = await put(teacher1, sheet1, [{ studentCode: 'Maria Lopez', score: 50 }]);
    expect(name.status).toBe(400);
    expect(name.body.error.details.issues[0].message).toMatch(/not a name/);
  });

  it('when a code already belongs to another classroom of the study, then it is refused without naming that classroom', async () => {
    const res = await put(teacher2, sheet2, [{ studentCode: 'LV-0002', score: 50 }]);
    expect(res.status).toBe(400);
    expect(res.body.error.details.rows[0].message).toBe('Student code LV-0002 cannot be used in this classroom');
    const dry = await upload(teacher2, sheet2, 'student_code,score\nLV-0002,50\n', '?dryRun=true');
    expect(dry.status).toBe(400);
    expect(dry.body.error.details.rows).toEqual([{ row: 2, column: 'student_code', message: 'Student code LV-0002 cannot be used in this classroom' }]);
    expect(JSON.stringify(dry.body)).not.toMatch(/Room 1|another classroom/);
  });

  it('when a code differs from another classroom’s only by letter case or spaces, then it is the same student: refused, and codes are stored upper-case', async () => {
    for (const code of ['lv-0002', ' Lv-0002 ']) {
      const res = await put(teacher2, sheet2, [{ studentCode: code, score: 50 }]);
      expect(res.status).toBe(400);
      expect(res.body.error.details.rows[0].message).toBe('Student code LV-0002 cannot be used in this classroom');
    }
    const upload1 = await upload(teacher2, sheet2, 'student_code,score\nlv-0002,50\n', '?dryRun=true');
    expect(upload1.body.error.details.rows).toEqual([{ row: 2, column: 'student_code', message: 'Student code LV-0002 cannot be used in this classroom' }]);
    await put(teacher2, sheet2, [{ studentCode: 'case-abc', score: 50 }]).expect(200);
    expect(await scores(sheet2)).toEqual([{ student_code: 'CASE-ABC', score: 50, left_study: false }]);
    const [registered] = await t.db.query(`SELECT student_code FROM students WHERE study_id = $1 AND upper(student_code) = 'CASE-ABC'`, [s.studyId]);
    expect(registered.student_code).toBe('CASE-ABC');
    expect((await put(teacher1, sheet1, [...(await scores(sheet1)).map((r: { student_code: string; score: number | null; left_study: boolean }) => ({ studentCode: r.student_code, score: r.score, left: r.left_study })), { studentCode: 'CASE-ABC', score: 51 }])).status).toBe(400);
    // The database holds to the same rule, whoever writes.
    await expect(t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT study_id, 'case-abd', classroom_id FROM score_sheets WHERE id = $1`, [sheet2])).rejects.toThrow(/students_code_normalised/);
    await put(teacher2, sheet2, []).expect(200);
  });

  it('when a teacher opens or writes another teacher’s sheet, then it answers 404; a coordinator cannot enter scores', async () => {
    expect((await teacher2.agent.get(`/api/score-sheets/${sheet1}`)).status).toBe(404);
    expect((await put(teacher2, sheet1, [{ studentCode: 'X1', score: 1 }])).status).toBe(404);
    expect((await put(s.coordinator, sheet1, [{ studentCode: 'X1', score: 1 }])).status).toBe(403);
  });

  it('when the wave has not opened, then writing answers 409', async () => {
    const res = await put(teacher1, outcomeSheet1, [{ studentCode: 'LV-0001', score: 90 }]);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/wave is closed/);
  });
});

describe('the sheet’s workflow', () => {
  it('submit → return with reasons → fix → submit → accept; then it is read-only', async () => {
    const submitted = await send(teacher1, 'post', `/api/score-sheets/${sheet1}/submit`, {}, 200);
    expect(submitted.state).toBe('submitted');
    expect((await put(teacher1, sheet1, [{ studentCode: 'LV-0001', score: 1 }])).status).toBe(409);
    expect((await teacher1.agent.post(`/api/score-sheets/${sheet1}/accept`).set('x-csrf-token', teacher1.csrf)).status).toBe(403);
    const returned = await send(s.coordinator, 'post', `/api/score-sheets/${sheet1}/return`, { reasons: 'LV-0002 looks like a typing slip; please check.' }, 200);
    expect(returned).toMatchObject({ state: 'returned', returnReasons: 'LV-0002 looks like a typing slip; please check.', editable: true });
    expect(await storedDigest(sheet1)).not.toBeNull(); // stored at submit; returning does not change the rows
    await put(teacher1, sheet1, [
      { studentCode: 'LV-0001', score: 82 },
      { studentCode: 'LV-0002', score: 46 },
      { studentCode: 'LV-0003', score: null, left: true },
    ]).expect(200);
    expect(await storedDigest(sheet1)).toBeNull(); // the write forgot it
    await send(teacher1, 'post', `/api/score-sheets/${sheet1}/submit`, {}, 200);
    const accepted = await send(s.coordinator, 'post', `/api/score-sheets/${sheet1}/accept`, {}, 200);
    expect(accepted).toMatchObject({ state: 'accepted', editable: false });
    // The digest runs hash: SHA-256 of the scored rows as "code,score" lines in byte order of code (the leaver has no score).
    expect(await storedDigest(sheet1)).toBe(createHash('sha256').update('LV-0001,82\nLV-0002,46').digest('hex'));
    const late = await put(teacher1, sheet1, [{ studentCode: 'LV-0001', score: 99 }]);
    expect(late.status).toBe(409);
    expect(late.body.error.message).toBe('This score sheet was accepted and is read-only');
  });

  it('when a sheet is locked, then the API and the database both refuse changes', async () => {
    await t.db.query(`UPDATE score_sheets SET locked = true WHERE id = $1`, [sheet1]);
    const res = await s.coordinator.agent.post(`/api/score-sheets/${sheet1}/return`).set('x-csrf-token', s.coordinator.csrf).send({ reasons: 'Trying to reopen it' });
    expect(res.status).toBe(409);
    await expect(t.db.query(`UPDATE scores SET score = 1 WHERE sheet_id = $1`, [sheet1])).rejects.toThrow(/locked by a confirmatory run/);
    await expect(t.db.query(`DELETE FROM scores WHERE sheet_id = $1`, [sheet1])).rejects.toThrow(/locked/);
    await expect(t.db.query(`UPDATE score_sheets SET state = 'open' WHERE id = $1`, [sheet1])).rejects.toThrow(/locked/);
  });
});

describe('CSV upload', () => {
  const header = 'student_code;score;left;note\r\n';

  it('checks a dry run without writing, then writes it; UTF-8 BOM, semicolons, CRLF and decimal commas are understood', async () => {
    const csv = `\uFEFF${header}LV-0101;71,5;;\r\nLV-0102;66;no;\r\nLV-0103;;yes;left in March\r\n`;
    const dry = await upload(teacher2, sheet2, csv, '?dryRun=true');
    expect(dry.status).toBe(200);
    expect(dry.body).toMatchObject({ dryRun: true, rows: 3, sheet: null });
    expect(dry.body.preview[0]).toEqual({ studentCode: 'LV-0101', score: 71.5, left: false, note: '' });
    expect(await scores(sheet2)).toEqual([]);
    const real = await upload(teacher2, sheet2, csv);
    expect(real.status).toBe(200);
    expect(real.body.sheet.counts).toEqual({ rows: 3, scored: 2, left: 1 });
  });

  it('when the sheet has rows, then a re-upload needs confirmation and then replaces them', async () => {
    const csv = `student_code,score\nLV-0101,70\n`;
    const unconfirmed = await upload(teacher2, sheet2, csv);
    expect(unconfirmed.status).toBe(409);
    expect(unconfirmed.body.error.details).toEqual({ needsConfirmation: true });
    const confirmed = await upload(teacher2, sheet2, csv, '?replace=true');
    expect(confirmed.status).toBe(200);
    expect(await scores(sheet2)).toEqual([{ student_code: 'LV-0101', score: 70, left_study: false }]);
  });

  it('lists every bad line by its line number, keeps formulas as invalid values, and writes nothing', async () => {
    const before = await scores(sheet2);
    const csv = 'student_code,score\nLV-0201,"=HYPERLINK(""http://x"",""y"")"\nLV-0202,abc\nLV-0203,-5\nLV-0204,50\nLV-0204,51\n';
    const res = await upload(teacher2, sheet2, csv, '?replace=true');
    expect(res.status).toBe(400);
    expect(res.body.error.details.rows).toEqual([
      { row: 2, column: 'score', message: 'This looks like a spreadsheet formula, not a score' },
      { row: 3, column: 'score', message: '“abc” is not a number' },
      { row: 4, column: 'score', message: "The score -5 is outside the measure's range 0–200" },
      { row: 6, column: 'student_code', message: 'Student code LV-0204 is also on row 5' },
    ]);
    expect(await scores(sheet2)).toEqual(before);
  });

  it.each([
    { label: 'empty', body: '', status: 400, message: /empty/ },
    { label: 'header only', body: 'student_code,score\n', status: 400, message: /no data rows/ },
    { label: 'missing the score column', body: 'student_code,points\nA1,4\n', status: 400, message: /lacks the column\(s\) score/ },
    { label: 'binary', body: Buffer.from([0xff, 0xd8, 0xff, 0x00, 0x10]), status: 400, message: /binary/ },
    { label: 'not UTF-8', body: Buffer.from([0x73, 0x63, 0x6f, 0x72, 0x65, 0xe9, 0x0a]), status: 400, message: /not UTF-8/ },
    { label: 'over 10 MB', body: Buffer.alloc(10 * 1024 * 1024 + 1, 'a'), status: 413, message: /larger than the 10 MB limit/ },
  ])('when the file is $label, then it answers $status and writes nothing', async ({ body, status, message }) => {
    const before = await scores(sheet2);
    const res = await upload(teacher2, sheet2, body, '?replace=true');
    expect(res.status).toBe(status);
    expect(res.body.error.message).toMatch(message);
    expect(await scores(sheet2)).toEqual(before);
  });

  it('when the plan does not allow class summaries, then a summary is refused', async () => {
    const res = await teacher2.agent.put(`/api/score-sheets/${sheet2}/summary`).set('x-csrf-token', teacher2.csrf).send({ summary: { n: 20, mean: 50, sd: 10 } });
    expect(res.status).toBe(409);
  });

  it('when the plan allows class summaries, then the sheet says so and takes one', async () => {
    const other = await createStudy(t.app, { seal: false });
    await send(other.lead, 'put', `/api/studies/${other.studyId}/plan`, { ...samplePlan(other.measureId, other.outcomeId), summaryEntryAllowed: true }, 200);
    await send(other.lead, 'post', `/api/studies/${other.studyId}/plan/seal`, {}, 200);
    await enrolClassrooms(other, 1, 1, ['teacher3@evenhand.test'], t.db);
    const teacher3 = await signIn(t.app, 'teacher3@evenhand.test');
    const [sheet] = (await teacher3.agent.get(`/api/score-sheets?studyId=${other.studyId}&waveId=${other.baselineId}`)).body.items;
    expect(sheet).toMatchObject({ summaryAllowed: true, mode: 'rows' });
    const saved = await send(teacher3, 'put', `/api/score-sheets/${sheet.id}/summary`, { summary: { n: 21, mean: 88.5, sd: 14 } }, 200);
    expect(saved).toMatchObject({ mode: 'summary', summary: { n: 21, mean: 88.5, sd: 14 }, counts: { rows: 21, scored: 21, left: 0 } });
  });
});

describe('the coordinator’s completion matrix and reminders', () => {
  it('shows every classroom × wave × measure with its state and counts', async () => {
    const res = await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`);
    expect(res.status).toBe(200);
    expect(completionMatrixSchema.parse(res.body)).toEqual(res.body);
    expect(res.body.waves.map((w: { name: string }) => w.name)).toEqual(['Autumn', 'Spring']);
    expect(res.body.rows).toHaveLength(2);
    const room2 = res.body.rows.find((r: { teacherName: string }) => r.teacherName === 'Priya Saltmarrow');
    expect(room2.cells.find((c: { waveId: string }) => c.waveId === s.baselineId)).toMatchObject({ state: 'open', rows: 1 });
  });

  it('sends one e-mail per teacher listing what is missing in waves that have begun', async () => {
    const before = (await mailTo('teacher2@evenhand.test')).length;
    const res = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/reminders`, {}, 200);
    // teacher1's baseline sheet is accepted; teacher2's is open; the outcome wave has not begun.
    expect(res).toEqual({ teachersReminded: 1, sheetsMissing: 1 });
    const mails = await waitForMail('teacher2@evenhand.test', before + 1);
    const mail = mails[mails.length - 1];
    expect(mail.subject).toBe('Score sheets waiting: Paired reading in grade 4');
    expect(mail.text).toContain('Room 2');
    expect(mail.text).toContain('Autumn, Reading fluency');
  });
});
