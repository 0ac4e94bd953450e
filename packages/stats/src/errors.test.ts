import { describe, expect, it } from 'vitest';
import { StatsInputError } from './index.js';

describe('StatsInputError', () => {
  it('is an Error with its own name', () => {
    const e = new StatsInputError('group a has fewer than 2 values');
    expect(e).toBeInstanceOf(Error);
    expect(e.name).toBe('StatsInputError');
  });
});
