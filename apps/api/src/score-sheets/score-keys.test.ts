import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, type StudySetup } from '../../test/fixtures.js';

// The rules a score write must keep, checked set-wise by the database (see the migration
// set-wise-score-keys) and by the write path: one classroom per student code, codes released when no
// sheet uses them, and large sheets written in batches with every problem numbered by its line.
let t: TestApp;
let s: StudySetup;
let teacher1: SignedIn;
let teacher2: SignedIn;
let sheet1: string;
let sheet2: string;

beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
  await enrolClassrooms(s, 1, 2, ['teacher1@evenhand.test', 'teacher2@evenhand.test'], t.db);
  teacher1 = await signIn(t.app, 'teacher1@evenhand.test');
  teacher2 = await signIn(t.app, 'teacher2@evenhand.test');
  sheet1 = (await teacher1.agent.get(`/api/score-sheets?studyId=${s.studyId}&waveId=${s.baselineId}`)).body.items[0].id;
  sheet2 = (await teacher2.agent.get(`/api/score-sheets?studyId=${s.studyId}&waveId=${s.baselineId}`)).body.items[0].id;
});
afterAll(() => t.close());

const put = (who: SignedIn, id: string, rows: object[]) => who.agent.put(`/api/score-sheets/${id}`).set('x-csrf-token', who.csrf).send({ rows });
const upload = (who: SignedIn, id: string, csv: string, query = '') =>
  who.agent.post(`/api/score-sheets/${id}/upload${query}`).set('x-csrf-token', who.csrf).attach('file', Buffer.from(csv), 'scores.csv');
const count = async (sql: string, params: unknown[]) => (await t.db.query(sql, params))[0].n as number;
const sheetKeys = async (id: string) => (await t.db.query(`SELECT * FROM score_sheets WHERE id = $1`, [id]))[0];

describe('the database keeps the score keys', () => {
  it('when a score names a code not registered to its classroom, or keys that are not its sheet’s, then direct SQL fails', async () => {
    await put(teacher1, sheet1, [{ studentCode: 'KEY-001', score: 50 }]).expect(200);
    const k = await sheetKeys(sheet1);
    const other = await sheetKeys(sheet2);
    const insert = (code: string, classroomId: string) =>
      t.db.query(
        `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score) VALUES ($1, $2, $3, $4, $5, $6, 10)`,
        [k.id, k.study_id, classroomId, k.wave_id, k.measure_id, code],
      );
    await expect(insert('NOT-REGISTERED', k.classroom_id)).rejects.toThrow(/not registered to the classroom/);
    await expect(insert('KEY-002', other.classroom_id)).rejects.toThrow(/keys it does not have/);
    expect(await count(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1`, [sheet1])).toBe(1);
  });

  it('when a registered code still has scores, then deleting it or its sheet fails', async () => {
    await expect(t.db.query(`DELETE FROM students WHERE study_id = $1 AND student_code = 'KEY-001'`, [s.studyId])).rejects.toThrow(/still has scores/);
    await expect(t.db.query(`DELETE FROM score_sheets WHERE id = $1`, [sheet1])).rejects.toThrow(/still has scores/);
    await expect(t.db.query(`UPDATE score_sheets SET classroom_id = (SELECT classroom_id FROM score_sheets WHERE id = $2) WHERE id = $1`, [sheet1, sheet2])).rejects.toThrow(
      /cannot change/,
    );
  });
});

describe('one classroom per student code', () => {
  it('when a code leaves the last sheet of its classroom, then another classroom may use it', async () => {
    await put(teacher1, sheet1, [{ studentCode: 'MOVE-01', score: 40 }]).expect(200);
    const taken = await put(teacher2, sheet2, [{ studentCode: 'MOVE-01', score: 41 }]);
    expect(taken.status).toBe(400);
    expect(taken.body.error.details.rows[0].message).toMatch(/cannot be used in this classroom/);

    await put(teacher1, sheet1, [{ studentCode: 'STAY-01', score: 40 }]).expect(200);
    expect(await count(`SELECT count(*)::int AS n FROM students WHERE study_id = $1 AND student_code = 'MOVE-01'`, [s.studyId])).toBe(0);
    await put(teacher2, sheet2, [{ studentCode: 'MOVE-01', score: 41 }]).expect(200);
    const [owner] = await t.db.query(`SELECT classroom_id FROM students WHERE study_id = $1 AND student_code = 'MOVE-01'`, [s.studyId]);
    expect(owner.classroom_id).toBe((await sheetKeys(sheet2)).classroom_id);
  });

  it('when two classrooms save the same new code at the same moment, then the second waits, is told, and writes nothing', async () => {
    // Another classroom's write holds the code, not yet committed, while teacher2 saves it too.
    const other = t.db.createQueryRunner();
    await other.connect();
    await other.startTransaction();
    await other.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, 'RACE-01', $2)`, [s.studyId, (await sheetKeys(sheet1)).classroom_id]);
    const saving = put(teacher2, sheet2, [{ studentCode: 'RACE-01', score: 31 }]).then((r) => r);
    await expect
      .poll(async () => count(`SELECT count(*)::int AS n FROM pg_stat_activity WHERE datname = current_database() AND wait_event_type = 'Lock'`, []), { timeout: 10_000 })
      .toBeGreaterThan(0);
    await other.commitTransaction();
    await other.release();
    const res = await saving;
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/registered some of these student codes at the same moment/);
    expect(await count(`SELECT count(*)::int AS n FROM scores WHERE study_id = $1 AND student_code = 'RACE-01'`, [s.studyId])).toBe(0);
    // Saved again, the code is reported as not usable here (which classroom has it is not the teacher's business).
    const again = await put(teacher2, sheet2, [{ studentCode: 'RACE-01', score: 31 }]);
    expect(again.status).toBe(400);
    expect(again.body.error.details.rows[0].message).toBe('Student code RACE-01 cannot be used in this classroom');
  });
});

