import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, type StudySetup } from '../../test/fixtures.js';

// The registry's counts per classroom (migration 1796600100000) must always equal a count of the registry itself.

let t: TestApp;
let s: StudySetup;
let rooms: string[];

beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
  rooms = (await enrolClassrooms(s, 1, 3)).classrooms.map((c) => c.id);
});
afterAll(() => t.close());

async function expectCountsMatchRegistry() {
  const counted: { classroom_id: string; n: number }[] = await t.db.query(
    `SELECT c.id AS classroom_id, (SELECT count(*)::int FROM students st WHERE st.classroom_id = c.id) AS n FROM classrooms c WHERE c.study_id = $1 ORDER BY c.id`,
    [s.studyId],
  );
  const kept: { classroom_id: string; n: number }[] = await t.db.query(
    `SELECT c.id AS classroom_id, coalesce(r.n, 0) AS n FROM classrooms c LEFT JOIN registered_counts r ON r.classroom_id = c.id WHERE c.study_id = $1 ORDER BY c.id`,
    [s.studyId],
  );
  expect(kept).toEqual(counted);
  return new Map(kept.map((k) => [k.classroom_id, k.n]));
}

describe('registered counts per classroom', () => {
  it('when codes are registered, moved between classrooms, skipped as duplicates and removed, then each count equals the registry', async () => {
    await t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, 'RC-' || i, $2 FROM generate_series(1, 7) i`, [s.studyId, rooms[0]]);
    await t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, 'RC-B' || i, $2 FROM generate_series(1, 4) i`, [s.studyId, rooms[1]]);
    expect((await expectCountsMatchRegistry()).get(rooms[0])).toBe(7);
    // A duplicate is skipped: only the inserted rows count.
    await t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, 'RC-' || i, $2 FROM generate_series(6, 9) i ON CONFLICT DO NOTHING`, [s.studyId, rooms[0]]);
    expect((await expectCountsMatchRegistry()).get(rooms[0])).toBe(9);
    // Moving three codes moves their count; one statement across two classrooms.
    await t.db.query(`UPDATE students SET classroom_id = $2 WHERE study_id = $1 AND student_code IN ('RC-1', 'RC-2', 'RC-B1')`, [s.studyId, rooms[2]]);
    const moved = await expectCountsMatchRegistry();
    expect([moved.get(rooms[0]), moved.get(rooms[1]), moved.get(rooms[2])]).toEqual([7, 3, 3]);
    await t.db.query(`DELETE FROM students WHERE study_id = $1 AND student_code LIKE 'RC-B%'`, [s.studyId]);
    expect((await expectCountsMatchRegistry()).get(rooms[1])).toBe(0);
  });

  it('when a statement fails, then the counts stay as they were', async () => {
    const before = await expectCountsMatchRegistry();
    await expect(
      t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, 'RC-NEW', $2), ($1, 'rc-bad', $2)`, [s.studyId, rooms[0]]),
    ).rejects.toThrow(/students_code_normalised/);
    expect(await expectCountsMatchRegistry()).toEqual(before);
  });
});
