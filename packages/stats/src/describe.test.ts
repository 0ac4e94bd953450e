import { describe as suite, expect, it } from 'vitest';
import { expectClose, expectStat, fixture, generate } from '../test/fixtures.js';
import { describe } from './describe.js';

suite('describe against the fixture (NumPy percentile, linear; SciPy skew/kurtosis with bias=False; exact moments)', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id}`, () => {
      const x = generate(c.a);
      const ref = c.expected.describe;
      const d = describe(x);
      expect(d.n).toBe(c.n1);
      expectStat(d.mean, ref.mean, 'mean');
      expectStat(d.sd, ref.sd, 'sd');
      expectClose(d.variance, d.sd * d.sd, 1e-14, 0, 'variance');
      expectClose(d.se, d.sd / Math.sqrt(d.n), 1e-15, 0, 'se');
      for (const k of ['min', 'q1', 'median', 'q3', 'max'] as const) expectClose(d[k], ref[k], 1e-14, 0, k);
      if (ref.skewness) expectStat(d.skewness as number, ref.skewness, 'skewness', 1e-9, 1e-12);
      else if (ref.skewness === null) expect(d.skewness).toBeNull();
      if (ref.kurtosis) expectStat(d.kurtosis as number, ref.kurtosis, 'kurtosis', 1e-9, 1e-12);
      else if (ref.kurtosis === null) expect(d.kurtosis).toBeNull();
    });
  }

  it('returns null (not NaN) for skewness and kurtosis of a constant group', () => {
    const d = describe([4, 4, 4, 4, 4]);
    expect(d.sd).toBe(0);
    expect(d.skewness).toBeNull();
    expect(d.kurtosis).toBeNull();
  });

  it('quartiles follow Hyndman & Fan definition 7 (hand-computed)', () => {
    const d = describe([1, 2, 3, 4, 10]);
    expect([d.q1, d.median, d.q3]).toEqual([2, 3, 4]);
    const e = describe([1, 2, 3, 4]);
    expect([e.q1, e.median, e.q3]).toEqual([1.75, 2.5, 3.25]);
  });

  it('refuses fewer than 2 values and non-finite values', () => {
    expect(() => describe([3])).toThrow(/fewer than 2/);
    expect(() => describe([3, Infinity])).toThrow(/non-finite/);
  });
});

suite('describe of values near 1e-170 (scale before squaring)', () => {
  for (const c of fixture.twoSample.filter((x) => ['unequal-8-30', 'skewed-40-40', 'scores-480-500'].includes(x.id))) {
    it(`${c.id} × 2^-565 (≈ 1.5e-170): SD and mean scale exactly, skewness and kurtosis are unchanged (SciPy fixture)`, () => {
      const factor = 2 ** -565;
      const ref = c.expected.describe;
      const d = describe(generate(c.a).map((v) => v * factor));
      expectClose(d.sd / factor, ref.sd.value as number, 1e-10, 0, 'sd');
      expectClose(d.se / factor, (ref.sd.value as number) / Math.sqrt(d.n), 1e-10, 0, 'se');
      expectClose(d.mean / factor, ref.mean.value as number, 1e-12, 0, 'mean');
      expectClose(d.median / factor, ref.median, 1e-14, 0, 'median');
      expectStat(d.skewness as number, ref.skewness ?? null, 'skewness', 1e-9, 1e-12);
      expectStat(d.kurtosis as number, ref.kurtosis ?? null, 'kurtosis', 1e-9, 1e-12);
      // The variance itself (≈ 1e-340) is below the smallest double: its nearest double is 0.
      expect(d.variance).toBe(0);
    });
  }
});
