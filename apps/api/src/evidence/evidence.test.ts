import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decidingTest, type RunResults, type StudyEvidence } from '@evenhand/entities';
import { attrition } from '@evenhand/stats';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, samplePlan, send, type StudySetup } from '../../test/fixtures.js';

// The rules themselves are tested at their boundaries in packages/stats/src/evidence; here the answer must be built
// from the product's own figures: the Checks' accounting and baseline equivalence, the draw, and the deciding analysis.

let t: TestApp;
let s: StudySetup;
let classrooms: { id: string; siteId: string }[];
let lost: string;

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
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draws`, { seed: 'evidence-verdict', commit: true }, 201);
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
    expect(e.boundary).toBe('cautious');
    expect(e.comparisons).toHaveLength(1);
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
    expect(e.comparisons[0].verdict.wording).toContain('This is a preview, not a review: the evidence reviewers decide.');
    expect(reason(e, 'confound-teacher-intervention').passed).toBe(true);
    expect(reason(e, 'multi-site').numbers).toBe('3 schools with analysed students');
  });

  it('when the optimistic boundary is asked for, then the verdict is judged against it', async () => {
    const e = await evidence('?boundary=optimistic');
    expect(e.boundary).toBe('optimistic');
    expect(reason(e, 'cluster-attrition').rule).toContain('optimistic boundary');
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
    expect(bundle.evidence).toEqual({ boundary: 'cautious', ...e.comparisons[0].verdict });
  });

  it('when the boundary is not one of the two, then 400 in the one error shape; a principal is refused', async () => {
    const bad = await s.lead.agent.get(`/api/studies/${s.studyId}/evidence?boundary=lenient`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBeTruthy();
    const principal = await signIn(t.app, 'principal1@evenhand.test');
    expect((await principal.agent.get(`/api/studies/${s.studyId}/evidence`)).status).toBe(403);
  });
});
