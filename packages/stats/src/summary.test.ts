import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose, fixture, generate } from '../test/fixtures.js';
import { mergeAllSummaries, mergeSummaries, summarize, summaryFromGroup, summaryVariance } from './summary.js';

describe('summarize', () => {
  it('gives n, mean and m2 = Σ(x − x̄)² (hand-computed)', () => {
    const s = summarize([2, 4, 4, 4, 5, 5, 7, 9]);
    expect(s.n).toBe(8);
    expect(s.mean).toBe(5);
    expect(s.m2).toBe(32);
    expect(summaryVariance(s)).toBeCloseTo(32 / 7, 15);
  });

  it('is stable for 1e9 + small noise (exact values from the fixture: fractions + mpmath)', () => {
    for (const id of ['offset-1e9-noise', 'offset-1e6-small-noise', 'offset-1e12-less']) {
      const c = fixture.twoSample.find((x) => x.id === id)!;
      const s = summarize(generate(c.a));
      const exactMean = c.expected.describe.mean.exact ?? c.expected.describe.mean.value;
      const exactSd = c.expected.describe.sd.exact ?? c.expected.describe.sd.value;
      expectClose(s.mean + (s.meanResidual ?? 0), exactMean, 1e-15, 0, `${id} mean`);
      expectClose(Math.sqrt(s.m2 / (s.n - 1)), exactSd, 1e-13, 0, `${id} sd`);
    }
  });

  it('refuses empty input and non-finite values', () => {
    expect(() => summarize([])).toThrow(/fewer than 1/);
    expect(() => summarize([1, NaN])).toThrow(/non-finite value \(NaN\) at index 1/);
    expect(() => summarize(['1', 2] as never)).toThrow(/non-number value at index 0/);
  });
});

describe('mergeSummaries (Chan, Golub & LeVeque 1979)', () => {
  it('merging the summaries of two splits equals the summary of the whole (identity)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: 2, maxLength: 60 }), fc.nat(), (xs, cut) => {
        const k = 1 + (cut % (xs.length - 1));
        const merged = mergeSummaries(summarize(xs.slice(0, k)), summarize(xs.slice(k)));
        const whole = summarize(xs);
        expect(merged.n).toBe(whole.n);
        expectClose(merged.mean, whole.mean, 1e-12, 1e-9, 'mean');
        expectClose(merged.m2, whole.m2, 1e-9, 1e-6, 'm2');
      }),
      { numRuns: 300 },
    );
  });

  it('10 000 chunk summaries merged (sequentially and as a tree) equal one pass to 1e-12 relative', () => {
    const x = generate({ seed: 42, n: 1_000_000, mean: 250, sd: 40 });
    const parts = Array.from({ length: 10_000 }, (_, c) => summarize(x.subarray(c * 100, (c + 1) * 100)));
    const whole = summarize(x);
    let seq = parts[0];
    for (let c = 1; c < parts.length; c++) seq = mergeSummaries(seq, parts[c]);
    for (const s of [seq, mergeAllSummaries(parts)]) {
      expect(s.n).toBe(whole.n);
      expectClose(s.mean, whole.mean, 1e-12, 0, 'mean');
      expectClose(s.m2, whole.m2, 1e-12, 0, 'm2');
    }
  });

  it('stays exact for classroom summaries far from zero (1e9 + noise), thanks to the mean residual', () => {
    const x = generate({ seed: 41, n: 5000, mean: 1e9, sd: 1 });
    const parts = Array.from({ length: 100 }, (_, c) => summarize(x.subarray(c * 50, (c + 1) * 50)));
    let seq = parts[0];
    for (let c = 1; c < parts.length; c++) seq = mergeSummaries(seq, parts[c]);
    const whole = summarize(x);
    expectClose(seq.m2, whole.m2, 1e-12, 0, 'm2');
  });

  it('accepts summaries without a residual (e.g. from a database) and published { n, mean, sd }', () => {
    const a = summaryFromGroup({ n: 10, mean: 3, sd: 2 });
    const b = { n: 5, mean: 6, m2: 16 };
    const m = mergeSummaries(a, b);
    expect(m.n).toBe(15);
    expectClose(m.mean, 4, 1e-15, 0, 'mean');
    expectClose(m.m2, 36 + 16 + (9 * 10 * 5) / 15, 1e-15, 0, 'm2');
  });

  it('refuses malformed summaries', () => {
    expect(() => mergeSummaries({ n: 0, mean: 1, m2: 0 }, { n: 2, mean: 1, m2: 0 })).toThrow(/a.n must be an integer >= 1/);
    expect(() => mergeSummaries({ n: 2, mean: 1, m2: -1 }, { n: 2, mean: 1, m2: 0 })).toThrow(/a.m2/);
    expect(() => mergeAllSummaries([])).toThrow(/at least one/);
    expect(() => summaryVariance({ n: 1, mean: 0, m2: 0 })).toThrow(/fewer than 2/);
  });
});
