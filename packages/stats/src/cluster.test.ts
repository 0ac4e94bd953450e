import { describe, expect, it } from 'vitest';
import { expectClose, fixture, generate } from '../test/fixtures.js';
import { studentTTwoSidedP } from './distributions.js';
import { clusterAdjusted, DEFAULT_ICC_ACHIEVEMENT, DEFAULT_ICC_BEHAVIOR, designEffect, iccFTest, iccOneWay } from './cluster.js';

describe('clusterAdjusted (Hedges 2007; WWC Handbook v4.1 App. F / v5.0 eq. E.21 — T)', () => {
  const base = { n1: 250, n2: 230, clusters1: 10, clusters2: 10 };

  it('implements the three formulas of standards.md (worked by hand)', () => {
    const g = 0.3;
    const rho = 0.2;
    const N = 480;
    const n = N / 20;
    const r = clusterAdjusted({ ...base, g, icc: rho });
    const t = g / Math.sqrt(N / (250 * 230) + (g * g) / (2 * N));
    const ta = t * Math.sqrt((N - 2 - 2 * (n - 1) * rho) / ((N - 2) * (1 + (n - 1) * rho)));
    const h =
      (N - 2 - 2 * (n - 1) * rho) ** 2 /
      ((N - 2) * (1 - rho) ** 2 + n * (N - 2 * n) * rho ** 2 + 2 * (N - 2 * n) * rho * (1 - rho));
    expectClose(r.t, t, 1e-15, 0, 't');
    expectClose(r.tAdjusted, ta, 1e-15, 0, 't_a');
    expectClose(r.df, h, 1e-15, 0, 'h');
    expectClose(r.p, studentTTwoSidedP(ta, h), 1e-15, 0, 'p');
    expect(r.g).toBe(g);
    expect(r.averageClusterSize).toBe(24);
    expectClose(r.designEffect, 1 + 23 * 0.2, 1e-15, 0, 'design effect');
    expect(r.tAdjusted).toBeLessThan(r.t);
  });

  it('with ICC 0 the correction vanishes: t_a = t and h = N − 2 (identity)', () => {
    const r = clusterAdjusted({ ...base, g: 0.2, icc: 0 });
    expect(r.tAdjusted).toBe(r.t);
    expectClose(r.df, 478, 1e-14, 0, 'h');
  });

  it('passing t or the matching g gives the same result (the WWC relation inverted)', () => {
    const fromG = clusterAdjusted({ ...base, g: 0.41, icc: 0.15 });
    const fromT = clusterAdjusted({ ...base, t: fromG.t, icc: 0.15 });
    expectClose(fromT.g, 0.41, 1e-14, 0, 'g');
    expectClose(fromT.tAdjusted, fromG.tAdjusted, 1e-14, 0, 't_a');
    expectClose(fromT.p, fromG.p, 1e-12, 0, 'p');
  });

  it('exports the default ICCs 0.20 (achievement) and 0.10 (other outcomes) — standards.md T/M', () => {
    expect(DEFAULT_ICC_ACHIEVEMENT).toBe(0.2);
    expect(DEFAULT_ICC_BEHAVIOR).toBe(0.1);
  });

  it('refuses ambiguous or impossible input', () => {
    expect(() => clusterAdjusted({ ...base, icc: 0.2 })).toThrow(/exactly one of t or g/);
    expect(() => clusterAdjusted({ ...base, t: 2, g: 0.2, icc: 0.2 })).toThrow(/exactly one/);
    expect(() => clusterAdjusted({ ...base, g: 0.2, icc: 1.2 })).toThrow(/icc must be/);
    expect(() => clusterAdjusted({ ...base, clusters1: 0, g: 0.2, icc: 0.2 })).toThrow(/clusters1/);
    expect(() => clusterAdjusted({ ...base, t: 1e4, icc: 0.1 })).toThrow(/below √\(2N\)/);
  });
});

describe('designEffect (Kish 1965)', () => {
  it('is 1 + (m − 1)ρ', () => {
    expect(designEffect(25, 0.2)).toBeCloseTo(5.8, 14);
    expect(designEffect(1, 0.5)).toBe(1);
    expect(() => designEffect(0, 0.1)).toThrow(/cluster size/);
    expect(() => designEffect(10, -0.1)).toThrow(/icc/);
  });
});

describe('iccOneWay against the fixture (ANOVA estimator in exact rational arithmetic; Fisher 1925, Donner 1986)', () => {
  for (const c of fixture.icc) {
    it(c.id, () => {
      const r = iccOneWay(c.groups.map((g) => generate(g)));
      expectClose(r.icc, c.expected.icc, 1e-10, 1e-13, 'icc');
      expectClose(r.msBetween, c.expected.msBetween, 1e-12, 0, 'MSB');
      expectClose(r.msWithin, c.expected.msWithin, 1e-12, 0, 'MSW');
      expectClose(r.n0, c.expected.n0, 1e-14, 0, 'n0');
    });
  }

  it('recovers a strong clustering and its F test', () => {
    const groups = [0, 1, 2, 3, 4, 5].map((k) => Array.from(generate({ seed: 60 + k, n: 20, sd: 1 }), (v) => v + 3 * k));
    const r = iccOneWay(groups);
    expect(r.icc).toBeGreaterThan(0.8);
    expect(iccFTest(r).p).toBeLessThan(1e-10);
  });

  it('refuses a single group and groups of one value', () => {
    expect(() => iccOneWay([[1, 2, 3]])).toThrow(/at least 2 groups/);
    expect(() => iccOneWay([[1, 2], [3]])).toThrow(/group 2 has fewer than 2/);
    expect(() => iccOneWay([[1, 1], [1, 1]])).toThrow(/identical/);
  });
});
