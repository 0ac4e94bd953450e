import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { expectClose, expectP, expectStat, fixture, generate, type DataSpec } from '../test/fixtures.js';
import { fQuantile, fSf } from './distributions.js';
import { StatsInputError } from './errors.js';
import { summarize, twoSum } from './summary.js';
import { levene, leveneFromDeviations, varianceRatioF, varianceRatioFFromSummary } from './variance.js';

/** Straightforward Levene/Brown–Forsythe by sorting and two passes — the reference for the single-pass large-n path. */
function naiveLevene(groups: Float64Array[], center: 'mean' | 'median'): number {
  const zs = groups.map((x) => {
    const s = Float64Array.from(x).sort();
    const n = s.length;
    const c =
      center === 'median'
        ? n % 2
          ? s[(n - 1) / 2]
          : (s[n / 2 - 1] + s[n / 2]) / 2
        : x.reduce((p, v) => p + v, 0) / n;
    return Array.from(x, (v) => Math.abs(v - c));
  });
  const means = zs.map((z) => z.reduce((p, v) => p + v, 0) / z.length);
  const N = zs.reduce((p, z) => p + z.length, 0);
  const grand = zs.reduce((p, z, i) => p + z.length * means[i], 0) / N;
  let within = 0;
  zs.forEach((z, i) => z.forEach((v) => (within += (v - means[i]) ** 2)));
  const between = zs.reduce((p, z, i) => p + z.length * (means[i] - grand) ** 2, 0);
  return ((N - groups.length) / (groups.length - 1)) * (between / within);
}

describe('levene against the SciPy fixture (scipy.stats.levene, center mean and median)', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id}: ${c.description}`, () => {
      const a = generate(c.a);
      const b = generate(c.b);
      for (const center of ['mean', 'median'] as const) {
        const ref = c.expected.levene[center];
        if (ref === null) {
          expect(() => levene([a, b], { center })).toThrow(StatsInputError);
          continue;
        }
        const r = levene([a, b], { center });
        expectStat(r.statistic, ref.statistic, `${c.id} ${center} W`);
        expectP(r.p, ref.p, `${c.id} ${center} p`);
        expect(r.df1).toBe(1);
        expect(r.df2).toBe(c.n1 + c.n2 - 2);
        expect(r.center).toBe(center);
      }
    });
  }
});

describe('varianceRatioF against the SciPy fixture (scipy.stats.f, two-sided)', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id}`, () => {
      const a = generate(c.a);
      const b = generate(c.b);
      const ref = c.expected.varianceRatio;
      if (ref === null) {
        expect(() => varianceRatioF(a, b)).toThrow(/zero variance/);
        return;
      }
      const r = varianceRatioF(a, b);
      expectStat(r.f, ref.f, `${c.id} F`);
      expectP(r.p, ref.p, `${c.id} p`);
    });
  }
});

describe('NIST/SEMATECH e-Handbook published values', () => {
  it('§1.3.5.10 Levene (GEAR, median-centred, W = 1.705910 on 9 and 90 df): critical value 1.9855, W not significant', () => {
    // The GEAR data set was not in the stored pages, so the published summary values are checked (standards.md — T).
    // The handbook prints 1.9855 (truncated from 1.98559…).
    expectClose(fQuantile(0.95, 9, 90), 1.9855, 0, 1e-4, 'F(0.95; 9, 90)');
    expect(fSf(1.70591, 9, 90)).toBeGreaterThan(0.05);
    // Cross-check of the same tail probability against the mpmath value stored in the fixture.
    const point = fixture.distributions.fSf.find(([f, d1, d2]) => f === 1.70591 && d1 === 9 && d2 === 90);
    expect(point).toBeDefined();
    expectClose(fSf(1.70591, 9, 90), point![3], 1e-12, 0, 'p');
  });

  it('§1.3.5.9 F test (JAHANMI2, SDs 65.54909 vs 61.85425, n 240 each): F = 1.123037 on 239/239 df', () => {
    const r = varianceRatioFFromSummary({ n: 240, mean: 0, sd: 65.54909 }, { n: 240, mean: 0, sd: 61.85425 });
    expectClose(r.f, 1.123037, 0, 5e-7, 'F');
    expect([r.df1, r.df2]).toEqual([239, 239]);
  });
});

