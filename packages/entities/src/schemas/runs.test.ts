import { describe, expect, it } from 'vitest';
import { runResultsSchema } from './runs.js';

describe('runResultsSchema', () => {
  it('reads the open end of a one-sided interval, which JSON stores as null, for the t tests and the baseline adjustment', () => {
    const tTest = { t: 2.1, df: 40.2, p: 0.02, meanDifference: 3.5, se: 1.67, ci: [0.7, Infinity], confidence: 0.95, alternative: 'greater' };
    const stored = JSON.parse(JSON.stringify({ primary: tTest, ancova: { adjustedDifference: 3.1, se: 1.2, t: 2.6, df: 39, p: 0.007, ci: [1.1, Infinity], g: 0.3, n: 42 } }));
    expect(stored.primary.ci).toEqual([0.7, null]);
    const primary = runResultsSchema.shape.primary.parse({ ...stored.primary, test: 'welch', significant: true });
    expect(primary.ci).toEqual([0.7, null]);
    const ancova = runResultsSchema.shape.sensitivity.shape.ancova.parse(stored.ancova);
    expect(ancova?.ci).toEqual([1.1, null]);
  });

  it('still refuses an interval bound that is not a number', () => {
    const result = runResultsSchema.shape.effectSize.safeParse({ g: 0.2, ci: [0.1, null], se: 0.05, improvementIndex: 8, substantivelyImportant: false });
    expect(result.success).toBe(false);
  });
});
