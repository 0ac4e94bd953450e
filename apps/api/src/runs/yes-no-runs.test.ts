import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decidingTest, type RunResults } from '@evenhand/entities';
import {
  baselineEquivalenceYesNo,
  chiSquareTest,
  clusterRobustFromRows,
  coxIndexFromCounts,
  fisherExactTest,
  levene,
  leveneFromDeviations,
  mannWhitney,
  mannWhitneyFromRanks,
  oddsRatio,
  proportionDifference,
  proportionWithInterval,
  twoProportionZTest,
} from '@evenhand/stats';
import { startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, samplePlan, send, waitForRun } from '../../test/fixtures.js';
import { principalView } from './principal-view.js';
import { buildSiteFacts, resultSentences, siteResult } from '../digests/facts.js';
import { renderDigest } from '../digests/templates.js';
import { yesNoAnalysis } from './yes-no.js';
import { yesNoValues, type ClassroomAggregate } from './gather.js';
import { rowFromCsv } from '../score-sheets/rows.js';
import { createLogger } from '../logger.js';
import { createMailer } from '../mail/mailer.js';
import { seedDemoStudies } from '../seed/demo-study.js';

// The statistics are checked against SciPy, statsmodels and R in packages/stats (proportions.test.ts); here a yes/no
// run must equal the engine's functions on the same counts, and the cluster-assigned one the engine's CR2 on 0/1 rows.

let t: TestApp;

beforeAll(async () => {
  t = await startTestApp({ workers: true });
});
afterAll(() => t.close());

/** A classroom's aggregate as a run reads it: n, mean and M2 of 0/1 answers. */
function classroom(id: string, arm: 'intervention' | 'comparison', yes: number, n: number): ClassroomAggregate {
  const mean = yes / n;
  return { classroomId: id, siteId: 's', siteName: 'S', arm, n, mean, m2: yes * (1 - mean), fromSummary: false, pairs: null };
}

