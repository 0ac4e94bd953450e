import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { RepeatFilter } from './repeats.js';

/** Two independent 32-bit hashes of a key, from SHA-256 (a hash the filter does not use itself). */
const hashes = (key: string): [number, number] => {
  const d = createHash('sha256').update(key).digest();
  return [d.readInt32LE(0), d.readInt32LE(4)];
};

describe('RepeatFilter', () => {
  it('suspects no repeat among 50 000 distinct keys, and suspects every key noted again', () => {
    const filter = new RepeatFilter();
    const keys = Array.from({ length: 50_000 }, (_, i) => `stu-${String(i).padStart(6, '0')}`);
    for (const key of keys) filter.note(...hashes(key));
    expect(filter.mayRepeat).toBe(false);
    for (const key of [keys[0], keys[12_345], keys[49_999]]) {
      const again = new RepeatFilter();
      for (const k of keys) again.note(...hashes(k));
      again.note(...hashes(key));
      expect(again.mayRepeat).toBe(true);
    }
  });

  it('suspects a repeat that comes at once, with hashes of either sign', () => {
    const filter = new RepeatFilter();
    filter.note(-1, -2147483648);
    expect(filter.mayRepeat).toBe(false);
    filter.note(-1, -2147483648);
    expect(filter.mayRepeat).toBe(true);
  });
});
