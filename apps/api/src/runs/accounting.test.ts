import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { attrition } from '@evenhand/stats';
import { lossReasons, type Accounting, type Arm, type LossReason, type RunResults } from '@evenhand/entities';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, samplePlan, send, waitForRun } from '../../test/fixtures.js';
import { account } from './accounting.js';

// One definition of "analysed" and "lost": the run stores it, the Checks and the report read it, the bundle ships it.
// The expected counts below are worked out by hand from the rows this test writes, not from the code under test.

let t: TestApp;
let reviewer: SignedIn;

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  reviewer = await signIn(t.app, 'reviewer@evenhand.test');
});
afterAll(() => t.close());

type Tally = { classrooms: { randomised: number; analysed: number; lost: Partial<Record<LossReason, number>> }; students: { randomised: number; analysed: number; lost: Partial<Record<LossReason, number>> } };

describe('who was analysed and who was lost', () => {
  it('when a study has every kind of loss, then the run, the Checks, the report’s data and the bundle give the same counts and reasons', async () => {
    // The registered two-level model adjusting for the pretest: a student needs both scores to be analysed.
    const s = await createStudy(t.app, { seal: false });
    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, { ...samplePlan(s.measureId, s.outcomeId), primaryTest: 'two-level', covariate: 'baseline' }, 200);
    await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    await enrolClassrooms(s, 2, 6);
    await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'accounting-test', commit: true }, 201);
    await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
    const drawn: { id: string; arm: Arm }[] = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1 ORDER BY arm, id`, [s.studyId]);
    const byArm = { intervention: drawn.filter((c) => c.arm === 'intervention'), comparison: drawn.filter((c) => c.arm === 'comparison') };
    expect(byArm.intervention).toHaveLength(6);

    const tally: Record<Arm, Tally> = {
      intervention: { classrooms: { randomised: 0, analysed: 0, lost: {} }, students: { randomised: 0, analysed: 0, lost: {} } },
      comparison: { classrooms: { randomised: 0, analysed: 0, lost: {} }, students: { randomised: 0, analysed: 0, lost: {} } },
    };
    const add = (o: Partial<Record<LossReason, number>>, reason: LossReason, n: number) => (o[reason] = (o[reason] ?? 0) + n);
    const sheetOf = async (classroomId: string, waveId: string) =>
      (await t.db.query(`SELECT id FROM score_sheets WHERE classroom_id = $1 AND wave_id = $2 AND measure_id = $3`, [classroomId, waveId, s.measureId]))[0].id as string;
    const pre = (k: number, n: number) => Array.from({ length: n }, (_, i) => 50 + ((i * 37 + k * 11) % 43));
    const post = (k: number, arm: Arm, p: (number | null)[]) => p.map((x, i) => Math.round(((x ?? 60) * 0.7 + 30 + (arm === 'intervention' ? 5 : 0) + ((i * 17 + k * 5) % 19) - 9 + ((k * 29) % 7)) * 10) / 10);

    let k = 0;
    // A classroom whose outcome sheet the run does not read: 10 students known from the baseline, all lost with the sheet's reason.
    const unread = async (c: { id: string; arm: Arm }, reason: LossReason, outcome: (sheetId: string) => Promise<void>) => {
      await fillSheet(t.db, { classroomId: c.id, waveId: s.baselineId, measureId: s.measureId }, pre(k, 10), `A${k}`);
      await outcome(await sheetOf(c.id, s.outcomeId));
      tally[c.arm].classrooms.randomised++;
      add(tally[c.arm].classrooms.lost, reason, 1);
      tally[c.arm].students.randomised += 10;
      add(tally[c.arm].students.lost, reason, 10);
      k++;
    };
    const rowsIn = (state: string) => async (sheetId: string) => {
      await fillSheet(t.db, { classroomId: (await t.db.query(`SELECT classroom_id FROM score_sheets WHERE id = $1`, [sheetId]))[0].classroom_id, waveId: s.outcomeId, measureId: s.measureId }, pre(k, 10).map((x) => x + 5), `A${k}`);
      await t.db.query(`UPDATE score_sheets SET state = $2 WHERE id = $1`, [sheetId, state]);
    };
    const [i0, i1, ...iRest] = byArm.intervention;
    const [c0, c1, c2, ...cRest] = byArm.comparison;
    await unread(i0, 'sheet-not-entered', async () => {});
    await unread(i1, 'returned', rowsIn('returned'));
    await unread(c0, 'sheet-not-submitted', rowsIn('open'));
    await unread(c1, 'awaiting-review', rowsIn('submitted'));

    // A classroom whose accepted sheet has scores but no student with a pretest: lost, under the reason of its students.
    await fillSheet(t.db, { classroomId: c2.id, waveId: s.outcomeId, measureId: s.measureId }, post(k, 'comparison', pre(k, 9)), `B${k}`);
    await fillSheet(t.db, { classroomId: c2.id, waveId: s.baselineId, measureId: s.measureId }, [], `B${k}`);
    tally.comparison.classrooms.randomised++;
    add(tally.comparison.classrooms.lost, 'no-pretest', 1);
    tally.comparison.students.randomised += 9;
    add(tally.comparison.students.lost, 'no-pretest', 9);
    k++;

    // Analysed classrooms of 12 codes: student 9 has no pretest (left at baseline), 10 left before the outcome, 11 has no outcome row.
    const pairs: Record<Arm, number> = { intervention: 0, comparison: 0 };
    for (const c of [...iRest, ...cRest]) {
      const p: (number | null)[] = pre(k, 12);
      p[9] = null;
      const y: (number | null)[] = post(k, c.arm, p).slice(0, 11);
      y[10] = null;
      await fillSheet(t.db, { classroomId: c.id, waveId: s.baselineId, measureId: s.measureId }, p, `C${k}`);
      await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: s.measureId }, y, `C${k}`);
      const a = tally[c.arm];
      a.classrooms.randomised++;
      a.classrooms.analysed++;
      a.students.randomised += 12;
      a.students.analysed += 9;
      pairs[c.arm] += 9;
      add(a.students.lost, 'no-pretest', 1);
      add(a.students.lost, 'left-study', 1);
      add(a.students.lost, 'no-outcome-score', 1);
      k++;
    }

    const [comparison] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`)).body.items;
    const queued = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
    const run = await waitForRun(s.lead, queued.run.id);
    expect(run.error).toBeNull();
    const r: RunResults = run.results;
    const stored = r.accounting!;

    // The run's accounting is the hand count, each reason in the closed list's order.
    const order = (lost: Partial<Record<LossReason, number>>) => lossReasons.filter((reason) => lost[reason]).map((reason) => ({ reason, n: lost[reason] }));
    for (const arm of ['intervention', 'comparison'] as const) {
      const got = stored.arms.find((a) => a.arm === arm)!;
      expect(got.classrooms).toMatchObject({ randomised: tally[arm].classrooms.randomised, analysed: tally[arm].classrooms.analysed });
      expect(got.students).toMatchObject({ randomised: tally[arm].students.randomised, analysed: tally[arm].students.analysed });
      expect(got.classrooms.lost).toEqual(order(tally[arm].classrooms.lost));
      expect(got.students.lost).toEqual(order(tally[arm].students.lost));
      // Every one not analysed is counted once.
      expect(got.students.lost.reduce((n, l) => n + l.n, 0)).toBe(got.students.randomised - got.students.analysed);
    }
    expect(stored).toMatchObject({ reads: ['accepted'], needsPretest: true });
    expect(stored.lostClassrooms.map((c) => [c.classroomId, c.reason]).sort()).toEqual(
      [[i0.id, 'sheet-not-entered'], [i1.id, 'returned'], [c0.id, 'sheet-not-submitted'], [c1.id, 'awaiting-review'], [c2.id, 'no-pretest']].sort(),
    );
    // "Analysed" is what the deciding analysis used: the two-level model's students and units.
    expect(r.twoLevel!.students).toBe(pairs.intervention + pairs.comparison);
    expect(r.twoLevel!.units).toEqual({ intervention: tally.intervention.classrooms.analysed, comparison: tally.comparison.classrooms.analysed });
    // Attrition follows from the same counts (the published boundaries are checked in packages/stats).
    const { boundaries: _b, ...students } = attrition({
      randomized1: tally.intervention.students.randomised,
      analyzed1: tally.intervention.students.analysed,
      randomized2: tally.comparison.students.randomised,
      analyzed2: tally.comparison.students.analysed,
    });
    expect(stored.attrition.students).toEqual(students);
    expect(stored.attrition.classrooms!.overall).toBeCloseTo((100 * 5) / 12, 12);

    // The Checks before the lock: today's accepted sheets, which are what the run read.
    const before = (await s.lead.agent.get(`/api/studies/${s.studyId}/checks`).expect(200)).body.measures[0];
    expect(before.accountingRunId).toBeNull();
    expect(before.accounting).toEqual(stored);

    await send(s.lead, 'post', `/api/runs/${run.id}/lock`, {}, 200);
    // The returned sheet comes back and is accepted after the lock: the locked result keeps what it read.
    await t.db.query(`UPDATE score_sheets SET state = 'accepted' WHERE id = $1`, [await sheetOf(i1.id, s.outcomeId)]);
    const after = (await s.lead.agent.get(`/api/studies/${s.studyId}/checks`).expect(200)).body.measures[0];
    expect(after.accountingRunId).toBe(run.id);
    expect(after.accounting).toEqual(stored);
    // The report reads the run (its flow) and the Checks (its attrition table): the same object either way.
    expect((await reviewer.agent.get(`/api/runs/${run.id}`)).body.results.accounting).toEqual(stored);

    // The bundle ships it, and its rows rebuild the analysed and the pretest-less counts per arm.
    const bundle = (await reviewer.agent.get(`/api/runs/${run.id}/bundle`).expect(200)).body;
    expect(bundle.accounting).toEqual(stored);
    expect(bundle.readme).toMatch(/"no-pretest"/);
    const fromRows = (arm: Arm, pretest: boolean) =>
      (bundle.rows as string[]).map((l) => l.split(',')).filter((f) => f[1] === arm && f[3] !== '' && (f[4] !== '') === pretest).length;
    for (const arm of ['intervention', 'comparison'] as const) {
      const got = stored.arms.find((a) => a.arm === arm)!.students;
      expect(fromRows(arm, true)).toBe(got.analysed);
      expect(fromRows(arm, false)).toBe(got.lost.find((l) => l.reason === 'no-pretest')?.n ?? 0);
    }
  });
});

