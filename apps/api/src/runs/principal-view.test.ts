import { describe, expect, it } from 'vitest';
import { MIN_REPORTED_STUDENTS, principalRunSchema, type Accounting, type Run } from '@evenhand/entities';
import { principalView } from './principal-view.js';

const own = '11111111-1111-4111-8111-111111111111';
const other = '22222222-2222-4222-8222-222222222222';

/** What the run read: a few students lost in each arm (the principal never sees it). */
function accountingOf(small: number, large: number): Accounting {
  return {
    reads: ['accepted'],
    needsPretest: false,
    arms: [
      { arm: 'intervention', classrooms: { randomised: 3, analysed: 3, lost: [] }, students: { randomised: large + 1, analysed: large, lost: [{ reason: 'left-study', n: 1 }] } },
      { arm: 'comparison', classrooms: { randomised: 1, analysed: 1, lost: [] }, students: { randomised: small + 3, analysed: small, lost: [{ reason: 'no-outcome-score', n: 3 }] } },
    ],
    attrition: { students: null, classrooms: null },
    lostClassrooms: [],
  };
}

/** A locked run of a small study: the comparison arm has 8 students (under MIN_REPORTED_STUDENTS), the intervention 30. */
function lockedRun(small: number, large: number): Run {
  const [meanSmall, meanLarge] = [55.25, 61.5];
  const df = small + large - 2;
  return {
    id: '33333333-3333-4333-8333-333333333333',
    comparisonId: '44444444-4444-4444-8444-444444444444',
    studyId: '55555555-5555-4555-8555-555555555555',
    kind: 'confirmatory',
    state: 'locked',
    reason: null,
    planVersion: 1,
    engineVersion: 'test',
    dataSha256: 'ab'.repeat(32),
    error: null,
    queuedAt: '2026-11-02T08:00:00.000Z',
    finishedAt: '2026-11-02T08:00:05.000Z',
    lockedAt: '2026-11-02T09:00:00.000Z',
    scheduledFor: null,
    multiplicity: { adjustedP: 0.0412, rejected: true, comparisons: 2 },
    results: {
      engineVersion: 'test',
      planVersion: 1,
      measure: { id: '66666666-6666-4666-8666-666666666666', name: 'Reading fluency', kind: 'achievement', higherIsBetter: true },
      wave: { id: '77777777-7777-4777-8777-777777777777', name: 'Spring' },
      alpha: 0.05,
      descriptives: [
        { arm: 'comparison', classrooms: 1, students: small, mean: meanSmall, sd: 9.5, se: 9.5 / Math.sqrt(small), quantiles: null },
        { arm: 'intervention', classrooms: 3, students: large, mean: meanLarge, sd: 10.25, se: 10.25 / Math.sqrt(large), quantiles: null },
      ],
      primary: { test: 'welch', t: 1.61, df, p: 0.0206, meanDifference: meanLarge - meanSmall, ci: [0.81, 11.69], confidence: 0.95, alternative: 'greater', significant: true },
      deciding: { analysis: 'welch', estimate: meanLarge - meanSmall, p: 0.0206, df, ci: [0.81, 11.69], confidence: 0.95, alternative: 'greater', significant: true },
      effectSize: { g: 0.61, ci: [-0.17, 1.39], se: 0.4, improvementIndex: 22.9, substantivelyImportant: true },
      clustering: null,
      sensitivity: { student: { t: 1.58, df, p: 0.06 }, welch: { t: 1.61, df: 11.7, p: 0.07 }, mannWhitney: { u: small * large * 0.7, z: 1.4, p: 0.08, method: 'normal' }, ancova: null, classroomMeans: null },
      diagnostics: {
        leveneMean: { statistic: 0.1, df1: 1, df2: df, p: 0.75 },
        leveneMedian: null,
        varianceRatio: { f: 1.16, df1: small - 1, df2: large - 1, p: 0.9 },
        shapiroWilk: [{ arm: 'comparison', w: 0.95, p: 0.7, n: small }, { arm: 'intervention', w: 0.97, p: 0.5, n: large }],
        notes: [`The comparison arm has ${small} students.`],
      },
      sites: [
        { siteId: own, siteName: 'Alderquill Elementary', n1: 12, n2: small, mean1: 62, mean2: meanSmall, g: 0.7, se: 0.5, ci: [-0.2, 1.6], weight: 0.6 },
        { siteId: other, siteName: 'Birch Road Elementary', n1: large - 12, n2: 0, mean1: 61, mean2: 0, g: 0, se: 0, ci: [0, 0], weight: 0.4 },
      ],
      pooled: null,
      accounting: accountingOf(small, large),
      cautions: [`Only ${small} students in the comparison arm.`],
    },
  } as Run;
}

