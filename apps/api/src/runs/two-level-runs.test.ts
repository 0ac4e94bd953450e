import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decidingTest, type RunResults } from '@evenhand/entities';
import { clusterRobustFromRows, twoLevelFromRows } from '@evenhand/stats';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, samplePlan, send, waitForRun, type StudySetup } from '../../test/fixtures.js';

// The two-level model and CR2 are checked against lme4/lmerTest and clubSandwich in packages/stats; here a run must
// equal the engine's row-based entry points on the same students, and a bundle must be enough to recompute it.

let t: TestApp;
let reviewer: SignedIn;

/** A sealed study registering the two-level model, enrolled, drawn and scored; returns the rows written. */
async function twoLevelStudy(unitOfAssignment: 'classroom' | 'school', sites: number, perSite: number, seed: string) {
  const s: StudySetup = await createStudy(t.app, { seal: false, unitOfAssignment });
  const plan = (await s.lead.agent.get(`/api/studies/${s.studyId}/plan`)).body.draft;
  await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, { ...samplePlan(s.measureId, s.outcomeId), ...(plan ?? {}), primaryTest: 'two-level' }, 200);
  await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
  const { classrooms } = await enrolClassrooms(s, sites, perSite);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed, commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  const arms: { id: string; arm: 'intervention' | 'comparison' }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1`, [s.studyId]);
  const rows = { y: [] as number[], arm: [] as number[], cluster: [] as string[], site: [] as string[], pretest: [] as number[] };
  let k = 0;
  for (const c of classrooms) {
    const arm = arms.find((a) => a.id === c.id)!.arm;
    // Classrooms differ (a classroom effect), students differ, the intervention adds about 5 points; one leaver each.
    const classroomEffect = ((k * 29) % 13) - 6;
    const size = 9 + (k % 5);
    const pre = Array.from({ length: size }, (_, i) => 55 + ((i * 37 + k * 11) % 43));
    const post = pre.map((p, i) =>
      i === size - 1 ? null : Math.round((0.7 * p + 30 + classroomEffect + (arm === 'intervention' ? 5 : 0) + ((i * 17 + k * 5) % 19) - 9) * 10) / 10,
    );
    await fillSheet(t.db, { classroomId: c.id, waveId: s.baselineId, measureId: s.measureId }, pre, `T${k}`);
    await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: s.measureId }, post, `T${k}`);
    post.forEach((y, i) => {
      if (y === null) return;
      rows.y.push(y);
      rows.arm.push(arm === 'intervention' ? 1 : 0);
      rows.cluster.push(c.id);
      rows.site.push(c.siteId);
      rows.pretest.push(pre[i]);
    });
    k++;
  }
  const [comparison] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
  return { s, rows, comparisonId: comparison.id as string, primaryTest: comparison.primaryTest as string };
}

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  reviewer = await signIn(t.app, 'reviewer@evenhand.test');
});
afterAll(() => t.close());

describe('two-level runs', () => {
  it('when classrooms were assigned within schools, the registered two-level model decides, with the schools as blocks and the pretest, equal to the engine on the rows', async () => {
    const { s, rows, comparisonId, primaryTest } = await twoLevelStudy('classroom', 3, 4, 'two-level-classrooms');
    expect(primaryTest).toBe('two-level');
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparisonId}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitForRun(s.lead, queued.run.id);
    expect(run.error).toBeNull();
    const r: RunResults = run.results;
    const expected = twoLevelFromRows({ y: rows.y, arm: rows.arm, cluster: rows.cluster, block: rows.site, covariates: [rows.pretest] }, { confidence: 0.95 });
    expect(r.twoLevel).toMatchObject({ unit: 'classroom', blocks: 3, covariate: 'baseline', students: rows.y.length, boundary: expected.boundary });
    for (const key of ['estimate', 'se', 'df', 'p', 'tau2', 'sigma2', 'icc', 'remlLogLik', 'g'] as const) {
      expect(r.twoLevel![key]).toBeCloseTo(expected[key], 8);
    }
    expect(r.primary).toMatchObject({ test: 'two-level', meanDifference: r.twoLevel!.estimate, p: r.twoLevel!.p });
    // The one deciding analysis: its p, interval and verdict are the model's, not the student-level t test's.
    const d = decidingTest(r);
    expect(d).toMatchObject({ analysis: 'two-level', basis: 'primary', significant: expected.p < 0.05 });
    expect(d.p).toBeCloseTo(expected.p, 10);
    expect(d.estimate).toBeCloseTo(expected.estimate, 10);
    expect(d.ci![0]).toBeCloseTo(expected.ci[0], 8);
    expect(run.multiplicity.adjustedP).toBeCloseTo(expected.p, 10);
    expect(r.effectSize.g).toBeCloseTo(expected.g, 10);
    // Welch over students and the clustering correction stay, as sensitivity checks.
    expect(r.sensitivity.studentLevelEffect).not.toBeNull();
    expect(r.clustering).not.toBeNull();
    const robust = clusterRobustFromRows({ y: rows.y, arm: rows.arm, cluster: rows.cluster, block: rows.site, covariates: [rows.pretest] });
    expect(r.sensitivity.clusterRobust!.estimate).toBeCloseTo(robust.estimate, 8);
    expect(r.sensitivity.clusterRobust!.se).toBeCloseTo(robust.se, 8);
    expect(r.sensitivity.clusterRobust!.df).toBeCloseTo(robust.df, 6);
    // Per-school estimates weigh classrooms by the model's variance components: each school has both arms here.
    expect(r.sites).toHaveLength(3);
    for (const site of r.sites) expect(site.ci[0]).toBeLessThan(site.ci[1]);

    // The bundle alone recomputes the model: rows with both scores, units and blocks from its classrooms list.
    const bundle = (await reviewer.agent.get(`/api/runs/${run.id}/bundle`)).body;
    const siteOf = new Map<string, string>(bundle.classrooms.map((c: { classroomId: string; siteId: string }) => [c.classroomId, c.siteId]));
    const again = { y: [] as number[], arm: [] as number[], cluster: [] as string[], block: [] as string[], pretest: [] as number[] };
    for (const line of bundle.rows as string[]) {
      const [classroomId, arm, , outcome, pretest] = line.split(',');
      if (outcome === '' || pretest === '') continue;
      again.y.push(Number(outcome));
      again.arm.push(arm === 'intervention' ? 1 : 0);
      again.cluster.push(classroomId);
      again.block.push(siteOf.get(classroomId)!);
      again.pretest.push(Number(pretest));
    }
    const fromBundle = twoLevelFromRows({ y: again.y, arm: again.arm, cluster: again.cluster, block: again.block, covariates: [again.pretest] });
    expect(fromBundle.estimate).toBeCloseTo(bundle.results.twoLevel.estimate, 10);
    expect(fromBundle.p).toBeCloseTo(bundle.results.twoLevel.p, 10);
    expect(bundle.readme).toMatch(/twoLevelFromRows/);
  });

  it('when whole schools were assigned, the units of the model are the schools, without blocks', async () => {
    const { s, rows, comparisonId } = await twoLevelStudy('school', 6, 2, 'two-level-schools');
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparisonId}/runs`, { kind: 'monitoring' }, 202);
    const run = await waitForRun(s.lead, queued.run.id);
    expect(run.error).toBeNull();
    const r: RunResults = run.results;
    const expected = twoLevelFromRows({ y: rows.y, arm: rows.arm, cluster: rows.site, covariates: [rows.pretest] });
    expect(r.twoLevel).toMatchObject({ unit: 'school', blocks: 0, units: expected.units });
    expect(r.twoLevel!.estimate).toBeCloseTo(expected.estimate, 8);
    expect(r.twoLevel!.df).toBeCloseTo(expected.df, 6);
    expect(decidingTest(r).analysis).toBe('two-level');
  });

  it('refuses to register the two-level model for a study that assigns students one by one', async () => {
    const s = await createStudy(t.app, { seal: false, unitOfAssignment: 'student' });
    const res = await s.lead.agent
      .put(`/api/studies/${s.studyId}/plan`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ ...samplePlan(s.measureId, s.outcomeId), primaryTest: 'two-level' });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body.error.details)).toMatch(/assigns students/);
  });
});
