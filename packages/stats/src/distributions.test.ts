import jstat from 'jstat';
import * as ss from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { expectClose, fixture } from '../test/fixtures.js';
import {
  betaInc,
  chiSquareSf,
  fCdf,
  fSf,
  logBeta,
  logGamma,
  noncentralTCdf,
  noncentralTSf,
  normalCdf,
  normalQuantile,
  normalSf,
  studentTCdf,
  studentTPdf,
  studentTQuantile,
  studentTSf,
  studentTTwoSidedP,
} from './distributions.js';
import { StatsInputError } from './errors.js';

const { jStat } = jstat;
const D = fixture.distributions;
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('against mpmath at 50 digits (fixture "distributions")', () => {
  // Accuracy is about 1e-14 relative for df up to ~1e4 and degrades slowly beyond (rounding in the continued fraction):
  // ~1e-12 at df = 2e5, ~3e-11 at df = 1e7 — still far inside the 1e-8 target for p-values.
  const tolFor = (df: number) => (df <= 1e4 ? 1e-13 : 1e-10);

  it('Student-t upper tail, including far tails and df up to 1e9', () => {
    for (const [t, df, v] of D.tSf) expectClose(studentTSf(t, df), v, tolFor(df), 1e-300, `t=${t} df=${df}`);
  });

  it('normal upper tail to 1e-13 relative (down to 1e-300)', () => {
    for (const [z, v] of D.normalSf) expectClose(normalSf(z), v, 1e-13, 0, `z=${z}`);
  });

  it('F upper tail, including df2 = 2e6', () => {
    for (const [f, d1, d2, v] of D.fSf) expectClose(fSf(f, d1, d2), v, tolFor(d2), 0, `F=${f} (${d1}, ${d2})`);
  });

  it('chi-square upper tail to 1e-12 relative', () => {
    for (const [x, k, v] of D.chiSquareSf) expectClose(chiSquareSf(x, k), v, 1e-12, 0, `x=${x} k=${k}`);
  });

  it('Student-t quantiles (non-integer and very large df)', () => {
    for (const [p, df, v] of D.tQuantile) expectClose(studentTQuantile(p, df), v, tolFor(df) / 10, 0, `p=${p} df=${df}`);
  });

  it('normal quantiles to 1e-14 relative', () => {
    for (const [p, v] of D.normalQuantile) expectClose(normalQuantile(p), v, 1e-14, 1e-300, `p=${p}`);
  });

  it('log-gamma to 1e-14 absolute (relative for large x)', () => {
    for (const [x, v] of D.logGamma) expectClose(logGamma(x), v, 1e-15, 1e-14, `x=${x}`);
  });
});

describe('noncentral t against SciPy 1.10 stats.nct (Boost)', () => {
  for (const { t, df, nc, cdf, sf } of fixture.noncentralT) {
    it(`t=${t}, df=${df}, δ=${nc}`, () => {
      expectClose(noncentralTCdf(t, df, nc), cdf, 1e-11, 1e-15, 'cdf');
      expectClose(noncentralTSf(t, df, nc), sf, 1e-11, 1e-15, 'sf');
    });
  }
});