describe('account', () => {
  const base = { registered: 20, sheetState: 'accepted' as const, entered: true, summaryN: null, scored: 18, left: 1, withPretest: 16 };

  it('when the analysis does not adjust for the pretest, then a student with an outcome score is analysed whatever their pretest', () => {
    const a: Accounting = account(
      [
        { classroomId: 'a', arm: 'intervention', ...base },
        { classroomId: 'b', arm: 'comparison', ...base },
      ],
      ['accepted'],
      false,
    );
    expect(a.arms[0].students).toEqual({ randomised: 20, analysed: 18, lost: [{ reason: 'left-study', n: 1 }, { reason: 'no-outcome-score', n: 1 }] });
    expect(a.attrition.students!.overall).toBeCloseTo(10, 12);
  });

  it('when a monitoring run reads sheets awaiting review, then they are not a loss; a class summary counts its n, none with a pretest', () => {
    const a = account(
      [
        { classroomId: 'a', arm: 'intervention', ...base, sheetState: 'submitted' },
        { classroomId: 'b', arm: 'comparison', ...base, registered: 3, summaryN: 21, scored: 0, left: 0, withPretest: 0 },
      ],
      ['accepted', 'submitted'],
      true,
    );
    expect(a.arms[0].students.analysed).toBe(16);
    // A summary of 21 when 3 codes were registered: 21 randomised, all without a pretest, so the classroom is lost.
    expect(a.arms[1].students).toEqual({ randomised: 21, analysed: 0, lost: [{ reason: 'no-pretest', n: 21 }] });
    expect(a.lostClassrooms).toEqual([{ classroomId: 'b', arm: 'comparison', reason: 'no-pretest', students: 21 }]);
  });

  it('when one arm has no classroom, then attrition cannot be worked out', () => {
    expect(account([{ classroomId: 'a', arm: 'intervention', ...base }], ['accepted'], false).attrition).toEqual({ students: null, classrooms: null });
  });
});
