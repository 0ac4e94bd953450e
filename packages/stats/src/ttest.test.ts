import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, expectP, expectStat, fixture, generate } from '../test/fixtures.js';
import { StatsInputError } from './errors.js';
import { studentT, studentTFromSummary, welchT, welchTFromSummary, type TTestResult } from './ttest.js';
import type { TTestRef } from '../test/fixtures.js';

function checkAgainst(r: TTestResult, ref: TTestRef, label: string) {
  expectStat(r.t, ref.t, `${label} t`);
  expectStat(r.df, ref.df, `${label} df`);
  expectP(r.p, ref.p, `${label} p`);
  expectStat(r.meanDifference, ref.meanDifference, `${label} mean difference`);
  expectStat(r.se, ref.se, `${label} se`);
  expectStat(r.ci[0], ref.ci[0], `${label} ci lower`, 1e-10, 1e-13);
  expectStat(r.ci[1], ref.ci[1], `${label} ci upper`, 1e-10, 1e-13);
}

describe('welchT and studentT against the SciPy fixture (scipy.stats.ttest_ind; exact where SciPy loses digits)', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id}: ${c.description} (${c.alternative}, ${c.confidence})`, () => {
      const a = generate(c.a);
      const b = generate(c.b);
      const opts = { alternative: c.alternative, confidence: c.confidence };
      for (const [name, fn] of [
        ['welch', welchT],
        ['student', studentT],
      ] as const) {
        const ref = c.expected[name];
        if (ref === null) {
          expect(() => fn(a, b, opts)).toThrow(StatsInputError);
          continue;
        }
        const r = fn(a, b, opts);
        checkAgainst(r, ref, `${c.id} ${name}`);
        expect(r.alternative).toBe(c.alternative);
        expect(r.confidence).toBe(c.confidence);
        expect(r.method).toBe(name);
      }
    });
  }

  it('covers the required shapes: ≥ 40 cases, tiny n, n = 100 000, one-sided alternatives', () => {
    const cases = fixture.twoSample;
    expect(cases.length).toBeGreaterThanOrEqual(40);
    expect(cases.some((c) => c.n1 === 2 && c.n2 === 2)).toBe(true);
    expect(cases.some((c) => c.n1 >= 100000 && c.n2 >= 100000)).toBe(true);
    expect(cases.filter((c) => c.alternative !== 'two-sided').length).toBeGreaterThanOrEqual(6);
  });

  it('records where SciPy itself missed the exact value (only the large-offset cases)', () => {
    for (const note of fixture.scipyMissedExact) expect(note).toMatch(/^offset-/);
  });
});

describe('NIST/SEMATECH e-Handbook §1.3.5.3 (AUTO83B, published summary statistics — T)', () => {
  const us = { n: 249, mean: 20.14458, sd: 6.4147 };
  const japan = { n: 79, mean: 30.48101, sd: 6.10771 };

  it('pooled form: T = −12.62059 on 326 df, two-sided critical value 1.9673', () => {
    const r = studentTFromSummary(us, japan);
    expectClose(r.t, -12.62059, 0, 5e-6, 'T');
    expect(r.df).toBe(326);
    // The handbook's pooled SD 6.34260 is s_p = se / √(1/n1 + 1/n2).
    expectClose(r.se / Math.sqrt(1 / 249 + 1 / 79), 6.3426, 0, 5e-6, 'pooled SD');
    // Critical value 1.9673 = the half-width of the 95% interval divided by the SE.
    expectClose((r.ci[1] - r.meanDifference) / r.se, 1.9673, 0, 5e-5, 'critical value');
  });

  it('unequal-variance form: T ≈ −12.9463, ν ≈ 136.87', () => {
    const r = welchTFromSummary(us, japan);
    expectClose(r.t, -12.9463, 0, 5e-5, 'T');
    expectClose(r.df, 136.87, 0, 5e-3, 'ν');
  });
});

describe('identities', () => {
  it('Welch equals Student when n and the variances are equal (identity)', () => {
    const a = [1, 2, 3, 4, 5, 6.5];
    const b = [3.5, 5, 6, 7, 8, 9]; // same variance as a: b = a shifted by 2.5, reordered
    const w = welchT(a, b);
    const s = studentT(a, b);
    expectClose(w.t, s.t, 1e-14, 0, 't');
    expectClose(w.df, s.df, 1e-14, 0, 'df');
    expectClose(w.p, s.p, 1e-13, 0, 'p');
    expectClose(w.ci[0], s.ci[0], 1e-13, 0, 'ci');
  });

  it('summary form equals raw-data form (identity)', () => {
    const a = generate({ seed: 5, n: 30, mean: 10, sd: 2 });
    const b = generate({ seed: 6, n: 41, mean: 11, sd: 3 });
    const sd = (x: Float64Array) => {
      const m = x.reduce((p, v) => p + v, 0) / x.length;
      return Math.sqrt(x.reduce((p, v) => p + (v - m) ** 2, 0) / (x.length - 1));
    };
    const mean = (x: Float64Array) => x.reduce((p, v) => p + v, 0) / x.length;
    const fromSummary = welchTFromSummary({ n: 30, mean: mean(a), sd: sd(a) }, { n: 41, mean: mean(b), sd: sd(b) }, { alternative: 'less' });
    const raw = welchT(a, b, { alternative: 'less' });
    expectClose(fromSummary.t, raw.t, 1e-12, 0, 't');
    expectClose(fromSummary.p, raw.p, 1e-11, 0, 'p');
  });

  it('one-sided p-values add to 1 and the two-sided p is twice the smaller (identity)', () => {
    const a = generate({ seed: 7, n: 15, mean: 0, sd: 1 });
    const b = generate({ seed: 8, n: 19, mean: 0.6, sd: 1.4 });
    const g = welchT(a, b, { alternative: 'greater' }).p;
    const l = welchT(a, b, { alternative: 'less' }).p;
    const two = welchT(a, b).p;
    expectClose(g + l, 1, 1e-14, 0, 'sum');
    expectClose(two, 2 * Math.min(g, l), 1e-13, 0, 'two-sided');
  });
});

const sample = fc.array(fc.double({ min: -1000, max: 1000, noNaN: true }), { minLength: 2, maxLength: 25 });
const spread = (x: number[]) => Math.max(...x) - Math.min(...x) > 1e-3;

describe('invariances (fast-check properties)', () => {
  it('t is unchanged by a common shift and a positive scale of both groups', () => {
    fc.assert(
      fc.property(sample, sample, fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: 1e-3, max: 1e3, noNaN: true }), (a, b, shift, scale) => {
        fc.pre(spread(a) && spread(b));
        for (const fn of [welchT, studentT]) {
          const r = fn(a, b);
          const s = fn(
            a.map((v) => v * scale + shift),
            b.map((v) => v * scale + shift),
          );
          expectClose(s.t, r.t, 1e-8, 1e-9, 't');
          expectClose(s.df, r.df, 1e-8, 0, 'df');
          expectClose(s.p, r.p, 1e-6, 1e-12, 'p');
        }
      }),
      { numRuns: 200 },
    );
  });

  it('swapping the groups negates t and the difference, keeps df and the two-sided p, and mirrors one-sided p', () => {
    fc.assert(
      fc.property(sample, sample, (a, b) => {
        fc.pre(spread(a) && spread(b));
        const ab = welchT(a, b);
        const ba = welchT(b, a);
        expect(ba.t).toBeCloseTo(-ab.t, 10);
        expectClose(ba.df, ab.df, 1e-12, 0, 'df');
        expectClose(ba.p, ab.p, 1e-10, 1e-15, 'p');
        expectClose(welchT(b, a, { alternative: 'less' }).p, welchT(a, b, { alternative: 'greater' }).p, 1e-10, 1e-15, 'one-sided');
      }),
      { numRuns: 200 },
    );
  });
});

describe('input validation', () => {
  it('refuses a group with fewer than 2 values, naming the group', () => {
    expect(() => welchT([1], [1, 2])).toThrow(/group a has fewer than 2 finite values/);
    expect(() => studentT([1, 2], [])).toThrow(/group b has fewer than 2/);
  });

  it('refuses NaN and Infinity with the index', () => {
    expect(() => welchT([1, NaN, 3], [1, 2])).toThrow(/group a has a non-finite value \(NaN\) at index 1/);
    expect(() => welchT([1, 2], Float64Array.from([1, Infinity]))).toThrow(/group b has a non-finite value \(Infinity\)/);
    expect(() => welchT([1, 2, null as unknown as number], [1, 2])).toThrow(StatsInputError);
  });

  it('refuses data where both groups have zero variance', () => {
    expect(() => welchT([2, 2, 2], [3, 3])).toThrow(/both groups have zero variance/);
    expect(() => studentT([2, 2], [2, 2])).toThrow(StatsInputError);
  });

  it('allows one constant group in Welch (its SE comes from the other)', () => {
    const r = welchT([5, 5, 5], [4, 6, 8]);
    expect(r.df).toBeCloseTo(2, 12);
  });

  it('refuses bad options', () => {
    expect(() => welchT([1, 2], [3, 4], { alternative: 'bigger' as never })).toThrow(/alternative must be one of/);
    expect(() => welchT([1, 2], [3, 5], { confidence: 95 })).toThrow(/confidence must be/);
    expect(() => welchT([1, 2], [3, 5], { alternate: 'less' } as never)).toThrow(/unknown option "alternate"/);
    expect(() => welchTFromSummary({ n: 1, mean: 0, sd: 1 }, { n: 5, mean: 1, sd: 1 })).toThrow(/group a has fewer than 2/);
    expect(() => studentTFromSummary({ n: 4, mean: 0, sd: -1 }, { n: 5, mean: 1, sd: 1 })).toThrow(/sd must be finite and >= 0/);
  });

  it('never returns NaN: every field of a valid result is a number', () => {
    const r = welchT([1, 2, 3], [4, 5, 7], { alternative: 'greater' });
    for (const v of [r.t, r.df, r.p, r.se, r.meanDifference, r.ci[0]]) expect(Number.isNaN(v)).toBe(false);
    expect(r.ci[1]).toBe(Infinity);
  });
});

describe('data far below 1 in magnitude (scale before squaring)', () => {
  // t, df and p do not depend on the unit; a power of two rescales exactly, 1e-80 to within one rounding per value.
  const ids = ['unequal-5-12', 'unequal-var-small-large', 'scores-480-500', 'constant-group', 'near-zero-t'];
  for (const c of fixture.twoSample.filter((x) => ids.includes(x.id))) {
    for (const [label, factor] of [
      ['2^-1000 ≈ 9e-302', 2 ** -1000],
      ['1e-80', 1e-80],
    ] as const) {
      it(`${c.id} × ${label}: t, df and p are the SciPy fixture's, the mean difference and SE scale`, () => {
        const a = generate(c.a).map((v) => v * factor);
        const b = generate(c.b).map((v) => v * factor);
        const opts = { alternative: c.alternative, confidence: c.confidence };
        for (const [name, fn] of [
          ['welch', welchT],
          ['student', studentT],
        ] as const) {
          const ref = c.expected[name] as TTestRef;
          const r = fn(a, b, opts);
          expectStat(r.t, ref.t, `${name} t`, 1e-10, 1e-13);
          expectStat(r.df, ref.df, `${name} df`);
          expectP(r.p, ref.p, `${name} p`);
          expectClose(r.meanDifference / factor, ref.meanDifference.value as number, 1e-10, 1e-13, `${name} mean difference`);
          expectClose(r.se / factor, ref.se.value as number, 1e-10, 0, `${name} se`);
          if (Number.isFinite(r.ci[0])) expectClose(r.ci[0] / factor, ref.ci[0].value as number, 1e-10, 1e-13, `${name} ci lower`);
        }
      });
    }
  }

  it('from summaries, SDs of 1e-300 or 1e200 give the same t, df and p as SDs of 1 (NIST §1.3.5.3 data, rescaled)', () => {
    const a = { n: 249, mean: 20.14458, sd: 6.4147 };
    const b = { n: 79, mean: 30.48101, sd: 6.10771 };
    const base = welchTFromSummary(a, b);
    for (const f of [1e-300, 1e200]) {
      const r = welchTFromSummary({ ...a, mean: a.mean * f, sd: a.sd * f }, { ...b, mean: b.mean * f, sd: b.sd * f });
      expectClose(r.t, base.t, 1e-13, 0, 't');
      expectClose(r.df, base.df, 1e-13, 0, 'df');
      expectClose(r.p, base.p, 1e-12, 0, 'p');
      expectClose(r.se / f, base.se, 1e-13, 0, 'se');
      const s = studentTFromSummary({ ...a, mean: a.mean * f, sd: a.sd * f }, { ...b, mean: b.mean * f, sd: b.sd * f });
      expectClose(s.t, studentTFromSummary(a, b).t, 1e-13, 0, 'student t');
    }
  });

  it('still refuses two constant groups, however small (not a false "zero variance" from underflow)', () => {
    expect(() => welchT([1e-300, 1e-300, 1e-300], [2e-300, 2e-300])).toThrow(/both groups have zero variance/);
    expect(() => welchT([1e-300, 2e-300, 3e-300], [2e-300, 2e-300])).not.toThrow();
  });
});