describe('what a row carries', () => {
  it('stores notes with tabs, line breaks and backslashes exactly as typed, and tiny or fractional scores as numbers', async () => {
    const note = 'moved\tto\nanother school \\ in March\r\n(see file \\N)';
    await put(teacher1, sheet1, [
      { studentCode: 'NOTE-01', score: 0.0000005, note },
      { studentCode: 'NOTE-02', score: 199.25, note: '' },
      { studentCode: 'NOTE-03', score: null, left: true, note: '\\N' },
    ]).expect(200);
    const rows = await t.db.query(`SELECT student_code, score::text AS score, left_study, note FROM scores WHERE sheet_id = $1 ORDER BY student_code`, [sheet1]);
    expect(rows).toEqual([
      { student_code: 'NOTE-01', score: '0.0000005', left_study: false, note: note.trim() },
      { student_code: 'NOTE-02', score: '199.25', left_study: false, note: '' },
      { student_code: 'NOTE-03', score: null, left_study: true, note: '\\N' },
    ]);
  });
});

describe('large sheets', () => {
  const lines = (n: number, score: (i: number) => string) =>
    `student_code,score\n${Array.from({ length: n }, (_, i) => `BIG-${String(i).padStart(5, '0')},${score(i)}`).join('\n')}\n`;

  it('writes a 12 000-row upload over several batches, and a changed re-upload audits only what changed', async () => {
    const first = await upload(teacher2, sheet2, lines(12_000, (i) => String(i % 200)), '?replace=true');
    expect(first.status).toBe(200);
    expect(first.body.rows).toBe(12_000);
    expect(first.body.preview).toHaveLength(50);
    expect(await count(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1`, [sheet2])).toBe(12_000);
    expect(await count(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1 AND score <> (substr(student_code, 5)::int % 200)`, [sheet2])).toBe(0);

    // Row 11 001 (line 11 002) gets another score; the rest stays.
    const second = await upload(teacher2, sheet2, lines(12_000, (i) => String(i === 11_000 ? 199 - (i % 200) : i % 200)), '?replace=true');
    expect(second.status).toBe(200);
    const [audit] = await t.db.query(`SELECT after FROM audit_events WHERE action = 'scores.changed' AND entity_id = $1 ORDER BY at DESC LIMIT 1`, [sheet2]);
    expect(audit.after).toEqual({ rows: 12_000, changes: [{ studentCode: 'BIG-11000', from: { score: 0, left: false }, to: { score: 199, left: false } }] });
  });

  it('when problems lie in late batches and exceed what is listed, then they are numbered by line, counted in full, and nothing changes', async () => {
    const before = await count(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1 AND score = 199`, [sheet2]);
    const res = await upload(teacher2, sheet2, lines(12_000, (i) => (i >= 11_000 ? '999' : '5')), '?replace=true');
    expect(res.status).toBe(400);
    expect(res.body.error.details.total).toBe(1_000);
    expect(res.body.error.details.rows).toHaveLength(500);
    expect(res.body.error.details.rows[0]).toEqual({ row: 11_002, column: 'score', message: "The score 999 is outside the measure's range 0–200" });
    expect(res.body.error.message).toBe('1000 problem(s) found; nothing was saved');
    expect(await count(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1 AND score = 199`, [sheet2])).toBe(before);
    expect(await count(`SELECT count(*)::int AS n FROM scores WHERE sheet_id = $1`, [sheet2])).toBe(12_000);
  });

  it('when a code appears twice far apart, then the later line names the earlier one', async () => {
    const csv = lines(6_000, () => '10') + 'big-00007,11\n';
    const res = await upload(teacher2, sheet2, csv, '?replace=true&dryRun=true');
    expect(res.status).toBe(400);
    expect(res.body.error.details.rows).toEqual([{ row: 6_002, column: 'student_code', message: 'Student code BIG-00007 is also on row 9' }]);
  });
});