/** Every number anywhere in a value, and every string, for "appears nowhere" checks. */
function leaves(value: unknown, out: unknown[] = []): unknown[] {
  if (value && typeof value === 'object') for (const v of Object.values(value)) leaves(v, out);
  else out.push(value);
  return out;
}

describe('the principal’s view of a run', () => {
  it('when an arm has fewer than MIN_REPORTED_STUDENTS students, then no field lets its count or mean be derived', () => {
    const small = 8;
    const large = 30;
    expect(small).toBeLessThan(MIN_REPORTED_STUDENTS);
    const view = principalView(lockedRun(small, large), [own]);
    expect(principalRunSchema.parse(view)).toEqual(view);
    const r = view.results!;
    // The small count is hidden, so is the large one (else the district total minus it gives the small one).
    expect(r.arms.map((a) => a.students)).toEqual([{ value: null, suppressed: true }, { value: null, suppressed: true }]);
    expect(r.arms.every((a) => a.mean === null && a.sd === null)).toBe(true);
    // The estimate is a difference of means; with interval and p it also gives the degrees of freedom, hence n.
    expect(r.deciding).toEqual({ analysis: 'welch', significant: true, confidence: 0.95, alternative: 'greater', estimate: null, ci: null, p: null });
    expect(r.effectSize).toBeNull();
    expect(view.multiplicity).toEqual({ rejected: true });
    // Their school shows only with both arms at 10 or more; the other school never.
    expect(r.sites).toEqual([]);
    expect(r.suppressed).toBe(true);
    // The hidden values and whatever derives them (n, n − 1, n1 + n2, n1 + n2 − 2, the hidden mean, the difference) appear nowhere.
    const seen = leaves(view);
    for (const derived of [small, small - 1, large, large - 1, small + large, small + large - 2, 55.25, 61.5 - 55.25, 0.0412, 0.0206]) expect(seen).not.toContain(derived);
    // Only allow-listed fields: no accounting (flow counts), diagnostics, sensitivity checks, notes or cautions.
    expect(Object.keys(r).sort()).toEqual(['alpha', 'arms', 'deciding', 'effectSize', 'measure', 'sites', 'suppressed', 'wave']);
    expect(Object.keys(view).sort()).toEqual(['comparisonId', 'engineVersion', 'id', 'kind', 'lockedAt', 'multiplicity', 'planVersion', 'results', 'state', 'studyId']);
  });

  it('when every arm and the own school reach the minimum, then the figures are shown, and other schools still are not', () => {
    const run = lockedRun(24, 30);
    run.results!.sites[0].n2 = 12;
    const r = principalView(run, [own]).results!;
    expect(r.arms.map((a) => [a.students.value, a.mean])).toEqual([
      [24, 55.25],
      [30, 61.5],
    ]);
    expect(r.deciding).toMatchObject({ estimate: 6.25, ci: [0.81, 11.69], p: 0.0206 });
    expect(r.effectSize).toEqual({ g: 0.61, ci: [-0.17, 1.39], improvementIndex: 22.9 });
    expect(r.sites.map((s) => s.siteId)).toEqual([own]);
    expect(r.suppressed).toBe(false);
  });
});
