import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, fixture } from '../test/fixtures.js';
import { benjaminiHochberg } from './multiplicity.js';

describe('benjaminiHochberg against statsmodels multipletests(method="fdr_bh")', () => {
  for (const c of fixture.benjaminiHochberg) {
    it(c.id, () => {
      const r = benjaminiHochberg(c.p, c.q);
      r.adjusted.forEach((v, i) => expectClose(v, c.expected.adjusted[i], 1e-14, 0, `adjusted ${i}`));
      expect(r.rejected).toEqual(c.expected.rejected);
    });
  }

  it('adjusted p-values are ≥ the raw ones, ≤ 1, and keep the order of the raw ones (property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 40 }), (p) => {
        const r = benjaminiHochberg(p);
        p.forEach((v, i) => {
          expect(r.adjusted[i]).toBeGreaterThanOrEqual(v);
          expect(r.adjusted[i]).toBeLessThanOrEqual(1);
        });
        for (let i = 0; i < p.length; i++) for (let j = 0; j < p.length; j++) if (p[i] < p[j]) expect(r.adjusted[i]).toBeLessThanOrEqual(r.adjusted[j]);
      }),
      { numRuns: 200 },
    );
  });

  it('refuses p-values outside [0, 1] and a bad q', () => {
    expect(() => benjaminiHochberg([0.1, 1.2])).toThrow(/p-value 2 must be in \[0, 1\]/);
    expect(() => benjaminiHochberg([0.1], 0)).toThrow(/q must be/);
    expect(() => benjaminiHochberg([])).toThrow(/at least one/);
  });
});

describe('benjaminiHochberg input types', () => {
  it('accepts a Float64Array of p-values and gives the same result as a plain array', () => {
    const p = [0.01, 0.04, 0.03, 0.2, 0.005];
    expect(benjaminiHochberg(Float64Array.from(p), 0.05)).toEqual(benjaminiHochberg(p, 0.05));
  });

  it('refuses a non-array and an empty array', () => {
    expect(() => benjaminiHochberg('0.01' as never)).toThrow(/array of p-values/);
    expect(() => benjaminiHochberg(new Float64Array(0))).toThrow(/at least one p-value/);
  });
});