describe('yes/no comparisons', () => {
  it('when students were assigned one by one, then the z test decides with Newcombe’s interval, and every figure equals the engine’s functions on the counts', () => {
    const classrooms = [classroom('a', 'intervention', 21, 50), classroom('b', 'intervention', 12, 28), classroom('c', 'comparison', 19, 54), classroom('d', 'comparison', 7, 26)];
    const i = { yes: 33, n: 78 };
    const c = { yes: 26, n: 80 };
    const { yesNo, deciding } = yesNoAnalysis(classrooms, { alpha: 0.05, alternative: 'two-sided', yesIsGood: true, measureKind: 'achievement', unitOfAssignment: 'student' });
    expect(yesNo.arms.map((a) => [a.arm, a.yes, a.no, a.n])).toEqual([['intervention', 33, 45, 78], ['comparison', 26, 54, 80]]);
    expect(yesNo.arms[0].ci).toEqual(proportionWithInterval(i, { confidence: 0.95 }).ci);
    const d = proportionDifference(i, c, { confidence: 0.95 });
    expect(yesNo.difference).toEqual({ estimate: d.difference, ci: d.ci });
    expect(yesNo.oddsRatio!.estimate).toBe(oddsRatio(i, c).oddsRatio);
    expect(yesNo.coxIndex!.value).toBe(coxIndexFromCounts(i, c).coxIndex);
    expect(yesNo.zTest!.p).toBe(twoProportionZTest(i, c).p);
    expect(yesNo.chiSquare!.p).toBe(chiSquareTest(i, c, { correction: false }).p);
    expect(yesNo.chiSquareYates!.p).toBe(chiSquareTest(i, c, { correction: true }).p);
    expect(yesNo.fisher.p).toBe(fisherExactTest(i, c).p);
    expect(deciding).toEqual({ analysis: 'difference-in-proportions', estimate: d.difference, p: twoProportionZTest(i, c).p, df: null, ci: d.ci, confidence: 0.95, alternative: 'two-sided', significant: twoProportionZTest(i, c).p < 0.05 });
  });

  it('when an arm answered all yes, then Wilson, Newcombe and Fisher give their defined values and the odds ratio and Cox index are named as undefined, never NaN', () => {
    // 12 of 12 vs 5 of 11: Wilson's upper bound is exactly 1, Newcombe and Fisher are defined (their references for such
    // tables: packages/stats test/fixtures/proportions.json 'all-yes-intervention', statsmodels and SciPy); a logit of 1 is not.
    const classrooms = [classroom('a', 'intervention', 12, 12), classroom('b', 'comparison', 5, 11)];
    const { yesNo, deciding } = yesNoAnalysis(classrooms, { alpha: 0.05, alternative: 'two-sided', yesIsGood: true, measureKind: 'achievement', unitOfAssignment: 'student' });
    const [i, c] = [{ yes: 12, n: 12 }, { yes: 5, n: 11 }];
    expect(yesNo.arms[0].ci[1]).toBe(1);
    expect(yesNo.arms[0].ci).toEqual(proportionWithInterval(i, { confidence: 0.95 }).ci);
    expect(yesNo.difference.ci).toEqual(proportionDifference(i, c, { confidence: 0.95 }).ci);
    expect(yesNo.fisher.p).toBe(fisherExactTest(i, c).p);
    expect(yesNo.zTest!.p).toBe(twoProportionZTest(i, c).p);
    expect(deciding.analysis).toBe('difference-in-proportions');
    expect(yesNo.oddsRatio).toBeNull();
    expect(yesNo.coxIndex).toBeNull();
    expect(yesNo.notComputed).toEqual([
      { statistic: 'odds ratio', why: 'Undefined: every intervention student answered yes, so the odds of yes in that arm are infinite.' },
      { statistic: 'Cox index and improvement index', why: 'Undefined: every intervention student answered yes, and the log odds of 0 % or 100 % are infinite.' },
    ]);
    expect(JSON.stringify(yesNo)).not.toMatch(/NaN|Infinity/);
  });

  it('when the answers are only counted, then the rank, spread and quartile figures equal the engine on the 0/1 rows, with no scan of the answers', () => {
    for (const [k1, n1, k2, n2] of [
      [7, 20, 4, 18],
      [10, 10, 2, 12],
      [1, 2, 2, 3],
      [13, 25, 0, 24],
    ]) {
      const rows = (k: number, n: number) => [...Array(n - k).fill(0), ...Array(k).fill(1)] as number[];
      const [a, b] = [rows(k1, n1), rows(k2, n2)];
      const { values, ranks } = yesNoValues({ intervention: k1, comparison: k2 }, { intervention: n1, comparison: n2 });
      const m = mannWhitney(a, b);
      const fromCounts = mannWhitneyFromRanks({ n1, n2, ...ranks! });
      expect(fromCounts.u).toBeCloseTo(m.u, 10);
      expect(fromCounts.p).toBeCloseTo(m.p, 12);
      for (const center of ['mean', 'median'] as const) {
        const l = levene([a, b], { center });
        const got = leveneFromDeviations([values.intervention!.deviations[center], values.comparison!.deviations[center]], center);
        // Relative: with an arm all no, W is in the ten thousands.
        expect(Math.abs(got.statistic - l.statistic) / l.statistic).toBeLessThan(1e-12);
        expect(got.p).toBeCloseTo(l.p, 12);
      }
      // Quartiles by linear interpolation between order statistics, as the score path reads them.
      const quantile = (xs: number[], f: number) => xs[Math.floor(f * (xs.length - 1))] + (xs[Math.ceil(f * (xs.length - 1))] - xs[Math.floor(f * (xs.length - 1))]) * (f * (xs.length - 1) - Math.floor(f * (xs.length - 1)));
      expect(values.intervention!.quantiles).toEqual([0, 0.25, 0.5, 0.75, 1].map((f) => quantile(a, f)));
      expect(values.comparison!.quantiles).toEqual([0, 0.25, 0.5, 0.75, 1].map((f) => quantile(b, f)));
    }
  });

  it('when classrooms were assigned, then a run decides by the linear probability regression with CR2 errors, equal to the engine on the 0/1 rows', async () => {
    const s = await createStudy(t.app, { seal: false, unitOfAssignment: 'classroom' });
    const measure = await send(s.lead, 'post', `/api/studies/${s.studyId}/measures`, { name: 'Read at grade level by spring', scale: 'yes-no', higherIsBetter: true, kind: 'achievement' }, 201);
    expect(measure).toMatchObject({ scale: 'yes-no', minScore: 0, maxScore: 1 });
    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, samplePlan(measure.id, s.outcomeId), 200);
    await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    const { classrooms } = await enrolClassrooms(s, 3, 4);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'yes-no-classrooms', commit: true }, 201);
    await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
    const arms: { id: string; arm: 'intervention' | 'comparison' }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1`, [s.studyId]);
    const rows = { y: [] as number[], arm: [] as number[], cluster: [] as string[], block: [] as string[] };
    const counts = { intervention: { yes: 0, n: 0 }, comparison: { yes: 0, n: 0 } };
    let k = 0;
    for (const c of classrooms) {
      const arm = arms.find((a) => a.id === c.id)!.arm;
      const size = 12 + (k % 4);
      // Classrooms differ in how many meet the cut; the intervention's classrooms a little more often.
      const answers = Array.from({ length: size }, (_, i) => (((i * 7 + k * 5) % 11) < 4 + (k % 3) + (arm === 'intervention' ? 2 : 0) ? 1 : 0));
      await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: measure.id }, answers, `Y${k}`);
      answers.forEach((y) => {
        rows.y.push(y);
        rows.arm.push(arm === 'intervention' ? 1 : 0);
        rows.cluster.push(c.id);
        rows.block.push(c.siteId);
        counts[arm].yes += y;
        counts[arm].n += 1;
      });
      k++;
    }
    const [comparison] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitForRun(s.lead, queued.run.id);
    expect(run.error).toBeNull();
    const r = run.results as RunResults;
    expect(r.measure.scale).toBe('yes-no');
    expect(r.yesNo!.arms.map((a) => ({ yes: a.yes, n: a.n }))).toEqual([counts.intervention, counts.comparison]);
    const robust = clusterRobustFromRows({ y: rows.y, arm: rows.arm, cluster: rows.cluster, block: rows.block });
    const lp = r.yesNo!.linearProbability!;
    expect(lp.estimate).toBeCloseTo(robust.estimate, 10);
    expect(lp.se).toBeCloseTo(robust.se, 10);
    expect(lp.df).toBeCloseTo(robust.df, 8);
    const d = decidingTest(r);
    expect(d).toMatchObject({ analysis: 'linear-probability', basis: 'primary' });
    expect(d.estimate).toBeCloseTo(robust.estimate, 10);
    expect(d.p).toBeCloseTo(robust.p, 10);
    expect(r.yesNo!.designEffect).not.toBeNull();
    const diff = proportionDifference(counts.intervention, counts.comparison, { confidence: 0.95 });
    expect(r.yesNo!.difference.estimate).toBeCloseTo(diff.difference, 14);
  });

  it('when every intervention student answered yes, then the run finishes, gives Wilson, Newcombe and Fisher, and names the odds ratio and Cox index as undefined', async () => {
    const s = await createStudy(t.app, { seal: false, unitOfAssignment: 'classroom' });
    const measure = await send(s.lead, 'post', `/api/studies/${s.studyId}/measures`, { name: 'Passed the course', scale: 'yes-no', higherIsBetter: true, kind: 'achievement' }, 201);
    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, samplePlan(measure.id, s.outcomeId), 200);
    await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    const { classrooms } = await enrolClassrooms(s, 2, 3);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'yes-no-all-yes', commit: true }, 201);
    await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
    const arms: { id: string; arm: 'intervention' | 'comparison' }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1`, [s.studyId]);
    const counts = { intervention: { yes: 0, n: 0 }, comparison: { yes: 0, n: 0 } };
    for (const [k, c] of classrooms.entries()) {
      const arm = arms.find((a) => a.id === c.id)!.arm;
      const answers = Array.from({ length: 14 }, (_, i) => (arm === 'intervention' || i % 3 === k % 3 ? 1 : 0));
      await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: measure.id }, answers, `AY${k}`);
      counts[arm].yes += answers.reduce<number>((x, y) => x + y, 0);
      counts[arm].n += answers.length;
    }
    expect(counts.intervention.yes).toBe(counts.intervention.n);
    const comparison = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items.find((k: { measureId: string }) => k.measureId === measure.id);
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitForRun(s.lead, queued.run.id);
    expect(run.state).toBe('finished');
    expect(run.error).toBeNull();
    const y = (run.results as RunResults).yesNo!;
    expect(y.arms.map((a) => ({ yes: a.yes, n: a.n }))).toEqual([counts.intervention, counts.comparison]);
    expect(y.arms[0].ci).toEqual(proportionWithInterval(counts.intervention, { confidence: 0.95 }).ci);
    expect(y.arms[0].ci[1]).toBe(1);
    expect(y.difference.ci).toEqual(proportionDifference(counts.intervention, counts.comparison, { confidence: 0.95 }).ci);
    expect(y.fisher.p).toBe(fisherExactTest(counts.intervention, counts.comparison).p);
    expect(y.oddsRatio).toBeNull();
    expect(y.coxIndex).toBeNull();
    expect(y.notComputed!.map((n) => n.statistic)).toEqual(['odds ratio', 'Cox index and improvement index']);
    expect(y.notComputed![0].why).toMatch(/every intervention student answered yes/);
    // The deciding regression is defined (the comparison arm varies) and no figure anywhere is NaN or infinite.
    const d = decidingTest(run.results as RunResults);
    expect(d.analysis).toBe('linear-probability');
    expect(Number.isFinite(d.p) && Number.isFinite(d.estimate)).toBe(true);
    expect(JSON.stringify(run.results)).not.toMatch(/NaN|Infinity/);
    expect((run.results as RunResults).diagnostics.shapiroWilk).toBeNull();
  });

  it('when every student in both arms answered yes, then the run fails with a message that says so and gives the defined values', async () => {
    const s = await createStudy(t.app, { seal: false, unitOfAssignment: 'classroom' });
    const measure = await send(s.lead, 'post', `/api/studies/${s.studyId}/measures`, { name: 'Enrolled', scale: 'yes-no', higherIsBetter: true, kind: 'behaviour' }, 201);
    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, samplePlan(measure.id, s.outcomeId), 200);
    await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    const { classrooms } = await enrolClassrooms(s, 1, 2);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'yes-no-everyone', commit: true }, 201);
    await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
    for (const [k, c] of classrooms.entries()) await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: measure.id }, Array(11).fill(1), `EV${k}`);
    const comparison = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items.find((k: { measureId: string }) => k.measureId === measure.id);
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitForRun(s.lead, queued.run.id);
    expect(run.state).toBe('failed');
    expect(run.error).toBe('Every student in both arms answered yes: the difference is 0 percentage points and Fisher’s exact p is 1, but no registered test can compare arms without any spread');
  });

  it('refuses a yes/no measure with a score range, and a yes/no CSV cell that is not an answer', async () => {
    const s = await createStudy(t.app, { seal: false });
    const res = await s.lead.agent
      .post(`/api/studies/${s.studyId}/measures`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ name: 'On track', scale: 'yes-no', minScore: 0, maxScore: 5 });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('validation_failed');
    expect(['yes', 'Y', '1', 'TRUE', 'no', 'n', '0', 'false', ''].map((v) => rowFromCsv({ student_code: 'A1', score: v }, 2, 'yes-no').row?.score)).toEqual([1, 1, 1, 1, 0, 0, 0, 0, null]);
    expect(rowFromCsv({ student_code: 'A1', score: 'maybe' }, 2, 'yes-no').issues[0]).toMatchObject({ column: 'score', message: expect.stringMatching(/yes or no/) });
  });
});

