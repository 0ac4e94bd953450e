import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, expectP, expectStat, fixture, generate } from '../test/fixtures.js';
import { hedgesG } from './effect-size.js';
import { ancova, ancovaFromSummaries, mergePairedSummaries, ols, oneWayAnova, type PairedSummary } from './regression.js';
import { studentT } from './ttest.js';

describe('ols against the statsmodels fixture (sm.OLS; exact rational normal equations as cross-check)', () => {
  for (const c of fixture.regression) {
    it(`${c.id}: ${c.description}`, () => {
      const r = ols(c.y, c.X);
      expect(r.df).toBe(c.expected.df);
      c.expected.coefficients.forEach((ref, j) => expectStat(r.coefficients[j], ref, `b${j}`, 1e-10, 1e-12));
      c.expected.se.forEach((ref, j) => expectStat(r.se[j], ref, `se${j}`));
      c.expected.t.forEach((ref, j) => expectStat(r.t[j], ref, `t${j}`, 1e-10, 1e-12));
      c.expected.p.forEach((ref, j) => expectP(r.p[j], ref, `p${j}`));
      expectStat(r.r2, c.expected.r2, 'R²');
    });
  }
});

describe('ancova against the statsmodels fixture (arm coefficient = adjusted difference)', () => {
  for (const c of fixture.regression.filter((x) => x.id.startsWith('ancova-'))) {
    it(c.id, () => {
      const arm = c.X.map((row) => row[0]);
      const covs = c.X[0].length > 1 ? c.X[0].slice(1).map((_, j) => c.X.map((row) => row[j + 1])) : undefined;
      const r = ancova(c.y, arm, covs);
      expectStat(r.adjustedDifference, c.expected.coefficients[1], 'adjusted difference', 1e-10, 1e-12);
      expectStat(r.se, c.expected.se[1], 'se');
      expectStat(r.t, c.expected.t[1], 't');
      expectP(r.p, c.expected.p[1], 'p');
      expect(r.df).toBe(c.expected.df);
      // t of the arm coefficient is the slope over its SE (identity).
      expect(r.t).toBe(r.adjustedDifference / r.se);
    });
  }
});

describe('identities', () => {
  it('ANCOVA without a covariate equals Student’s pooled t exactly', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: -50, max: 50, noNaN: true }), { minLength: 2, maxLength: 20 }),
        fc.array(fc.double({ min: -50, max: 50, noNaN: true }), { minLength: 2, maxLength: 20 }),
        (a, b) => {
          fc.pre(Math.max(...a, ...b) - Math.min(...a, ...b) > 1e-3);
          const y = [...a, ...b];
          const arm = [...a.map(() => 1), ...b.map(() => 0)];
          const s = studentT(a, b);
          // |t| beyond 1e6 means near-zero within-group spread: no method is exact to 1e-10 there.
          fc.pre(Math.abs(s.t) < 1e6);
          const r = ancova(y, arm);
          expectClose(r.t, s.t, 1e-10, 1e-12, 't');
          expectClose(r.adjustedDifference, s.meanDifference, 1e-10, 1e-12, 'difference');
          expectClose(r.se, s.se, 1e-10, 0, 'se');
          expect(r.df).toBe(s.df);
          expectClose(r.p, s.p, 1e-8, 1e-15, 'p');
        },
      ),
      { numRuns: 200 },
    );
  });

  it('t² = F for two groups in one-way ANOVA', () => {
    const a = generate({ seed: 1, n: 23, mean: 5, sd: 2 });
    const b = generate({ seed: 2, n: 31, mean: 6, sd: 2 });
    const t = studentT(a, b);
    const f = oneWayAnova([a, b]);
    expectClose(f.f, t.t * t.t, 1e-12, 0, 'F');
    expectClose(f.p, t.p, 1e-11, 0, 'p');
  });

  it('the ANCOVA effect size without covariates is Hedges’ g (WWC: adjusted difference / unadjusted pooled SD)', () => {
    const a = generate({ seed: 3, n: 15 });
    const b = generate({ seed: 4, n: 18, mean: 0.5 });
    const r = ancova([...a, ...b], [...a].map(() => 1).concat([...b].map(() => 0)));
    expectClose(r.g, hedgesG(a, b).g, 1e-12, 0, 'g');
  });

  it('adjusting for a pretest that predicts the outcome shrinks the SE of the arm difference', () => {
    const c = fixture.regression.find((x) => x.id === 'ancova-pretest-60')!;
    const arm = c.X.map((row) => row[0]);
    const adjusted = ancova(c.y, arm, c.X.map((row) => row[1]));
    const unadjusted = ancova(c.y, arm);
    expect(adjusted.se).toBeLessThan(unadjusted.se / 2);
  });
});

describe('NIST/SEMATECH e-Handbook §7.4.3 one-way ANOVA (F = 9.59 on 2 and 12 df — T; data as remembered — M)', () => {
  it('reproduces F = 9.59', () => {
    const r = oneWayAnova([
      [6.9, 5.4, 5.8, 4.6, 4.0],
      [8.3, 6.8, 7.8, 9.2, 6.5],
      [8.0, 10.5, 8.1, 6.9, 9.3],
    ]);
    expect([r.df1, r.df2]).toEqual([2, 12]);
    expectClose(r.f, 9.59, 0, 0.005, 'F');
  });
});

