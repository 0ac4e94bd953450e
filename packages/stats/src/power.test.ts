import { describe, expect, it } from 'vitest';
import { expectClose, fixture } from '../test/fixtures.js';
import { mdes, power, type MdesInput } from './power.js';

describe('mdes and power against the fixture (multiplier from mpmath t quantiles; power from SciPy nct)', () => {
  for (const c of fixture.power) {
    it(JSON.stringify(c.input), () => {
      const m = mdes(c.input as unknown as MdesInput);
      expectClose(m.mdes, c.expected.mdes, 1e-12, 0, 'MDES');
      expectClose(m.multiplier, c.expected.multiplier, 1e-12, 0, 'M');
      expectClose(m.standardError, c.expected.standardError, 1e-13, 0, 'SE');
      expect(m.df).toBe(c.expected.df);
      const { power: _target, ...design } = c.input;
      const p = power({ ...(design as unknown as MdesInput), effectSize: c.expected.effectSize });
      expectClose(p.power, c.expected.power, 1e-9, 1e-13, 'power');
      const atMdes = power({ ...(design as unknown as MdesInput), effectSize: m.mdes });
      expectClose(atMdes.power, c.expected.powerAtMdes, 1e-9, 1e-13, 'power at MDES');
    });
  }
});

describe('published facts', () => {
  it('M ≈ 2.80 for large df at α = .05 two-sided and power .80 (Bloom 1995 — T in standards.md)', () => {
    expectClose(mdes({ design: 'individual', n: 1e6 }).multiplier, 2.8, 0, 0.005, 'M');
  });

  it('the individual MDES for n = 400, P = .5, R² = 0 is M·√(1/(0.25·400)) = M/10 (formula — T)', () => {
    const m = mdes({ design: 'individual', n: 400 });
    expectClose(m.mdes, m.multiplier / 10, 1e-15, 0, 'MDES');
  });

  it('power at the MDES is close to the target (the multiplier is the usual approximation)', () => {
    const design = { design: 'cluster', clusters: 40, clusterSize: 25, icc: 0.2 } as const;
    const m = mdes(design);
    expect(Math.abs(power({ ...design, effectSize: m.mdes }).power - 0.8)).toBeLessThan(0.01);
  });

  it('more clusters, larger R² and smaller ICC all lower the cluster MDES', () => {
    const base = { design: 'cluster', clusters: 30, clusterSize: 20, icc: 0.2 } as const;
    const m0 = mdes(base).mdes;
    expect(mdes({ ...base, clusters: 60 }).mdes).toBeLessThan(m0);
    expect(mdes({ ...base, r2Level2: 0.5 }).mdes).toBeLessThan(m0);
    expect(mdes({ ...base, icc: 0.1 }).mdes).toBeLessThan(m0);
  });

  it('refuses designs without degrees of freedom and bad parameters', () => {
    expect(() => mdes({ design: 'individual', n: 3, covariates: 1 })).toThrow(/at least 1/);
    expect(() => mdes({ design: 'cluster', clusters: 10, clusterSize: 20, icc: 1 })).toThrow(/icc/);
    expect(() => mdes({ design: 'individual', n: 100, p: 1 })).toThrow(/share assigned/);
    expect(() => mdes({ design: 'individual', n: 100, clusters: 4 } as never)).toThrow(/unknown option "clusters"/);
    expect(() => mdes({ design: 'school' } as never)).toThrow(/design must be/);
    expect(() => power({ design: 'individual', n: 100, effectSize: NaN })).toThrow(/effectSize/);
  });
});