describe('checks of a yes/no measure', () => {
  it('bands baseline equivalence of a yes/no characteristic by the Cox index of the analytic sample’s baseline answers', async () => {
    const s = await createStudy(t.app, { seal: false, unitOfAssignment: 'classroom' });
    const measure = await send(s.lead, 'post', `/api/studies/${s.studyId}/measures`, { name: 'Chronically absent', scale: 'yes-no', higherIsBetter: false, kind: 'behaviour' }, 201);
    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, samplePlan(measure.id, s.outcomeId), 200);
    await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    const { classrooms } = await enrolClassrooms(s, 1, 2);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'yes-no-checks', commit: true }, 201);
    await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
    const arms: { id: string; arm: 'intervention' | 'comparison' }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1`, [s.studyId]);
    const counts = { intervention: { yes: 0, n: 0 }, comparison: { yes: 0, n: 0 } };
    for (const [k, c] of classrooms.entries()) {
      const arm = arms.find((a) => a.id === c.id)!.arm;
      // 20 students; the last has no outcome, so only 19 enter the analytic sample.
      const before = Array.from({ length: 20 }, (_, i) => (i < 5 + 3 * k ? 1 : 0));
      const after = before.map((_, i) => (i === 19 ? null : i % 3 === 0 ? 1 : 0));
      await fillSheet(t.db, { classroomId: c.id, waveId: s.baselineId, measureId: measure.id }, before, `B${k}`);
      await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: measure.id }, after, `B${k}`);
      counts[arm] = { yes: before.slice(0, 19).reduce<number>((a, b) => a + b, 0), n: 19 };
    }
    const checks = (await s.lead.agent.get(`/api/studies/${s.studyId}/checks`).expect(200)).body;
    const eq = checks.measures.find((m: { measureId: string }) => m.measureId === measure.id).baselineEquivalence;
    const expected = baselineEquivalenceYesNo(counts.intervention, counts.comparison, { zeroCell: 'add-half' });
    expect(eq).toMatchObject({ effectSize: 'cox-index', band: expected.band });
    expect(eq.g).toBeCloseTo(expected.coxIndex, 12);
  });
});

describe('digests and My school of a yes/no run', () => {
  const results = (intervention: [number, number], comparison: [number, number]) => {
    const y = yesNoAnalysis([classroom('a', 'intervention', ...intervention), classroom('b', 'comparison', ...comparison)], {
      alpha: 0.05,
      alternative: 'two-sided',
      yesIsGood: true,
      measureKind: 'achievement',
      unitOfAssignment: 'student',
    });
    return { measure: { name: 'Read at grade level by spring', higherIsBetter: true }, wave: { name: 'Spring' }, alpha: 0.05, deciding: y.deciding, yesNo: y.yesNo } as unknown as RunResults;
  };

  it('says what share of each arm answered yes, in percentage points, with the Cox index', () => {
    const [finding, size] = resultSentences(results([84, 200], [70, 200]), 'intervention');
    expect(finding).toBe(
      'Across all schools in the study, 42 % of students in intervention classrooms answered yes to “Read at grade level by spring” at Spring, against 35 % in comparison classrooms: 7.0 percentage points more. “Yes” is the good answer on this measure, so the difference favours the intervention.',
    );
    expect(size).toMatch(/^The size of the difference is a Cox index of 0\.18/);
  });

  it('when an arm has fewer than 10 yes answers, then My school and the digest show neither that count nor the no count, and no share, difference, g, p or Cox index it could be solved from', () => {
    const r = { ...results([6, 200], [70, 200]), effectSize: { g: -0.6, ci: [-0.8, -0.4], se: 0.1, improvementIndex: -22, substantivelyImportant: true }, descriptives: [], sites: [] } as unknown as RunResults;
    const site = siteResult({ id: '88888888-8888-4888-8888-888888888888', results: r, locked_at: new Date('2026-11-02T09:00:00Z'), label: 'Read at grade level by spring at Spring', is_primary: false }, 's');
    expect(site.yesNo!.arms).toEqual([
      { arm: 'intervention', yes: { value: null, suppressed: true }, no: { value: null, suppressed: true }, proportion: null },
      { arm: 'comparison', yes: { value: 70, suppressed: false }, no: { value: 130, suppressed: false }, proportion: null },
    ]);
    expect(site.yesNo!.coxIndex).toBeNull();
    expect(site.district).toMatchObject({ g: null, gCi: null, improvementIndex: null, estimate: null, ci: null, p: null });
    expect(site.sentences.join(' ')).not.toMatch(/%|p = |p < /);
    expect(JSON.stringify(site)).not.toMatch(/\b(6|194)\b/);
  });

  it('when an arm has fewer than 10 yes answers, then no share is given', () => {
    const sentences = resultSentences(results([6, 200], [70, 200]), 'comparison');
    expect(sentences[0]).toMatch(/is not shown: a group has fewer than 10 students/);
    expect(sentences.join(' ')).not.toMatch(/%|Cox index of/);
  });
});

describe('the demo study', () => {
  it('pre-specifies “Read at grade level by spring” as a yes/no comparison, whose seeded run reports the yes/no result', async () => {
    const mailer = createMailer(t.config);
    try {
      await seedDemoStudies({ config: t.config, db: t.db, mailer, logger: createLogger(t.config), jobs: t.jobs });
    } finally {
      mailer.close();
    }
    const [k]: { id: string; prespecified: boolean; scale: string }[] = await t.db.query(
      // The demo's (other tests here name a measure alike, without locking its run).
      `SELECT k.id, k.prespecified, m.scale FROM comparisons k JOIN measures m ON m.id = k.measure_id
        WHERE m.name = 'Read at grade level by spring' AND EXISTS (SELECT 1 FROM runs r WHERE r.comparison_id = k.id AND r.state = 'locked')`,
    );
    expect(k).toMatchObject({ prespecified: true, scale: 'yes-no' });
    const [run]: { state: string; results: RunResults; error: string | null }[] = await t.db.query(
      `SELECT state, results, error FROM runs WHERE comparison_id = $1 AND results IS NOT NULL ORDER BY (state = 'locked') DESC, queued_at DESC LIMIT 1`,
      [k.id],
    );
    expect(run.error).toBeNull();
    expect(decidingTest(run.results).analysis).toBe('linear-probability');
    expect(run.results.yesNo!.arms.map((a) => [a.yes > 0, a.no > 0, a.yes + a.no === a.n])).toEqual([[true, true, true], [true, true, true]]);

    // My school and the digest: each arm's share and yes count of its students, the difference in points and the Cox index,
    // the same numbers as the run's, and no average score of 0/1 answers.
    const [site]: { study_id: string; site_id: string; name: string }[] = await t.db.query(
      `SELECT k.study_id, c.site_id, x.name FROM comparisons k JOIN classrooms c ON c.study_id = k.study_id JOIN sites x ON x.id = c.site_id WHERE k.id = $1 ORDER BY x.name LIMIT 1`,
      [k.id],
    );
    const facts = await buildSiteFacts(t.db.manager, site.study_id, site.site_id);
    const result = facts.results.find((x) => x.measureName === 'Read at grade level by spring')!;
    const y = run.results.yesNo!;
    expect(result.yesNo!.arms).toEqual(y.arms.map((a) => ({ arm: a.arm, yes: { value: a.yes, suppressed: false }, no: { value: a.no, suppressed: false }, proportion: a.proportion })));
    expect(result.district.estimate).toBe(decidingTest(run.results).estimate);
    expect(result.yesNo!.coxIndex).toEqual({ value: y.coxIndex!.value, improvementIndex: y.coxIndex!.improvementIndex });
    const mail = await renderDigest(facts, 'lock', 'Principal', { mySchool: 'https://evenhand.test/my-school', preferences: () => 'https://evenhand.test/p' }, [result.runId]);
    const pct = (x: number) => `${Math.round(x * 100)} %`;
    for (const a of y.arms) expect(mail.text).toContain(`Answered yes, ${a.arm} classrooms: ${pct(a.proportion)} (${a.yes} of ${a.n})`);
    expect(mail.text).toContain(`Effect size (Cox index): ${y.coxIndex!.value.toFixed(2)}`);
    const block = mail.text.slice(mail.text.indexOf('Read at grade level by spring'), mail.text.indexOf('on its own', mail.text.indexOf('Read at grade level by spring')));
    expect(block).not.toMatch(/Hedges|Average score/);
  }, 240_000);
});

describe('a principal’s view of a yes/no run', () => {
  it('when an arm has fewer than 10 yes answers, then no yes or no count, proportion or estimate is shown from which it could be derived', () => {
    const yesNo = yesNoAnalysis([classroom('a', 'intervention', 6, 40), classroom('b', 'comparison', 15, 42)], {
      alpha: 0.05,
      alternative: 'two-sided',
      yesIsGood: true,
      measureKind: 'achievement',
      unitOfAssignment: 'student',
    });
    const run = {
      id: '33333333-3333-4333-8333-333333333333',
      comparisonId: '44444444-4444-4444-8444-444444444444',
      studyId: '55555555-5555-4555-8555-555555555555',
      kind: 'confirmatory',
      state: 'locked',
      planVersion: 1,
      engineVersion: 'test',
      lockedAt: '2026-11-02T09:00:00.000Z',
      multiplicity: null,
      results: {
        measure: { id: '66666666-6666-4666-8666-666666666666', name: 'Read at grade level by spring', kind: 'achievement', higherIsBetter: true, scale: 'yes-no' },
        wave: { id: '77777777-7777-4777-8777-777777777777', name: 'Spring' },
        alpha: 0.05,
        descriptives: [
          { arm: 'intervention', classrooms: 1, students: 40, mean: 6 / 40, sd: 0.36, se: 0.06, quantiles: null },
          { arm: 'comparison', classrooms: 1, students: 42, mean: 15 / 42, sd: 0.48, se: 0.07, quantiles: null },
        ],
        primary: { test: 'welch', t: -2, df: 78, p: 0.04, meanDifference: 6 / 40 - 15 / 42, se: 0.1, ci: [-0.4, -0.01], confidence: 0.95, alternative: 'two-sided', significant: true },
        deciding: yesNo.deciding,
        yesNo: yesNo.yesNo,
        effectSize: { g: -0.5, ci: [-0.9, -0.1], se: 0.2, improvementIndex: -19, substantivelyImportant: true },
        clustering: null,
        sites: [{ siteId: 's', siteName: 'S', n1: 40, n2: 42, mean1: 6 / 40, mean2: 15 / 42, g: -0.5, se: 0.2, ci: [-0.9, -0.1], weight: 1 }],
      },
    } as unknown as Parameters<typeof principalView>[0];
    const view = principalView(run, ['s']);
    const r = view.results!;
    expect(r.yesNo!.arms.every((a) => a.yes.suppressed && a.no.suppressed && a.proportion === null)).toBe(true);
    expect(r.yesNo!.coxIndex).toBeNull();
    // Every count shown: the counts, shares and Cox index are the run's.
    const open = yesNoAnalysis([classroom('a', 'intervention', 16, 40), classroom('b', 'comparison', 15, 42)], { alpha: 0.05, alternative: 'two-sided', yesIsGood: true, measureKind: 'achievement', unitOfAssignment: 'student' }).yesNo;
    const visible = principalView({ ...run, results: { ...run.results, yesNo: open } } as typeof run, ['s']).results!.yesNo!;
    expect(visible.arms.map((a) => [a.yes.value, a.no.value, a.proportion])).toEqual([[16, 24, 16 / 40], [15, 27, 15 / 42]]);
    expect(visible.coxIndex).toEqual({ value: open.coxIndex!.value, improvementIndex: open.coxIndex!.improvementIndex });
    expect(r.arms.every((a) => a.mean === null)).toBe(true);
    expect(r.deciding).toMatchObject({ estimate: null, ci: null, p: null });
    expect(r.sites).toEqual([]);
    expect(r.suppressed).toBe(true);
    // Nothing left in the view equals a hidden count (6 yes), its complement (34 no) or the proportions.
    const shown = JSON.stringify(view);
    for (const hidden of [6 / 40, 15 / 42, 34 / 40]) expect(shown).not.toContain(String(hidden));
    expect(JSON.stringify(r.yesNo)).not.toMatch(/\b(6|34|15|27)\b/);
  });
});
