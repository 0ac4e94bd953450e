import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decidingTest, type RunResults, type StudyEvidence } from '@evenhand/entities';
import { attrition } from '@evenhand/stats';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { urlForDatabase } from '../../test/database.js';
import { createDataSource } from '../db/data-source.js';
import { createStudy, enrolClassrooms, fillSheet, samplePlan, send, type StudySetup } from '../../test/fixtures.js';

// The rules themselves are tested at their boundaries in packages/stats/src/evidence; here the answer must be built
// from the product's own figures: the Checks' accounting and baseline equivalence, the draw, and the deciding analysis.

let t: TestApp;
let s: StudySetup;
let classrooms: { id: string; siteId: string }[];
let lost: string;
let lockedRun: string;

async function evidence(query = ''): Promise<StudyEvidence> {
  const res = await s.lead.agent.get(`/api/studies/${s.studyId}/evidence${query}`);
  expect(res.status).toBe(200);
  return res.body;
}
const reason = (e: StudyEvidence, id: string) => e.comparisons[0].verdict.reasons.find((r) => r.id === id)!;

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  s = await createStudy(t.app, { seal: false });
  const plan = (await s.lead.agent.get(`/api/studies/${s.studyId}/plan`)).body.draft;
  await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, { ...samplePlan(s.measureId, s.outcomeId), ...(plan ?? {}), primaryTest: 'two-level' }, 200);
  await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
  ({ classrooms } = await enrolClassrooms(s, 3, 4));
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'evidence-verdict', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  const arms: { id: string; arm: string }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1`, [s.studyId]);
  lost = arms.find((a) => a.arm === 'intervention')!.id;
  let k = 0;
  for (const c of classrooms) {
    const arm = arms.find((a) => a.id === c.id)!.arm;
    const pre = Array.from({ length: 12 }, (_, i) => 60 + ((i * 37 + k * 11) % 40));
    const post = pre.map((p, i) => Math.round((0.7 * p + 30 + (arm === 'intervention' ? 6 : 0) + ((i * 17 + k * 5) % 19) - 9) * 10) / 10);
    await fillSheet(t.db, { classroomId: c.id, waveId: s.baselineId, measureId: s.measureId }, pre, `E${k}`);
    // One intervention classroom's outcome sheet is not in yet.
    if (c.id !== lost) await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: s.measureId }, post, `E${k}`);
    k++;
  }
});
afterAll(() => t.close());

describe('GET /studies/:id/evidence', () => {
  it('when one of six intervention classrooms has no outcome sheet, then classroom attrition is the Checks’ figure, high, and one more sheet would bring it back to low', async () => {
    const e = await evidence();
    // The plan registers the cautious boundary unless the research lead chose otherwise, and the answer says so.
    expect(e.boundary).toBe('cautious');
    expect(e.plan).toEqual({
      boundary: 'cautious',
      chosenBy: 'plan',
      planVersion: 1,
      reason: '',
      explanation: 'Judged against the cautious attrition boundary, which plan version 1 registers: the intervention could affect which students leave.',
    });
    expect(e.comparisons).toHaveLength(1);
    expect(e.comparisons[0].boundary).toEqual(e.plan);
    const checks = (await s.lead.agent.get(`/api/studies/${s.studyId}/checks`)).body;
    const measure = checks.measures.find((m: { measureId: string }) => m.measureId === s.measureId);
    const fromChecks = measure.accounting.attrition.classrooms;
    // 5 of 6 against 6 of 6 classrooms: overall 8.3 %, differential 16.7 pp (WWC v4.1 Table II.1, cautious: high).
    const expected = attrition({ randomized1: 6, analyzed1: 5, randomized2: 6, analyzed2: 6 });
    expect(fromChecks.overall).toBeCloseTo(expected.overall, 10);
    expect(reason(e, 'cluster-attrition')).toMatchObject({ passed: false, seeOn: 'checks' });
    expect(reason(e, 'cluster-attrition').numbers).toContain(`overall ${expected.overall.toFixed(1)} %, differential ${expected.differential.toFixed(1)} percentage points`);
    expect(e.comparisons[0].risks[0].text).toBe('Attrition of classrooms is high under the cautious boundary; 1 more intervention classroom with an accepted outcome sheet would bring it back to low.');
    // High attrition requires baseline equivalence: the rating follows the Checks' band (the model adjusts for the pretest).
    const band = measure.baselineEquivalence.band;
    expect(reason(e, 'baseline').numbers).toContain(Math.abs(measure.baselineEquivalence.g).toFixed(3));
    expect(e.comparisons[0].verdict.rating).toBe(band === 'fails' ? 'does-not-meet' : 'with-reservations');
    // No run yet: the tier is not settled, and the wording says it is a preview.
    expect(e.comparisons[0].verdict.settled).toBe(false);
    const rated = e.comparisons[0].verdict.rating === 'does-not-meet' ? 'would not meet the evidence standards' : 'would meet the evidence standards with reservations';
    expect(e.comparisons[0].verdict.wording).toBe(`Evidence preview, not a review (the evidence reviewers decide): this comparison ${rated}; its evidence tier cannot be told yet.`);
    expect(reason(e, 'confound-teacher-intervention').passed).toBe(true);
    expect(reason(e, 'multi-site').numbers).toBe('3 schools with analysed students');
  });

  it('when the optimistic boundary is asked for, then the verdict is judged against it', async () => {
    const e = await evidence('?boundary=optimistic');
    expect(e.boundary).toBe('optimistic');
    expect(reason(e, 'cluster-attrition').rule).toContain('optimistic boundary');
    expect(e.comparisons[0].boundary).toMatchObject({ boundary: 'optimistic', chosenBy: 'reader', planVersion: 1 });
    expect(e.comparisons[0].boundary.explanation).toBe('Judged against the optimistic attrition boundary, as asked here; plan version 1 registers the cautious one.');
    // The plan's choice is unchanged by what a reader asks for.
    expect(e.plan.boundary).toBe('cautious');
  });

  it('when the last sheet arrives and the result is locked, then the verdict reads the locked run: no attrition, its deciding analysis and no risks', async () => {
    const k = classrooms.findIndex((c) => c.id === lost);
    const pre = Array.from({ length: 12 }, (_, i) => 60 + ((i * 37 + k * 11) % 40));
    await fillSheet(t.db, { classroomId: lost, waveId: s.outcomeId, measureId: s.measureId }, pre.map((p) => p + 10), `E${k}`);
    const [comparison] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
    let run;
    for (let i = 0; i < 150; i++) {
      run = (await s.lead.agent.get(`/api/runs/${queued.run.id}`)).body;
      if (['finished', 'failed'].includes(run.state)) break;
      await new Promise((r) => setTimeout(r, 200));
    }
    expect(run.state).toBe('finished');
    await send(s.lead, 'post', `/api/runs/${run.id}/lock`, {}, 200);
    const e = await evidence();
    expect(e.comparisons[0]).toMatchObject({ runId: run.id, locked: true, risks: [] });
    expect(reason(e, 'cluster-attrition').passed).toBe(true);
    expect(reason(e, 'student-attrition').numbers).toContain('72 of 72 intervention and 72 of 72 comparison students analysed');
    const d = decidingTest(run.results as RunResults);
    expect(d.analysis).toBe('two-level');
    expect(reason(e, 'clustering').passed).toBe(true);
    expect(reason(e, 'effect').passed).toBe(d.significant && d.estimate > 0);
    // 144 analysed < 350 and 12 classrooms of 12 < 50 groups: not a large sample, so promising at most.
    expect(reason(e, 'large-sample').passed).toBe(false);
    expect(['promising', 'none']).toContain(e.comparisons[0].verdict.tier);
    expect(e.comparisons[0].verdict.tier).toBe(d.significant && d.estimate > 0 ? 'promising' : 'none');
    // The bundle carries the same verdict with every reason.
    const bundle = (await s.lead.agent.get(`/api/runs/${run.id}/bundle`)).body;
    expect(bundle.evidence).toEqual({ boundary: 'cautious', boundaryExplanation: e.comparisons[0].boundary.explanation, ...e.comparisons[0].verdict });
    // Stored with the lock, against both boundaries, with the boundary the run's plan registers.
    const [stored] = await t.db.query(`SELECT plan_version, boundary, cautious, optimistic FROM run_verdicts WHERE run_id = $1`, [run.id]);
    expect(stored).toMatchObject({ plan_version: 1, boundary: 'cautious' });
    expect(stored.cautious).toEqual(e.comparisons[0].verdict);
    expect(stored.optimistic).toEqual((await evidence('?boundary=optimistic')).comparisons[0].verdict);
    lockedRun = run.id;
  });

  it('when something changes after the lock, then the locked verdict does not: it is the one stored when the result was locked', async () => {
    const before = await evidence();
    const beforeOptimistic = await evidence('?boundary=optimistic');
    expect(reason(before, 'confound-teacher-intervention').passed).toBe(true);
    // One teacher now delivers every intervention classroom: judged live, that confound fails the rating (WWC v4.1
    // Handbook, confounding factor: one unit in a condition; packages/stats tests the rule itself).
    const [{ teacher_id: teacher }] = await t.db.query(`SELECT teacher_id FROM classrooms WHERE study_id = $1 AND arm = 'intervention' LIMIT 1`, [s.studyId]);
    await t.db.query(`UPDATE classrooms SET teacher_id = $2 WHERE study_id = $1 AND arm = 'intervention'`, [s.studyId, teacher]);
    const after = await evidence();
    expect(after.comparisons[0]).toEqual(before.comparisons[0]);
    expect((await evidence('?boundary=optimistic')).comparisons[0]).toEqual(beforeOptimistic.comparisons[0]);
    const bundle = (await s.lead.agent.get(`/api/runs/${lockedRun}/bundle`)).body;
    expect(bundle.evidence.wording).toBe(before.comparisons[0].verdict.wording);
    // The database keeps it: a stored verdict can be neither changed nor removed.
    await expect(t.db.query(`UPDATE run_verdicts SET boundary = 'optimistic' WHERE run_id = $1`, [lockedRun])).rejects.toThrow(/cannot be changed/);
    await expect(t.db.query(`DELETE FROM run_verdicts WHERE run_id = $1`, [lockedRun])).rejects.toThrow(/cannot be changed/);
  });

  it('when a result was locked before verdicts were stored, then its first read judges it once, and that verdict stays', async () => {
    // Stands in for a lock made before the run_verdicts table existed: the owner removes the stored row, triggers off.
    const owner = createDataSource(urlForDatabase(new URL(t.databaseUrl).pathname.slice(1)));
    await owner.initialize();
    await owner.transaction(async (m) => {
      await m.query(`SET LOCAL session_replication_role = replica`);
      await m.query(`DELETE FROM run_verdicts WHERE run_id = $1`, [lockedRun]);
    });
    await owner.destroy();
    // Judged now, the one teacher delivering every intervention classroom (set in the previous test) is a confound:
    // the arm cannot be told apart from its teacher (WWC v4.1 Handbook, confounding factor), so the standards are not met.
    const first = await evidence();
    expect(reason(first, 'confound-teacher-intervention').passed).toBe(false);
    expect(first.comparisons[0].verdict.rating).toBe('does-not-meet');
    const [stored] = await t.db.query(`SELECT cautious FROM run_verdicts WHERE run_id = $1`, [lockedRun]);
    expect(stored.cautious).toEqual(first.comparisons[0].verdict);
    // A later change no longer moves it: the teachers differ again, the stored verdict stands.
    await t.db.query(`UPDATE classrooms SET teacher_id = $2 WHERE id = $1`, [lost, (await t.db.query(`SELECT teacher_id FROM classrooms WHERE study_id = $1 AND arm = 'comparison' LIMIT 1`, [s.studyId]))[0].teacher_id]);
    expect((await evidence()).comparisons[0]).toEqual(first.comparisons[0]);
  });

  it('when the boundary is not one of the two, then 400 in the one error shape; a principal is refused', async () => {
    const bad = await s.lead.agent.get(`/api/studies/${s.studyId}/evidence?boundary=lenient`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBeTruthy();
    const principal = await signIn(t.app, 'principal1@evenhand.test');
    expect((await principal.agent.get(`/api/studies/${s.studyId}/evidence`)).status).toBe(403);
  });
});
