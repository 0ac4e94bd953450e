import { describe, expect, it } from 'vitest';
import { generate } from '../test/fixtures.js';
import { median, selectInPlace } from './select.js';

function sortedMedian(x: ArrayLike<number>): number {
  const s = Float64Array.from(x).sort();
  const n = s.length;
  return n % 2 ? s[(n - 1) / 2] : (s[n / 2 - 1] + s[n / 2]) / 2;
}

describe('median by linear-time selection (identity with sorting)', () => {
  const shapes: Record<string, (i: number, n: number, u: () => number) => number> = {
    random: (_i, _n, u) => u(),
    sorted: (i) => i,
    reversed: (i, n) => n - i,
    'few distinct values': (_i, _n, u) => Math.floor(u() * 5),
    constant: () => 7,
    'half tied at the median': (_i, _n, u) => (u() < 0.5 ? 3 : u() * 6),
    periodic: (i) => i % 977,
    'organ pipe': (i, n) => Math.min(i, n - i),
  };
  for (const n of [1, 2, 3, 10, 17, 4095, 4096, 4097, 10_000, 100_001, 1_000_000]) {
    it(`n = ${n}`, () => {
      for (const [name, f] of Object.entries(shapes)) {
        let s = n + 1;
        const u = () => (s = (s * 48271) % 2147483647) / 2147483647;
        const x = Float64Array.from({ length: n }, (_, i) => f(i, n, u));
        expect(median(x), name).toBe(sortedMedian(x));
      }
    });
  }

  it('accepts plain arrays and does not modify the input', () => {
    const x = Array.from(generate({ seed: 3, n: 9000 }));
    const copy = x.slice();
    expect(median(x)).toBe(sortedMedian(x));
    expect(x).toEqual(copy);
  });

  it('selectInPlace puts the k-th smallest at k with smaller values before it', () => {
    const x = generate({ seed: 5, n: 501, round: 0 });
    const sorted = Float64Array.from(x).sort();
    for (const k of [0, 1, 250, 499, 500]) {
      const buf = x.slice();
      selectInPlace(buf, k);
      expect(buf[k]).toBe(sorted[k]);
      for (let i = 0; i < k; i++) expect(buf[i]).toBeLessThanOrEqual(buf[k]);
      for (let i = k + 1; i < buf.length; i++) expect(buf[i]).toBeGreaterThanOrEqual(buf[k]);
    }
  });

  it('refuses non-finite values and empty input', () => {
    const x = generate({ seed: 1, n: 20000 });
    x[12345] = NaN;
    expect(() => median(x)).toThrow(/non-finite value \(NaN\) at index 12345/);
    expect(() => median([])).toThrow(/fewer than 1/);
  });
});
