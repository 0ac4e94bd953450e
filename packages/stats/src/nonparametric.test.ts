import { describe, expect, it } from 'vitest';
import { expectClose, expectP, fixture, generate } from '../test/fixtures.js';
import { mannWhitney, mannWhitneyFromRanks } from './nonparametric.js';

describe('mannWhitney against the SciPy fixture (scipy.stats.mannwhitneyu, tie and continuity corrected)', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id} (${c.expected.mannWhitney.method})`, () => {
      const ref = c.expected.mannWhitney;
      const r = mannWhitney(generate(c.a), generate(c.b), { alternative: c.alternative });
      expect(r.method).toBe(ref.method);
      expect(r.u).toBe(ref.u);
      expectP(r.p, ref.p, `${c.id} p`);
    });
  }

  it('the fixture exercises both methods and tied data', () => {
    const methods = new Set(fixture.twoSample.map((c) => c.expected.mannWhitney.method));
    expect([...methods].sort()).toEqual(['exact', 'normal']);
  });
});

describe('mannWhitney, exact distribution and identities', () => {
  it('exact p for complete separation of 3 vs 3 is 2/C(6,3) = 0.1 two-sided (Mann & Whitney 1947)', () => {
    const r = mannWhitney([1, 2, 3], [4, 5, 6]);
    expect(r.method).toBe('exact');
    expect(r.u).toBe(0);
    expectClose(r.p, 0.1, 1e-15, 0, 'p');
    expectClose(mannWhitney([1, 2, 3], [4, 5, 6], { alternative: 'less' }).p, 0.05, 1e-15, 0, 'one-sided');
  });

  it('U_a + U_b = n_a n_b and swapping groups mirrors one-sided p (identity)', () => {
    const a = generate({ seed: 3, n: 25, round: 1 });
    const b = generate({ seed: 4, n: 31, mean: 0.4, round: 1 });
    const ab = mannWhitney(a, b, { alternative: 'greater' });
    const ba = mannWhitney(b, a, { alternative: 'less' });
    expect(ab.u + mannWhitney(b, a).u).toBe(25 * 31);
    expectClose(ab.p, ba.p, 1e-12, 0, 'p');
    expectClose(ab.z, -ba.z, 1e-12, 0, 'z');
  });

  it('exact and normal methods agree closely for moderate samples without ties', () => {
    const a = generate({ seed: 10, n: 8 });
    const b = generate({ seed: 11, n: 60, mean: 0.5 });
    const exact = mannWhitney(a, b, { method: 'exact' });
    const normal = mannWhitney(a, b, { method: 'normal' });
    expect(Math.abs(exact.p - normal.p)).toBeLessThan(0.01);
    // The z reported with the exact method is the normal approximation's z.
    expect(exact.z).toBe(normal.z);
  });

  it('continuity correction can be switched off', () => {
    const a = generate({ seed: 12, n: 30 });
    const b = generate({ seed: 13, n: 30, mean: 0.3 });
    const on = mannWhitney(a, b, { method: 'normal' });
    const off = mannWhitney(a, b, { method: 'normal', continuity: false });
    expect(off.p).toBeLessThan(on.p);
  });

  it('refuses the exact method with ties, constant data and bad options', () => {
    expect(() => mannWhitney([1, 2, 2], [3, 4], { method: 'exact' })).toThrow(/without ties/);
    expect(() => mannWhitney([2, 2], [2, 2, 2])).toThrow(/every value in both groups is the same/);
    expect(() => mannWhitney([1, 2], [3, 4], { method: 'permutation' as never })).toThrow(/method must be/);
    expect(() => mannWhitney([1], [3, 4])).toThrow(/group a has fewer than 2/);
    expect(() => mannWhitney([1, 2], [3, NaN])).toThrow(/group b has a non-finite/);
  });
});

/**
 * Group a's mid-rank sum and Σ(t³ − t) from the count of each distinct value in each group, as the database aggregates
 * them: a value with c_a, c_b copies and `below` smaller values has mid-rank below + (c_a + c_b + 1)/2.
 */
function ranksFromCounts(a: ArrayLike<number>, b: ArrayLike<number>) {
  const counts = new Map<number, [number, number]>();
  for (const v of Array.from(a)) (counts.get(v) ?? counts.set(v, [0, 0]).get(v)!)[0]++;
  for (const v of Array.from(b)) (counts.get(v) ?? counts.set(v, [0, 0]).get(v)!)[1]++;
  let below = 0;
  let rankSumA = 0;
  let tieTerm = 0;
  for (const v of [...counts.keys()].sort((x, y) => x - y)) {
    const [ca, cb] = counts.get(v)!;
    const t = ca + cb;
    rankSumA += ca * (below + (t + 1) / 2);
    tieTerm += t * t * t - t;
    below += t;
  }
  return { n1: a.length, n2: b.length, rankSumA, tieTerm };
}

describe('mannWhitneyFromRanks against the SciPy fixture (scipy.stats.mannwhitneyu) and mannWhitney on the values', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id} from its rank sum and ties`, () => {
      const a = generate(c.a);
      const b = generate(c.b);
      const ref = c.expected.mannWhitney;
      const r = mannWhitneyFromRanks(ranksFromCounts(a, b), { alternative: c.alternative });
      expect(r.method).toBe(ref.method);
      expect(r.u).toBe(ref.u);
      expectP(r.p, ref.p, `${c.id} p`);
      const fromValues = mannWhitney(a, b, { alternative: c.alternative });
      expect(r.z).toBe(fromValues.z);
      expect(r.p).toBe(fromValues.p);
    });
  }

  it('refuses rank sums outside what the group sizes allow (identity: n₁(n₁+1)/2 ≤ R_a ≤ that + n₁n₂)', () => {
    expect(() => mannWhitneyFromRanks({ n1: 3, n2: 3, rankSumA: 5, tieTerm: 0 })).toThrow(/between 6 and 15/);
    expect(() => mannWhitneyFromRanks({ n1: 3, n2: 3, rankSumA: 16, tieTerm: 0 })).toThrow(/between 6 and 15/);
    expect(() => mannWhitneyFromRanks({ n1: 1, n2: 3, rankSumA: 1, tieTerm: 0 })).toThrow(/n1 must be an integer >= 2/);
    expect(() => mannWhitneyFromRanks({ n1: 3, n2: 3, rankSumA: 6, tieTerm: -1 })).toThrow(/tieTerm/);
  });
});
