import { describe, expect, it } from 'vitest';
import { attrition, baselineEquivalence, isSubstantivelyImportant, WWC_ATTRITION_TABLE } from './standards.js';

/** Randomised/analysed counts (100 000 per arm) giving the overall and differential rates to 0.002 points. */
function counts(overallPercent: number, differentialPoints: number) {
  const a1 = overallPercent + differentialPoints / 2;
  const a2 = overallPercent - differentialPoints / 2;
  const r = 100000;
  return { randomized1: r, analyzed1: Math.round(r - 1000 * a1), randomized2: r, analyzed2: Math.round(r - 1000 * a2) };
}

describe('attrition against the WWC boundaries (Handbook v4.1 Table II.1 — T, listed rows only)', () => {
  it('computes overall and differential attrition in percent (WWC definition — V)', () => {
    const r = attrition({ randomized1: 200, analyzed1: 180, randomized2: 220, analyzed2: 187 });
    expect(r.attrition1).toBeCloseTo(10, 12);
    expect(r.attrition2).toBeCloseTo(15, 12);
    expect(r.overall).toBeCloseTo((100 * 53) / 420, 12);
    expect(r.differential).toBeCloseTo(5, 12);
  });

  it('at a listed row uses the table value exactly, without the interpolation flag', () => {
    const r = attrition(counts(30, 4));
    expect(r.overall).toBeCloseTo(30, 12);
    expect(r.cautious).toMatchObject({ boundary: 'cautious', maxDifferential: 4.1, band: 'low', interpolated: false, basis: 'listed-row' });
    expect(r.optimistic).toMatchObject({ boundary: 'optimistic', maxDifferential: 8.2, band: 'low', interpolated: false });
    expect(attrition(counts(30, 4.2)).cautious.band).toBe('high');
  });

  it('every listed row reproduces its boundary: just inside is low, just outside is high', () => {
    WWC_ATTRITION_TABLE.overall.forEach((overall, i) => {
      for (const boundary of ['cautious', 'optimistic'] as const) {
        const max = WWC_ATTRITION_TABLE[boundary][i];
        if (max === null) {
          expect(attrition(counts(overall, 0)).boundaries.find((b) => b.boundary === boundary)!.band).toBe('high');
          continue;
        }
        // A differential above twice the overall rate is impossible (each arm's attrition is at least 0).
        if (max / 2 > overall) continue;
        const inside = attrition(counts(overall, max)).boundaries.find((b) => b.boundary === boundary)!;
        expect(inside.maxDifferential).toBe(max);
        expect(inside.band).toBe('low');
        if (max + 0.2 <= 2 * overall) expect(attrition(counts(overall, max + 0.2))[boundary].band).toBe('high');
      }
    });
  });

  it('between listed rows interpolates linearly and says so, with the bracketing rows', () => {
    const r = attrition(counts(11.5, 6));
    expect(r.cautious.interpolated).toBe(true);
    expect(r.cautious.bracketingRows).toEqual([10, 13]);
    expect(r.cautious.maxDifferential).toBeCloseTo(6.3 + (1.5 / 3) * (6.1 - 6.3), 12);
    expect(r.optimistic.maxDifferential).toBeCloseTo(10.9 + 0.5 * (10.8 - 10.9), 12);
  });

  it('cautious: 58% or more overall is always high; between 57% and 58% only a zero differential is low', () => {
    expect(attrition(counts(58, 0)).cautious).toMatchObject({ band: 'high', maxDifferential: null, basis: 'always-high' });
    expect(attrition(counts(58, 0)).optimistic.band).toBe('low');
    const r = attrition(counts(57.5, 0));
    expect(r.cautious).toMatchObject({ maxDifferential: 0, band: 'low', interpolated: true, bracketingRows: [57, 58] });
  });

  it('beyond 65% overall both boundaries are high', () => {
    const r = attrition(counts(66, 0));
    expect(r.cautious.band).toBe('high');
    expect(r.optimistic.band).toBe('high');
  });

  it('refuses impossible counts', () => {
    expect(() => attrition({ randomized1: 10, analyzed1: 11, randomized2: 10, analyzed2: 9 })).toThrow(/exceeds randomized1/);
    expect(() => attrition({ randomized1: 0, analyzed1: 0, randomized2: 10, analyzed2: 9 })).toThrow(/randomized1/);
    expect(() => attrition({ randomized1: 10.5, analyzed1: 1, randomized2: 10, analyzed2: 9 })).toThrow(/integer/);
  });
});

describe('baselineEquivalence (WWC FAQ citing Handbook v3.0 — V)', () => {
  it('bands |g| ≤ .05 satisfies, ≤ .25 requires adjustment, > .25 fails', () => {
    expect(baselineEquivalence(0.05).band).toBe('satisfies');
    expect(baselineEquivalence(-0.03).band).toBe('satisfies');
    expect(baselineEquivalence(0.0501).band).toBe('requires-adjustment');
    expect(baselineEquivalence(-0.25).band).toBe('requires-adjustment');
    expect(baselineEquivalence(0.2501).band).toBe('fails');
    expect(() => baselineEquivalence(NaN)).toThrow(/finite/);
  });

  it('substantively important effect |g| ≥ 0.25 (WWC Handbook v2.0 App. E — V)', () => {
    expect(isSubstantivelyImportant(0.25)).toBe(true);
    expect(isSubstantivelyImportant(-0.3)).toBe(true);
    expect(isSubstantivelyImportant(0.2499)).toBe(false);
  });
});