describe('large-sample paths (identity with a sort-and-two-pass computation)', () => {
  it('the single-pass median path (n ≥ 4096) equals sorting and two passes', () => {
    for (const [n1, n2, seed] of [
      [4096, 5000, 1],
      [100000, 99999, 2],
      [250000, 250000, 3],
    ]) {
      const a = generate({ seed, n: n1, mean: 250, sd: 40 });
      const b = generate({ seed: seed + 100, n: n2, mean: 251, sd: 44, round: 0 });
      expectClose(levene([a, b]).statistic, naiveLevene([a, b], 'median'), 1e-10, 0, `n = ${n1}`);
      expectClose(levene([a, b], { center: 'mean' }).statistic, naiveLevene([a, b], 'mean'), 1e-10, 0, `mean, n = ${n1}`);
    }
  });

  it('handles sorted, reversed and heavily tied large groups (fallback paths)', () => {
    const n = 20000;
    const sorted = Float64Array.from({ length: n }, (_, i) => i);
    const reversed = Float64Array.from({ length: n }, (_, i) => n - i);
    const ties = Float64Array.from({ length: n }, (_, i) => (i % 3 === 0 ? 5 : i % 7));
    const r = levene([sorted, reversed, ties]);
    expectClose(r.statistic, naiveLevene([sorted, reversed, ties], 'median'), 1e-10, 0, 'W');
    expect(r.df1).toBe(2);
  });

  it('accepts three or more groups (k − 1 and N − k df)', () => {
    const groups = [1, 2, 3, 4].map((s) => generate({ seed: s, n: 12 + s, mean: 0, sd: s }));
    const r = levene(groups, { center: 'mean' });
    expect([r.df1, r.df2]).toEqual([3, 13 + 14 + 15 + 16 - 4]);
    expectClose(r.statistic, naiveLevene(groups, 'mean'), 1e-12, 0, 'W');
  });
});

describe('input validation', () => {
  it('refuses fewer than two groups, small groups and non-finite values, naming the group', () => {
    expect(() => levene([[1, 2, 3]])).toThrow(/at least 2 groups/);
    expect(() => levene([[1, 2, 3], [4]])).toThrow(/group 2 has fewer than 2/);
    expect(() => levene([[1, 2, 3], [4, NaN]])).toThrow(/group 2 has a non-finite value/);
    const big = generate({ seed: 9, n: 10000 });
    big[777] = Infinity;
    expect(() => levene([big, [1, 2, 3]])).toThrow(/group 1 has a non-finite value \(Infinity\) at index 777/);
  });

  it('refuses an unknown centre and unknown options', () => {
    expect(() => levene([[1, 2], [3, 5]], { center: 'trimmed' as never })).toThrow(/center must be/);
    expect(() => levene([[1, 2], [3, 5]], { centre: 'mean' } as never)).toThrow(/unknown option "centre"/);
  });

  it('refuses groups whose absolute deviations are all constant', () => {
    expect(() => levene([[1, 3], [5, 9]])).toThrow(/absolute deviations from the median are constant/);
  });

  it('varianceRatioF names the group with zero variance', () => {
    expect(() => varianceRatioF([1, 2, 3], [4, 4, 4])).toThrow(/group b has zero variance/);
  });
});

/**
 * Per group: n, Σ|x − c|/n and Σ(|x − c| − mean)², c the group's mean (with its rounding residual, from summarize) or
 * median, by compensated sums (Neumaier 1974) and a corrected second pass, as the database's exact sums would give.
 */
function deviationsOf(x: Float64Array, center: 'mean' | 'median') {
  const s = Float64Array.from(x).sort();
  const n = s.length;
  const m = summarize(x);
  // The median of an even group is (a + b)/2 exactly: its double plus the rounding error, as the engine keeps it.
  const halves = (a: number, b: number): [number, number] => {
    const [sum, err] = twoSum(a, b);
    return [sum / 2, err / 2];
  };
  const [c, r] = center === 'median' ? (n % 2 ? [s[(n - 1) / 2], 0] : halves(s[n / 2 - 1], s[n / 2])) : [m.mean, m.meanResidual ?? 0];
  const sum = (f: (v: number) => number) => {
    let t = 0;
    let e = 0;
    for (const v of x) {
      const y = f(v);
      const u = t + y;
      e += Math.abs(t) >= Math.abs(y) ? t - u + y : y - u + t;
      t = u;
    }
    return t + e;
  };
  const z = (v: number) => Math.abs(v - c - r);
  const first = sum(z) / n;
  const correction = sum((v) => z(v) - first);
  const meanDeviation = first + correction / n;
  return { n, meanDeviation, ssDeviation: sum((v) => (z(v) - meanDeviation) ** 2) };
}

