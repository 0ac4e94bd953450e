import { describe, expect, it } from 'vitest';
import { iccFromSummaries, iccOneWay, StatsInputError, summarize } from './index.js';

describe('iccFromSummaries', () => {
  // Identity: the estimator from per-cluster { n, mean, m2 } equals the one from the raw values.
  it('equals iccOneWay on the same clusters, including unequal sizes and large offsets', () => {
    const groups = [
      [1e6 + 3.1, 1e6 + 4.7, 1e6 + 5.2, 1e6 + 2.9],
      [1e6 + 6.3, 1e6 + 7.1, 1e6 + 5.9],
      [1e6 + 2.2, 1e6 + 3.8, 1e6 + 4.1, 1e6 + 3.3, 1e6 + 2.6],
    ];
    const raw = iccOneWay(groups);
    const fromSummaries = iccFromSummaries(groups.map(summarize));
    expect(fromSummaries.icc).toBeCloseTo(raw.icc, 12);
    expect(fromSummaries.n0).toBeCloseTo(raw.n0, 12);
    expect(fromSummaries.msWithin).toBeCloseTo(raw.msWithin, 9);
  });

  it('refuses a malformed summary', () => {
    expect(() => iccFromSummaries([{ n: 3, mean: 1, m2: -1 }, { n: 2, mean: 2, m2: 1 }])).toThrow(StatsInputError);
    expect(() => iccFromSummaries([{ n: 3, mean: 1, m2: 1 }])).toThrow(/at least 2 groups/);
  });
});
