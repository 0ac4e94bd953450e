import { describe, expect, it } from 'vitest';
import { expectClose, fixture, generate } from '../test/fixtures.js';
import { shapiroWilk } from './normality.js';

/*
 * SciPy 1.10's shapiro runs the AS R94 Fortran in single precision, so its W is good to about 1e-6 (setup-notes.md; up
 * to 6e-6 seen at n = 5000); ours is double precision. W is compared with SciPy to 1e-5 absolute. Because p moves
 * steeply with W near 1 (at n = 5000 a 6e-6 change in W moves p by 0.016), p is compared with the fixture's float64
 * port of the same algorithm (make-fixtures.py `shapiro_double`, which the script checks against SciPy: same W
 * to 1e-5, and SciPy's p recovered from SciPy's W to 5e-4), to 1e-9 relative, and W to it at 1e-12.
 */
const W_ABS = 1e-5;

describe('shapiroWilk against the SciPy fixture (scipy.stats.shapiro, single precision)', () => {
  for (const c of fixture.twoSample) {
    it(`${c.id}`, () => {
      for (const [name, spec] of [
        ['a', c.a],
        ['b', c.b],
      ] as const) {
        const ref = c.expected.shapiro[name];
        const x = generate(spec);
        if (ref === null) {
          if (x.length >= 3 && x.length <= 5000) expect(() => shapiroWilk(x)).toThrow(/identical/);
          continue;
        }
        const r = shapiroWilk(x);
        expectClose(r.w, ref.w, 0, W_ABS, `${c.id} ${name} W vs SciPy`);
        expectClose(r.w, ref.wDouble, 1e-12, 0, `${c.id} ${name} W vs float64 reference`);
        expectClose(r.p, ref.pDouble, 1e-9, 1e-15, `${c.id} ${name} p vs float64 reference`);
      }
    });
  }
});

describe('shapiroWilk, exact and structural checks', () => {
  it('n = 3 uses the exact p = (6/π)(asin √W − asin √¾) (Royston 1995)', () => {
    const r = shapiroWilk([1, 2, 4]);
    expectClose(r.p, (6 / Math.PI) * (Math.asin(Math.sqrt(r.w)) - Math.PI / 3), 1e-14, 0, 'p');
    // Equally spaced triples attain the maximum W = 1 and p = 1.
    expectClose(shapiroWilk([3, 5, 7]).w, 1, 0, 1e-14, 'W');
  });

  it('W is invariant to shift and scale and to the order of the values (identity)', () => {
    const x = Array.from(generate({ seed: 4, n: 57, kind: 'skewed' }));
    const r = shapiroWilk(x);
    const s = shapiroWilk(x.map((v) => 1000 + 3 * v).reverse());
    expectClose(s.w, r.w, 1e-12, 0, 'W');
    expectClose(s.p, r.p, 1e-9, 0, 'p');
  });

  it('rejects normality for clearly skewed data and not for normal-looking data', () => {
    expect(shapiroWilk(generate({ seed: 8, n: 300, kind: 'skewed' })).p).toBeLessThan(1e-6);
    expect(shapiroWilk(generate({ seed: 8, n: 300 })).p).toBeGreaterThan(0.01);
  });

  it('refuses n < 3, n > 5000 and constant data', () => {
    expect(() => shapiroWilk([1, 2])).toThrow(/fewer than 3/);
    expect(() => shapiroWilk(generate({ seed: 1, n: 5001 }))).toThrow(/3 to 5000/);
    expect(() => shapiroWilk([2, 2, 2, 2])).toThrow(/identical/);
    expect(() => shapiroWilk([1, 2, NaN])).toThrow(/non-finite/);
  });
});
