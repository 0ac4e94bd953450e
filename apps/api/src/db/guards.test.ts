import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestApp, type TestApp } from '../../test/app.js';
import { urlForDatabase } from '../../test/database.js';
import { createStudy, enrolClassrooms, fillSheet, send, waitForRun, type StudySetup } from '../../test/fixtures.js';

let t: TestApp;
let s: StudySetup;
let owner: pg.Client;
let runId: string;
let comparisonId: string;
const rooms: { id: string; arm: string }[] = [];

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  // The same database as the schema's owner (the test cluster's admin), as migrations connect.
  owner = new pg.Client({ connectionString: urlForDatabase(new URL(t.databaseUrl).pathname.slice(1)) });
  await owner.connect();
  s = await createStudy(t.app);
  await enrolClassrooms(s, 1, 4);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'guards', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  rooms.push(...(await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, id`, [s.studyId])));
  for (const [k, c] of rooms.entries()) {
    await fillSheet(t.db, { classroomId: c.id, waveId: s.baselineId, measureId: s.measureId }, [40, 44, 47, 52, 55].map((v) => v + k), `G${k}`);
    await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: s.measureId }, [50, 53, 58, 61, 66].map((v) => v + k * 2), `G${k}`);
  }
  [{ id: comparisonId }] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
  const queued = await send(s.lead, 'post', `/api/comparisons/${comparisonId}/runs`, { kind: 'confirmatory' }, 202);
  expect((await waitForRun(s.lead, queued.run.id)).state).toBe('finished');
  runId = queued.run.id;
  await send(s.lead, 'post', `/api/runs/${runId}/lock`, {}, 200);
}, 60_000);
afterAll(async () => {
  await owner.end();
  await t.close();
});

describe('the application’s database role', () => {
  it('owns nothing: it cannot TRUNCATE, disable a trigger, switch triggers off or change a locked run', async () => {
    for (const table of ['audit_events', 'runs', 'draws', 'plan_versions', 'scores']) {
      await expect(t.db.query(`TRUNCATE ${table} CASCADE`)).rejects.toThrow(/permission denied/);
    }
    await expect(t.db.query(`ALTER TABLE runs DISABLE TRIGGER runs_locked`)).rejects.toThrow(/must be owner/);
    await expect(t.db.query(`ALTER TABLE audit_events DISABLE TRIGGER ALL`)).rejects.toThrow(/must be owner/);
    await expect(t.db.query(`DROP TRIGGER runs_locked ON runs`)).rejects.toThrow(/must be owner/);
    await expect(t.db.query(`SET session_replication_role = replica`)).rejects.toThrow(/permission denied/);
    await expect(t.db.query(`UPDATE runs SET results = '{}' WHERE id = $1`, [runId])).rejects.toThrow(/locked and cannot change/);
    await expect(t.db.query(`DELETE FROM runs WHERE id = $1`, [runId])).rejects.toThrow(/locked and cannot change/);
    const [owns] = await t.db.query(
      `SELECT count(*)::int AS n FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace WHERE n.nspname IN ('public', 'pgboss') AND pg_get_userbyid(c.relowner) = current_user`,
    );
    expect(owns.n).toBe(0);
  });
});

describe('database guards', () => {
  it('refuse TRUNCATE of append-only and locked data even to the schema’s owner', async () => {
    for (const table of ['audit_events', 'runs', 'draws', 'draw_reassignments', 'plan_versions', 'scores', 'score_sheets', 'students', 'comparisons']) {
      await expect(owner.query(`TRUNCATE ${table} CASCADE`)).rejects.toThrow(/cannot be truncated/);
    }
    const [{ n }] = (await owner.query(`SELECT count(*)::int AS n FROM runs WHERE id = $1`, [runId])).rows;
    expect(n).toBe(1);
  });

  it('refuse changes to what a locked run read: its comparison, its measure’s range, its waves, the quasi-experimental flag', async () => {
    await expect(t.db.query(`UPDATE comparisons SET primary_test = 'student' WHERE id = $1`, [comparisonId])).rejects.toThrow(/has a locked result and cannot change/);
    await expect(t.db.query(`UPDATE comparisons SET covariate = 'none' WHERE id = $1`, [comparisonId])).rejects.toThrow(/has a locked result/);
    await expect(t.db.query(`UPDATE comparisons SET label = 'Renamed' WHERE id = $1`, [comparisonId])).rejects.toThrow(/has a locked result/);
    // Its monitoring schedule is not part of the result.
    await t.db.query(`UPDATE comparisons SET schedule_cron = '0 6 * * 1', schedule_set_at = now() WHERE id = $1`, [comparisonId]);
    await expect(t.db.query(`UPDATE measures SET max_score = 500 WHERE id = $1`, [s.measureId])).rejects.toThrow(/read by a locked result/);
    await expect(t.db.query(`UPDATE measures SET higher_is_better = NOT higher_is_better WHERE id = $1`, [s.measureId])).rejects.toThrow(/read by a locked result/);
    for (const wave of [s.outcomeId, s.baselineId]) {
      await expect(t.db.query(`UPDATE waves SET closes_on = closes_on + 1 WHERE id = $1`, [wave])).rejects.toThrow(/read by a locked result/);
    }
    await expect(t.db.query(`UPDATE studies SET quasi_experimental = true WHERE id = $1`, [s.studyId])).rejects.toThrow(/whether it is quasi-experimental cannot change/);
  });

  it('refuse a reassignment of a classroom a locked run read, and moving or removing its students in the registry', async () => {
    const [draw] = await t.db.query(`SELECT id FROM draws WHERE study_id = $1`, [s.studyId]);
    await expect(
      t.db.query(`INSERT INTO draw_reassignments (draw_id, classroom_id, from_arm, to_arm, reason, by_user) VALUES ($1, $2, $3, $4, 'moved', $5)`, [
        draw.id,
        rooms[0].id,
        rooms[0].arm,
        rooms[0].arm === 'intervention' ? 'comparison' : 'intervention',
        s.coordinator.userId,
      ]),
    ).rejects.toThrow(/is read by locked run/);
    await expect(t.db.query(`UPDATE students SET classroom_id = $2 WHERE study_id = $1 AND student_code = 'G0-0'`, [s.studyId, rooms[1].id])).rejects.toThrow(
      /G0-0 is read by a locked result/,
    );
    await expect(t.db.query(`DELETE FROM students WHERE study_id = $1 AND student_code = 'G0-1'`, [s.studyId])).rejects.toThrow(/G0-1 is read by a locked result/);
  });
});

// Codes are upper-case; only codes a locked result read before that rule kept another spelling (migrations
// student-code-case, student-code-case-check).
describe('a student code kept in another spelling', () => {
  it('is one student with any new code of its study spelled in another case: refused as a duplicate; other codes and other studies are free', async () => {
    await owner.query(`ALTER TABLE students DROP CONSTRAINT students_code_normalised`);
    try {
      await owner.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, 'old-Spelt', $2)`, [s.studyId, rooms[0].id]);
    } finally {
      await owner.query(`ALTER TABLE students ADD CONSTRAINT students_code_normalised CHECK (student_code = upper(btrim(student_code))) NOT VALID`);
    }
    const register = (studyId: string, code: string, classroomId: string) => t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, $2, $3)`, [studyId, code, classroomId]);
    await expect(register(s.studyId, 'OLD-SPELT', rooms[1].id)).rejects.toMatchObject({ driverError: { code: '23505' } });
    await register(s.studyId, 'OLD-SPELT-2', rooms[1].id);
    await expect(t.db.query(`UPDATE students SET student_code = 'OLD-SPELT' WHERE study_id = $1 AND student_code = 'OLD-SPELT-2'`, [s.studyId])).rejects.toMatchObject({ driverError: { code: '23505' } });
    const other = await createStudy(t.app);
    const { classrooms } = await enrolClassrooms(other, 1, 1);
    await register(other.studyId, 'OLD-SPELT', classrooms[0].id);
    expect((await t.db.query(`SELECT count(*)::int AS n FROM students WHERE upper(student_code) = 'OLD-SPELT'`))[0].n).toBe(2);
  });
});

// A registered code's classroom is one of its study's classrooms (check_student_classrooms, one lookup per classroom a
// statement writes: migration student-classroom-check-per-classroom).
describe('a registered code’s classroom', () => {
  it('belongs to the code’s study: a statement that registers or moves any code into another study’s classroom is refused, naming that code', async () => {
    const other = await createStudy(t.app);
    const { classrooms } = await enrolClassrooms(other, 1, 1);
    const refused = { driverError: { code: '23503', message: 'student code ELSEWHERE-2 is registered to a classroom outside its study' } };
    await expect(
      t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, 'ELSEWHERE-1', $2), ($1, 'ELSEWHERE-2', $3), ($1, 'ELSEWHERE-3', $2)`, [s.studyId, rooms[0].id, classrooms[0].id]),
    ).rejects.toMatchObject(refused);
    await t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, 'ELSEWHERE-1', $2), ($1, 'ELSEWHERE-2', $2)`, [other.studyId, classrooms[0].id]);
    await t.db.query(`INSERT INTO students (study_id, student_code, classroom_id) VALUES ($1, 'ELSEWHERE-2', $2)`, [s.studyId, rooms[0].id]);
    await expect(t.db.query(`UPDATE students SET classroom_id = $2 WHERE study_id = $1 AND student_code = 'ELSEWHERE-2'`, [s.studyId, classrooms[0].id])).rejects.toMatchObject(refused);
    expect(await t.db.query(`SELECT student_code, classroom_id FROM students WHERE student_code LIKE 'ELSEWHERE-%' ORDER BY study_id = $1, student_code`, [s.studyId])).toEqual([
      { student_code: 'ELSEWHERE-1', classroom_id: classrooms[0].id },
      { student_code: 'ELSEWHERE-2', classroom_id: classrooms[0].id },
      { student_code: 'ELSEWHERE-2', classroom_id: rooms[0].id },
    ]);
  });
});
