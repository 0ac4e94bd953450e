import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { chiSquareSf } from './distributions.js';
import { blockedDraw, sampleRanks } from './draw.js';

const units = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}-${String(i).padStart(3, '0')}`);

describe('blockedDraw (blocked Fisher–Yates, version 1)', () => {
  it('records the algorithm, its version, the generator and the seed', () => {
    const r = blockedDraw({ seed: 'spring-2025', blocks: [{ blockId: 'school-a', unitIds: units('a', 6) }] });
    expect(r).toMatchObject({ algorithm: 'blocked-fisher-yates', version: '1', prng: 'seedrandom-arc4', seed: 'spring-2025' });
    expect(r.arms).toEqual(['intervention', 'comparison']);
    expect(r.ratio).toEqual([1, 1]);
  });

  it('is reproducible for a seed and differs between seeds', () => {
    const input = { seed: 'x1', blocks: [{ blockId: 'b', unitIds: units('u', 30) }] };
    expect(blockedDraw(input)).toEqual(blockedDraw(input));
    const other = blockedDraw({ ...input, seed: 'x2' });
    expect(other.assignments.map((a) => a.arm)).not.toEqual(blockedDraw(input).assignments.map((a) => a.arm));
  });

  it('does not depend on the order of blocks or of units within a block', () => {
    const blocks = [
      { blockId: 'north', unitIds: units('n', 7) },
      { blockId: 'east', unitIds: units('e', 4) },
      { blockId: 'west', unitIds: units('w', 9) },
    ];
    const shuffled = [
      { blockId: 'west', unitIds: [...units('w', 9)].reverse() },
      { blockId: 'north', unitIds: [...units('n', 7).slice(3), ...units('n', 7).slice(0, 3)] },
      { blockId: 'east', unitIds: [...units('e', 4)].reverse() },
    ];
    expect(blockedDraw({ seed: 's', blocks: shuffled })).toEqual(blockedDraw({ seed: 's', blocks }));
  });

  it('balances every block and keeps the overall arms within one unit (property, 1:1)', () => {
    fc.assert(
      fc.property(fc.string({ minLength: 1 }), fc.array(fc.integer({ min: 1, max: 15 }), { minLength: 1, maxLength: 12 }), (seed, sizes) => {
        const r = blockedDraw({ seed, blocks: sizes.map((n, b) => ({ blockId: `b${String(b).padStart(2, '0')}`, unitIds: units(`b${b}`, n) })) });
        for (const b of r.blocks) expect(Math.abs(b.counts[0] - b.counts[1])).toBeLessThanOrEqual(1);
        expect(Math.abs(r.totals[0] - r.totals[1])).toBeLessThanOrEqual(1);
        expect(r.assignments).toHaveLength(sizes.reduce((p, n) => p + n, 0));
      }),
      { numRuns: 200 },
    );
  });

  it('gives the first odd block’s extra unit to a generator-chosen arm and alternates over later odd blocks', () => {
    const r = blockedDraw({
      seed: 'odd',
      blocks: [3, 4, 5, 7, 2, 9].map((n, b) => ({ blockId: `b${b}`, unitIds: units(`b${b}`, n) })),
    });
    const extras = r.blocks.filter((b) => b.units % 2 === 1).map((b) => b.remainderArms[0]);
    expect(extras[0]).toBe(r.remainderCycle[0]);
    for (let i = 1; i < extras.length; i++) expect(extras[i]).not.toBe(extras[i - 1]);
    const firsts = new Set(['a', 'b', 'c', 'd', 'e', 'f', 'g', 'h'].map((s) => blockedDraw({ seed: s, blocks: [{ blockId: 'x', unitIds: units('x', 3) }] }).blocks[0].remainderArms[0]));
    expect(firsts.size).toBe(2);
  });

  it('supports a 2:1 ratio and custom arm names, keeping totals within one cycle', () => {
    const r = blockedDraw({
      seed: 'ratio',
      arms: ['coaching', 'business as usual'],
      ratio: [2, 1],
      blocks: [6, 4, 5, 7, 1].map((n, b) => ({ blockId: `b${b}`, unitIds: units(`b${b}`, n) })),
    });
    expect(r.blocks[0].counts).toEqual([4, 2]);
    const total = r.totals[0] + r.totals[1];
    expect(Math.abs(r.totals[0] - (2 / 3) * total)).toBeLessThan(1.5);
    expect(new Set(r.assignments.map((a) => a.arm))).toEqual(new Set(['coaching', 'business as usual']));
  });

  it('makes every arrangement within a block equally likely (chi-square over 6 000 seeds)', () => {
    // 4 units split 2:2 → C(4, 2) = 6 equally likely intervention sets.
    const counts = new Map<string, number>();
    const draws = 6000;
    for (let s = 0; s < draws; s++) {
      const r = blockedDraw({ seed: `seed-${s}`, blocks: [{ blockId: 'b', unitIds: ['a', 'b', 'c', 'd'] }] });
      const key = r.assignments.filter((a) => a.arm === 'intervention').map((a) => a.unitId).join('');
      counts.set(key, (counts.get(key) ?? 0) + 1);
    }
    expect(counts.size).toBe(6);
    const expected = draws / 6;
    const chi2 = [...counts.values()].reduce((p, c) => p + (c - expected) ** 2 / expected, 0);
    expect(chiSquareSf(chi2, 5)).toBeGreaterThan(0.001);
  });

  it('refuses duplicate units, duplicate or empty blocks, and bad options', () => {
    expect(() => blockedDraw({ seed: '', blocks: [{ blockId: 'b', unitIds: ['u'] }] })).toThrow(/seed/);
    expect(() => blockedDraw({ seed: 's', blocks: [] })).toThrow(/non-empty array/);
    expect(() => blockedDraw({ seed: 's', blocks: [{ blockId: 'b', unitIds: [] }] })).toThrow(/has no units/);
    expect(() =>
      blockedDraw({ seed: 's', blocks: [{ blockId: 'b', unitIds: ['u'] }, { blockId: 'c', unitIds: ['u'] }] }),
    ).toThrow(/unit "u" appears twice/);
    expect(() => blockedDraw({ seed: 's', blocks: [{ blockId: 'b', unitIds: ['u'] }, { blockId: 'b', unitIds: ['v'] }] })).toThrow(/appears twice/);
    expect(() => blockedDraw({ seed: 's', ratio: [1, 0], blocks: [{ blockId: 'b', unitIds: ['u'] }] })).toThrow(/ratio/);
    expect(() => blockedDraw({ seed: 's', arms: ['a', 'a'], blocks: [{ blockId: 'b', unitIds: ['u'] }] })).toThrow(/arms/);
  });
});

describe('sampleRanks (Floyd’s sampling without replacement)', () => {
  it('gives k distinct ranks in increasing order, the same for a seed and different between seeds', () => {
    const r = sampleRanks(1_000_000, 5000, 'abc:intervention');
    expect(r).toHaveLength(5000);
    expect(new Set(r).size).toBe(5000);
    expect(r.every((v, i) => Number.isInteger(v) && v >= 0 && v < 1_000_000 && (i === 0 || v > r[i - 1]))).toBe(true);
    expect(sampleRanks(1_000_000, 5000, 'abc:intervention')).toEqual(r);
    expect(sampleRanks(1_000_000, 5000, 'abc:comparison')).not.toEqual(r);
  });

  it('returns every rank when k is at least n', () => {
    expect(sampleRanks(4, 10, 's')).toEqual([0, 1, 2, 3]);
    expect(sampleRanks(0, 3, 's')).toEqual([]);
  });

  it('includes each rank with probability k/n: chi-square over 4 000 seeds does not reject at 0.001 (Bentley & Floyd 1987)', () => {
    const n = 10;
    const k = 3;
    const seeds = 4000;
    const hits = new Array(n).fill(0);
    for (let s = 0; s < seeds; s++) for (const r of sampleRanks(n, k, `seed-${s}`)) hits[r]++;
    const expected = (seeds * k) / n;
    const chi2 = hits.reduce((t, h) => t + (h - expected) ** 2 / expected, 0);
    expect(chiSquareSf(chi2, n - 1)).toBeGreaterThan(0.001);
  });

  it('refuses a negative or fractional size and an empty seed', () => {
    expect(() => sampleRanks(-1, 2, 's')).toThrow(/n must be/);
    expect(() => sampleRanks(5, 1.5, 's')).toThrow(/k must be/);
    expect(() => sampleRanks(5, 2, '')).toThrow(/seed/);
  });
});
