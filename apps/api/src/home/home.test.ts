import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ToDoItem } from '@evenhand/entities';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, send, type StudySetup } from '../../test/fixtures.js';

let t: TestApp;
let s: StudySetup;
let reviewer: SignedIn;
let admin: SignedIn;

async function toDo(who: SignedIn): Promise<ToDoItem[]> {
  const res = await who.agent.get('/api/to-do');
  expect(res.status).toBe(200);
  return res.body.items;
}

const kindsFor = (items: ToDoItem[], studyId: string | null) => items.filter((i) => (i.study?.id ?? null) === studyId).map((i) => [i.kind, i.count]);

beforeAll(async () => {
  t = await startTestApp();
  reviewer = await signIn(t.app, 'reviewer@evenhand.test');
  admin = await signIn(t.app, 'admin@evenhand.test');
});
afterAll(() => t.close());

describe('the to-do list on a person’s home', () => {
  it('when a district has no study and every account is set up, then nothing waits for anyone', async () => {
    const lead = await signIn(t.app, 'lead@evenhand.test');
    const coordinator = await signIn(t.app, 'coordinator@evenhand.test');
    for (const who of [lead, coordinator, reviewer, admin]) expect(await toDo(who)).toEqual([]);
  });

  it('when a study is started, then the research lead is asked to seal its plan; once sealed, the coordinator to enrol its sites', async () => {
    s = await createStudy(t.app, { seal: false });
    expect(kindsFor(await toDo(s.lead), s.studyId)).toEqual([['plan_to_seal', 1]]);
    expect((await toDo(s.lead))[0].study).toEqual({ id: s.studyId, title: 'Paired reading in grade 4' });
    await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    expect(kindsFor(await toDo(s.lead), s.studyId)).toEqual([]);
    expect(kindsFor(await toDo(s.coordinator), s.studyId)).toEqual([['sites_to_enrol', 1]]);
  });

  it('when classrooms are enrolled, then the coordinator is asked to run the draw, and no longer once it is committed', async () => {
    await enrolClassrooms(s, 2, 2);
    expect(kindsFor(await toDo(s.coordinator), s.studyId)).toEqual([['draw_to_run', 1]]);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'to-do-list', commit: true }, 201);
    expect(kindsFor(await toDo(s.coordinator), s.studyId)).toEqual([]);
  });

  it('when sheets are submitted or their wave closed without them, then the coordinator sees how many to review and how many are late', async () => {
    const classrooms: { id: string }[] = await t.db.query(`SELECT id FROM classrooms WHERE study_id = $1 ORDER BY name, id`, [s.studyId]);
    // The completion matrix creates the classrooms' sheets; the list counts the two that nobody opened as late as well.
    expect((await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`)).status).toBe(200);
    await t.db.query(`DELETE FROM score_sheets WHERE classroom_id = $1`, [classrooms[3].id]);
    await fillSheet(t.db, { classroomId: classrooms[0].id, waveId: s.baselineId, measureId: s.measureId }, [40, 52, 61], 'TD-A', 'submitted');
    await fillSheet(t.db, { classroomId: classrooms[1].id, waveId: s.baselineId, measureId: s.measureId }, [44, 58], 'TD-B', 'accepted');
    expect(kindsFor(await toDo(s.coordinator), s.studyId)).toEqual([['sheets_to_review', 1]]);
    // The baseline wave closes: the two classrooms that never submitted are late (one of them never opened its sheet);
    // the submitted one waits for review.
    await t.db.query(`UPDATE waves SET opens_on = current_date - 30, closes_on = current_date - 1 WHERE id = $1`, [s.baselineId]);
    expect(kindsFor(await toDo(s.coordinator), s.studyId)).toEqual([['sheets_to_review', 1], ['late_sheets', 2]]);
    // The research lead and the reviewer are not asked to chase sheets.
    expect(kindsFor(await toDo(s.lead), s.studyId)).toEqual([]);
    expect(kindsFor(await toDo(reviewer), s.studyId)).toEqual([]);
  });

  it('when a confirmatory run finishes unlocked, then the research lead is asked to lock it; once locked, the reviewer has a result to read', async () => {
    const comparisons = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items as { id: string; prespecified: boolean }[];
    const primary = comparisons.find((c) => c.prespecified)!;
    const [run] = await t.db.query(`INSERT INTO runs (comparison_id, study_id, kind, state) VALUES ($1, $2, 'confirmatory', 'finished') RETURNING id`, [primary.id, s.studyId]);
    expect(kindsFor(await toDo(s.lead), s.studyId)).toEqual([['runs_to_lock', 1]]);
    expect(kindsFor(await toDo(reviewer), s.studyId)).toEqual([]);
    await t.db.query(`UPDATE runs SET state = 'locked', locked_at = now() WHERE id = $1`, [run.id]);
    expect(kindsFor(await toDo(s.lead), s.studyId)).toEqual([]);
    expect(kindsFor(await toDo(reviewer), s.studyId)).toEqual([['results_to_read', 1]]);
  });

  it('when an invited person has not chosen a password and an account has no role, then the admin is asked to follow them up', async () => {
    // The teachers enrolled above were invited and have not chosen a password yet.
    const [{ invited }] = await t.db.query(`SELECT count(*)::int AS invited FROM users WHERE password_hash IS NULL AND active`);
    expect(invited).toBe(4);
    expect(kindsFor(await toDo(admin), null)).toEqual([['invitations_pending', 4]]);
    await t.db.query(`INSERT INTO users (email, name, password_hash, active) VALUES ('not.yet.in@example.org', 'Ines Varga', NULL, true)`);
    expect(kindsFor(await toDo(admin), null)).toEqual([['invitations_pending', 5], ['accounts_without_role', 1]]);
    // The admin's list holds the district's accounts only; the study steps are other people's.
    expect((await toDo(admin)).every((i) => i.study === null)).toBe(true);
  });

  it('when a study is archived, then nothing of it waits for anyone', async () => {
    await t.db.query(`UPDATE studies SET status = 'archived' WHERE id = $1`, [s.studyId]);
    for (const who of [s.lead, s.coordinator, reviewer]) expect(kindsFor(await toDo(who), s.studyId)).toEqual([]);
  });
});
