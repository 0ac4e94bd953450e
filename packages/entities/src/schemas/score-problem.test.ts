import { describe, expect, it } from 'vitest';
import { lacksScore, scoreProblem } from './score-sheets.js';

describe('scoreProblem', () => {
  const range = { minScore: 0, maxScore: 200 };
  it('accepts scores at both ends of the range, inclusive', () => {
    expect(scoreProblem({ score: 0, left: false }, range)).toBeNull();
    expect(scoreProblem({ score: 200, left: false }, range)).toBeNull();
  });
  it('refuses a score just outside either end', () => {
    expect(scoreProblem({ score: -0.5, left: false }, range)).toBe("The score -0.5 is outside the measure's range 0–200");
    expect(scoreProblem({ score: 200.1, left: false }, range)).toBe("The score 200.1 is outside the measure's range 0–200");
  });
  it('lets a draft row wait for its score, and still range-checks the score of someone who left', () => {
    expect(scoreProblem({ score: null, left: false }, range)).toBeNull();
    expect(lacksScore({ score: null, left: false })).toBe(true);
    expect(lacksScore({ score: null, left: true })).toBe(false);
    expect(lacksScore({ score: 0, left: false })).toBe(false);
    expect(scoreProblem({ score: 999, left: true }, range)).toMatch(/outside/);
  });
});