describe('input validation', () => {
  it('refuses rank-deficient designs, ragged rows and mismatched lengths', () => {
    expect(() => ols([1, 2, 3, 4], [[1], [1], [1], [1]])).toThrow(/column 1 of X is constant or a linear combination/);
    expect(() => ols([1, 2, 3, 5], [[1, 2], [2, 4], [3, 6], [4, 8.0000000000001]])).toThrow(/rank-deficient/);
    expect(() => ols([1, 2, 3], [[1], [2]])).toThrow(/3 values/);
    expect(() => ols([1, 2, 3], [[1], [2, 3], [4]])).toThrow(/row 1/);
    expect(() => ols([1, 2, 3], [[1], [NaN], [3]])).toThrow(/not a finite number/);
    expect(() => ols([1, 2], [[1], [2]])).toThrow(/more observations/);
  });

  it('ancova refuses bad arm codes, tiny arms and mismatched covariates', () => {
    expect(() => ancova([1, 2, 3, 4], [0, 1, 2, 1])).toThrow(/arm\[2\] must be 0/);
    expect(() => ancova([1, 2, 3, 4, 5], [0, 1, 1, 1, 1])).toThrow(/each arm needs at least 2/);
    expect(() => ancova([1, 2, 3, 4, 5], [0, 0, 1, 1, 1], [1, 2, 3])).toThrow(/3 values but y has 5/);
    expect(() => ancova([1, 2, 3, 4], [0, 0, 1, 1], undefined, { alternative: 'up' as never })).toThrow(/alternative/);
  });

  it('accepts booleans for the arm and fits without an intercept when asked', () => {
    const r = ancova([1, 2, 4, 5], [false, false, true, true]);
    expectClose(r.adjustedDifference, 3, 1e-14, 0, 'difference');
    const noIntercept = ols([2, 4, 6.1], [[1], [2], [3]], { intercept: false });
    expect(noIntercept.coefficients).toHaveLength(1);
    expect(noIntercept.intercept).toBe(false);
  });
});

/** One arm's paired summary by two plain passes. */
function pairedOf(y: number[], x: number[]): PairedSummary {
  const n = y.length;
  const meanY = y.reduce((p, v) => p + v, 0) / n;
  const meanX = x.reduce((p, v) => p + v, 0) / n;
  let syy = 0;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    syy += (y[i] - meanY) ** 2;
    sxx += (x[i] - meanX) ** 2;
    sxy += (y[i] - meanY) * (x[i] - meanX);
  }
  return { n, meanY, meanX, syy, sxx, sxy };
}

function armsOf(c: { y: number[]; X: number[][] }) {
  const pick = (arm: number) => {
    const rows = c.X.map((row, i) => ({ arm: row[0], x: row[1], y: c.y[i] })).filter((r) => r.arm === arm);
    return { y: rows.map((r) => r.y), x: rows.map((r) => r.x) };
  };
  return { intervention: pick(1), comparison: pick(0) };
}

describe('ancovaFromSummaries against the statsmodels fixture and ancova on the rows', () => {
  for (const c of fixture.regression.filter((x) => x.id.startsWith('ancova-') && x.X[0].length === 2)) {
    it(`${c.id} from each arm's sums of squares and products`, () => {
      const { intervention, comparison } = armsOf(c);
      const r = ancovaFromSummaries(pairedOf(intervention.y, intervention.x), pairedOf(comparison.y, comparison.x));
      expectStat(r.adjustedDifference, c.expected.coefficients[1], 'adjusted difference', 1e-10, 1e-12);
      expectStat(r.covariateSlopes[0], c.expected.coefficients[2], 'slope', 1e-10, 1e-12);
      expectStat(r.se, c.expected.se[1], 'se');
      expectStat(r.covariateSes[0], c.expected.se[2], 'slope se');
      expectStat(r.t, c.expected.t[1], 't');
      expectP(r.p, c.expected.p[1], 'p');
      expectStat(r.r2, c.expected.r2, 'R²');
      expect(r.df).toBe(c.expected.df);
      const rows = ancova(c.y, c.X.map((row) => row[0]), c.X.map((row) => row[1]));
      expectClose(r.g, rows.g, 1e-10, 1e-12, 'g');
      expectClose(r.ci[0], rows.ci[0], 1e-10, 1e-12, 'ci low');
      expectClose(r.ci[1], rows.ci[1], 1e-10, 1e-12, 'ci high');
      expect([r.n1, r.n2]).toEqual([rows.n1, rows.n2]);
    });
  }

  it('merging the summaries of parts equals the summary of the whole (identity)', () => {
    const c = fixture.regression.find((x) => x.id === 'ancova-scores-near-1000')!;
    const { intervention } = armsOf(c);
    const whole = pairedOf(intervention.y, intervention.x);
    const parts = [0, 7, 8, 19, intervention.y.length].slice(1).map((end, i, ends) => {
      const start = i === 0 ? 0 : ends[i - 1];
      return pairedOf(intervention.y.slice(start, end), intervention.x.slice(start, end));
    });
    const merged = mergePairedSummaries(parts);
    expect(merged.n).toBe(whole.n);
    for (const key of ['meanY', 'meanX', 'syy', 'sxx', 'sxy'] as const) expectClose(merged[key], whole[key], 1e-12, 1e-9, key);
  });

  it('refuses a covariate constant within both arms and arms of one pair', () => {
    const flat = { n: 5, meanY: 3, meanX: 1, syy: 4, sxx: 0, sxy: 0 };
    expect(() => ancovaFromSummaries(flat, flat)).toThrow(/constant within both arms/);
    expect(() => ancovaFromSummaries({ ...flat, n: 1 }, { ...flat, sxx: 2 })).toThrow(/intervention.n must be an integer >= 2/);
    expect(() => mergePairedSummaries([])).toThrow(/at least one/);
  });
});