describe('identities', () => {
  it('cdf + sf = 1 and the two-sided p is twice the smaller tail', () => {
    for (const [t, df] of [
      [1.3, 7],
      [-2.2, 41.5],
      [0.01, 3],
    ]) {
      expectClose(studentTCdf(t, df) + studentTSf(t, df), 1, 1e-15, 0, 'sum');
      expectClose(studentTTwoSidedP(t, df), 2 * Math.min(studentTCdf(t, df), studentTSf(t, df)), 1e-14, 0, 'two-sided');
    }
    expectClose(fCdf(2.5, 3, 17) + fSf(2.5, 3, 17), 1, 1e-15, 0, 'F');
  });

  it('t with 1 df is Cauchy and t² with ν df is F(1, ν)', () => {
    expectClose(studentTCdf(0.7, 1), 0.5 + Math.atan(0.7) / Math.PI, 1e-14, 0, 'Cauchy');
    expectClose(studentTTwoSidedP(2.3, 12), fSf(2.3 * 2.3, 1, 12), 1e-13, 0, 't² = F');
  });

  it('quantile and CDF are inverse (round trip)', () => {
    for (const df of [1, 2, 3.5, 30, 1e6]) {
      for (const p of [1e-12, 0.01, 0.3, 0.9, 0.999999]) {
        expectClose(studentTCdf(studentTQuantile(p, df), df), p, 1e-12, 0, `df=${df} p=${p}`);
      }
    }
  });

  it('noncentral t with δ = 0 is the central t; δ → large shifts the mass', () => {
    expectClose(noncentralTCdf(1.1, 9, 0), studentTCdf(1.1, 9), 1e-15, 0, 'central');
    expectClose(noncentralTCdf(-1.1, 9, 1.5) + noncentralTSf(-1.1, 9, 1.5), 1, 1e-14, 0, 'sum');
  });

  it('incomplete beta symmetry I_x(a, b) = 1 − I_{1−x}(b, a) and ln B(a, b) for large arguments', () => {
    expectClose(betaInc(0.3, 2.5, 7), 1 - betaInc(0.7, 7, 2.5), 1e-14, 0, 'symmetry');
    expectClose(logBeta(1e6, 0.5), logGamma(1e6) + logGamma(0.5) - logGamma(1e6 + 0.5), 1e-12, 1e-9, 'ln B');
  });
});

describe('the libraries we checked (why this file exists)', () => {
  // jstat 1.9.6: studentt.cdf computes 1 − I_x(…) and its continued fraction stops at 3e-7 relative; normal.cdf uses a
  // Chebyshev erf accurate to about 1e-7 relative in the tails; studentt.pdf raises to a huge power at large df.
  it('jstat misses the 1e-8 relative target in the t upper tail at large df; ours meets it', () => {
    for (const [t, df] of [
      [0.1, 200000],
      [25, 100000],
    ]) {
      const ref = D.tSf.find(([tt, dd]) => tt === t && dd === df)![2];
      expect(rel(1 - jStat.studentt.cdf(t, df), ref)).toBeGreaterThan(1e-8);
      expect(rel(studentTSf(t, df), ref)).toBeLessThan(1e-11);
    }
  });

  it('jstat normal.cdf gives 0 beyond about 8 SD in the lower tail; ours keeps full relative accuracy', () => {
    const ref = D.normalSf.find(([z]) => z === 8.5)![1];
    expect(rel(jStat.normal.cdf(-8.5, 0, 1), ref)).toBeGreaterThan(1e-8);
    expect(rel(normalCdf(-8.5), ref)).toBeLessThan(1e-13);
  });

  it('simple-statistics normal functions are table/approximation based (errors 6e-8 to 4e-2); ours are exact to 1e-14', () => {
    const tail3 = D.normalSf.find(([z]) => z === 3)![1];
    expect(rel(ss.cumulativeStdNormalProbability(-3), tail3)).toBeGreaterThan(1e-3);
    expect(rel(ss.probit(0.975), 1.959963984540054)).toBeGreaterThan(1e-4);
    expect(rel(ss.errorFunction(0.5), 0.5204998778130465)).toBeGreaterThan(1e-8);
    expect(rel(normalCdf(-3), tail3)).toBeLessThan(1e-14);
    expect(rel(normalQuantile(0.975), 1.959963984540054)).toBeLessThan(1e-15);
  });

  it('jstat studentt.pdf fails at very large df; ours tends to the normal density', () => {
    const theirs = jStat.studentt.pdf(1, 1e9);
    expect(Number.isFinite(theirs) && Math.abs(theirs - 0.24197072451914337) < 1e-8).toBe(false);
    expectClose(studentTPdf(1, 1e9), 0.24197072451914337, 1e-8, 0, 'pdf');
  });
});

describe('input validation', () => {
  it('refuses bad parameters instead of returning NaN', () => {
    expect(() => studentTCdf(1, 0)).toThrow(StatsInputError);
    expect(() => studentTCdf(NaN, 3)).toThrow(StatsInputError);
    expect(() => studentTQuantile(1.2, 3)).toThrow(/probability/);
    expect(() => fSf(1, -1, 3)).toThrow(/df1/);
    expect(() => logGamma(-1)).toThrow(StatsInputError);
    expect(() => noncentralTCdf(1, 3, NaN)).toThrow(/delta/);
  });
});