describe('leveneFromDeviations against the SciPy fixture (scipy.stats.levene) and levene on the values', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id} from each group's absolute deviations`, () => {
      const a = generate(c.a);
      const b = generate(c.b);
      for (const center of ['mean', 'median'] as const) {
        const ref = c.expected.levene[center];
        const groups = [deviationsOf(a, center), deviationsOf(b, center)];
        if (ref === null) {
          expect(() => leveneFromDeviations(groups, center)).toThrow(StatsInputError);
          continue;
        }
        const r = leveneFromDeviations(groups, center);
        expectStat(r.statistic, ref.statistic, `${c.id} ${center} W`);
        expectP(r.p, ref.p, `${c.id} ${center} p`);
        expect(r.df2).toBe(c.n1 + c.n2 - 2);
        expectClose(r.statistic, levene([a, b], { center }).statistic, 1e-10, 1e-12, `${c.id} ${center} against levene`);
      }
    });
  }

  it('refuses a group of one, negative sums and an unknown centre', () => {
    const ok = { n: 5, meanDeviation: 1, ssDeviation: 2 };
    expect(() => leveneFromDeviations([ok, { ...ok, n: 1 }], 'mean')).toThrow(/group 2.n must be an integer >= 2/);
    expect(() => leveneFromDeviations([ok, { ...ok, ssDeviation: -1 }], 'median')).toThrow(/ssDeviation/);
    expect(() => leveneFromDeviations([ok, ok], 'trimmed' as never)).toThrow(/center must be/);
    expect(() => leveneFromDeviations([ok], 'mean')).toThrow(/at least 2 groups/);
  });
});

describe('Brown–Forsythe with an even group size uses the exact median (exact fractions; make-range-fixtures.py)', () => {
  const range = JSON.parse(readFileSync(new URL('../test/fixtures/range.json', import.meta.url), 'utf8')) as {
    levene: { id: string; description: string; groups: DataSpec[]; statistic: number; p: number; scipyStatistic: number }[];
  };
  for (const c of range.levene) {
    it(`${c.id}: ${c.description}`, () => {
      const groups = c.groups.map((g) => Float64Array.from(generate(g)));
      const r = levene(groups, { center: 'median' });
      expectClose(r.statistic, c.statistic, 1e-10, 0, 'W (exact)');
      expectClose(r.p, c.p, 1e-8, 1e-15, 'p (mpmath)');
      // SciPy rounds the median to double, which is why the exact value is the reference here.
      expect(Math.abs(c.scipyStatistic - c.statistic) / c.statistic).toBeGreaterThan(1e-10);
    });
  }
});

describe('variance tests at the edges of their range', () => {
  it('when group a is constant, then F = 0 and the two-sided p is 0 (P(F ≤ 0) = 0); a constant group b still throws', () => {
    const r = varianceRatioF([5, 5, 5, 5], [1, 2, 4, 8, 9]);
    expect(r.f).toBe(0);
    expect(r.p).toBe(0);
    expect(varianceRatioFFromSummary({ n: 4, mean: 5, sd: 0 }, { n: 5, mean: 4.8, sd: 3.4 }).f).toBe(0);
    expect(() => varianceRatioF([1, 2, 4, 8, 9], [5, 5, 5, 5])).toThrow(/group b has zero variance/);
  });

  for (const c of fixture.twoSample.filter((x) => ['unequal-5-12', 'scores-480-500', 'skewed-large-6000'].includes(x.id))) {
    it(`${c.id} × 2^-1000: Levene (both centres) and F equal the SciPy fixture's`, () => {
      const factor = 2 ** -1000;
      const a = generate(c.a).map((v) => v * factor);
      const b = generate(c.b).map((v) => v * factor);
      for (const center of ['mean', 'median'] as const) {
        const ref = c.expected.levene[center];
        if (ref === null) continue;
        const r = levene([a, b], { center });
        expectStat(r.statistic, ref.statistic, `W ${center}`);
        expectP(r.p, ref.p, `p ${center}`);
      }
      const f = c.expected.varianceRatio;
      if (f !== null) expectStat(varianceRatioF(a, b).f, f.f, 'F');
    });
  }
});
