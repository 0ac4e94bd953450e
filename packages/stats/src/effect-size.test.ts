import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, fixture, generate } from '../test/fixtures.js';
import { coxIndex, glassDelta, hedgesCorrection, hedgesG, hedgesGFromSummary, improvementIndex } from './effect-size.js';

describe("hedgesG against the fixture (Hedges 1981 / Hedges & Olkin 1985 formulas on exact moments, mpmath gamma)", () => {
  for (const c of fixture.twoSample) {
    it(`${c.id}`, () => {
      const ref = c.expected.hedges;
      const a = generate(c.a);
      const b = generate(c.b);
      if (ref === null) {
        expect(() => hedgesG(a, b)).toThrow(/zero variance/);
        return;
      }
      const r = hedgesG(a, b, { confidence: c.confidence });
      expectClose(r.g, ref.g, 1e-10, 1e-13, 'g');
      expectClose(r.d, ref.d, 1e-10, 1e-13, 'd');
      expectClose(r.j, ref.j, 1e-13, 0, 'j');
      expectClose(r.se, ref.se, 1e-10, 0, 'se');
      expectClose(r.ci[0], ref.ci[0], 1e-10, 1e-13, 'ci lower');
      expectClose(r.ci[1], ref.ci[1], 1e-10, 1e-13, 'ci upper');
      expectClose(hedgesG(a, b, { correction: 'approximate' }).g, ref.gApproximate, 1e-10, 1e-13, 'ω·d');
    });
  }
});

describe('small-sample correction', () => {
  it('exact J(m) = Γ(m/2)/(√(m/2) Γ((m−1)/2)) matches its closed forms (Hedges 1981, eq. 6e)', () => {
    // J(2) = Γ(1)/(1·Γ(½)) = 1/√π; J(3) = Γ(3/2)/(√(3/2)·Γ(1)) = (√π/2)/√(3/2); J(4) = Γ(2)/(√2·Γ(3/2)) = 2/√(2π).
    expectClose(hedgesCorrection(2), 1 / Math.sqrt(Math.PI), 1e-14, 0, 'J(2)');
    expectClose(hedgesCorrection(3), Math.sqrt(Math.PI) / 2 / Math.sqrt(1.5), 1e-14, 0, 'J(3)');
    expectClose(hedgesCorrection(4), 2 / Math.sqrt(2 * Math.PI), 1e-14, 0, 'J(4)');
    // Large m: J → 1 − 3/(4m − 1) + O(m⁻²); the gap shrinks like m⁻².
    expect(Math.abs(hedgesCorrection(1e6) - (1 - 3 / (4e6 - 1)))).toBeLessThan(1e-11);
  });

  it('the WWC approximation 1 − 3/(4N − 9) equals 1 − 3/(4m − 1) with m = N − 2 and is close to the exact J', () => {
    const N = 40;
    expectClose(hedgesCorrection(N - 2, 'approximate'), 1 - 3 / (4 * N - 9), 1e-15, 0, 'ω');
    expect(Math.abs(hedgesCorrection(N - 2, 'approximate') - hedgesCorrection(N - 2))).toBeLessThan(1e-4);
  });
});

const sample = fc.array(fc.double({ min: -100, max: 100, noNaN: true }), { minLength: 2, maxLength: 20 });
const spread = (x: number[]) => Math.max(...x) - Math.min(...x) > 1e-3;

describe('invariances (fast-check properties)', () => {
  it('g is unchanged by a common shift and positive scale; swapping groups negates it', () => {
    fc.assert(
      fc.property(sample, sample, fc.double({ min: -1e4, max: 1e4, noNaN: true }), fc.double({ min: 1e-2, max: 1e2, noNaN: true }), (a, b, shift, scale) => {
        fc.pre(spread(a) && spread(b));
        const r = hedgesG(a, b);
        const s = hedgesG(
          a.map((v) => v * scale + shift),
          b.map((v) => v * scale + shift),
        );
        expectClose(s.g, r.g, 1e-8, 1e-10, 'shift/scale');
        expectClose(hedgesG(b, a).g, -r.g, 1e-12, 1e-14, 'symmetry');
        expectClose(hedgesG(b, a).se, r.se, 1e-12, 0, 'se symmetry');
      }),
      { numRuns: 200 },
    );
  });
});

describe('other effect sizes', () => {
  it('summary form equals raw form', () => {
    const r = hedgesG([1, 2, 3, 4], [2, 4, 6, 8]);
    const s = hedgesGFromSummary({ n: 4, mean: 2.5, sd: Math.sqrt(5 / 3) }, { n: 4, mean: 5, sd: Math.sqrt(20 / 3) });
    expectClose(s.g, r.g, 1e-14, 0, 'g');
  });

  it("Glass's Δ scales by the comparison group's SD (hand-computed)", () => {
    const r = glassDelta([5, 6, 7], [1, 2, 3]);
    expect(r.delta).toBeCloseTo(4, 14);
    expect(() => glassDelta([1, 2], [3, 3])).toThrow(/comparison\) has zero variance/);
  });

  it('WWC improvement index 100·Φ(g) − 50 (WWC Handbook v2.0 App. F — V; Φ from A&S Table 26.1)', () => {
    expectClose(improvementIndex(0), 0, 0, 1e-14, '0');
    expectClose(improvementIndex(0.25), 100 * 0.5987063257 - 50, 0, 1e-8, '0.25');
    expectClose(improvementIndex(-1), 100 * 0.1586552539 - 50, 0, 1e-8, '-1');
    expect(improvementIndex(10)).toBeLessThanOrEqual(50);
    expect(() => improvementIndex(NaN)).toThrow(/finite/);
  });

  it('Cox index [logit(p_I) − logit(p_C)]/1.65, with the small-sample ω only on request (WWC — T)', () => {
    const plain = coxIndex(0.6, 0.5);
    expectClose(plain, Math.log(1.5) / 1.65, 1e-15, 0, 'cox');
    const corrected = coxIndex(0.6, 0.5, { smallSampleCorrection: true, n1: 20, n2: 20 });
    expectClose(corrected, plain * (1 - 3 / (4 * 40 - 9)), 1e-15, 0, 'cox ω');
    expect(() => coxIndex(0, 0.5)).toThrow(/strictly between 0 and 1/);
    expect(() => coxIndex(0.4, 0.5, { smallSampleCorrection: true })).toThrow(/n1 and n2/);
  });

  it('refuses bad options', () => {
    expect(() => hedgesG([1, 2], [3, 5], { correction: 'hedges' as never })).toThrow(/correction must be/);
    expect(() => hedgesG([1, 2], [3, 5], { confidence: 0 })).toThrow(/confidence/);
  });
});
