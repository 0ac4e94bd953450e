import type { RunResults } from '@evenhand/entities';
import { describe, expect, it } from 'vitest';
import { siteResult } from './facts.js';

/** A locked score result of a small study: the intervention arm has `interventionStudents` students across the district. */
function scoreResult(interventionStudents: number): RunResults {
  return {
    measure: { name: 'Words read correctly', higherIsBetter: true },
    wave: { name: 'Spring' },
    alpha: 0.05,
    effectSize: { g: 0.62, ci: [0.05, 1.19], se: 0.29, improvementIndex: 23, substantivelyImportant: true },
    deciding: { analysis: 'welch', estimate: 7.4, p: 0.031, df: 21.6, ci: [0.7, 14.1], confidence: 0.95, alternative: 'two-sided', significant: true },
    descriptives: [
      { arm: 'intervention', students: interventionStudents, classrooms: 1 },
      { arm: 'comparison', students: 40, classrooms: 2 },
    ],
    sites: [],
  } as unknown as RunResults;
}

const locked = (results: RunResults) => ({ id: '99999999-9999-4999-8999-999999999999', results, locked_at: new Date('2026-06-08T12:00:00Z'), label: 'Words read correctly at Spring', is_primary: true });

describe('a locked score result in My school and the digest', () => {
  it('when every district arm has at least 10 students, then g, its interval, the estimate and p are shown', () => {
    const site = siteResult(locked(scoreResult(12)), 'no-such-site');
    expect(site.district).toMatchObject({ g: 0.62, gCi: [0.05, 1.19], improvementIndex: 23, estimate: 7.4, p: 0.031, met: true, substantivelyImportant: true });
    expect(site.sentences.join(' ')).toMatch(/Hedges’ g = 0\.62/);
  });

  it('when a district arm has fewer than 10 students, then nothing its size could be worked back from is shown (g and its interval, the estimate, p), only the direction and the verdict', () => {
    const site = siteResult(locked(scoreResult(7)), 'no-such-site');
    expect(site.district).toMatchObject({ g: null, gCi: null, improvementIndex: null, estimate: null, ci: null, p: null, met: true, substantivelyImportant: false, favours: 'intervention' });
    // The district's total alone gives back neither arm.
    expect(site.district.students).toEqual({ value: 47, suppressed: false });
    const words = site.sentences.join(' ');
    expect(words).toMatch(/in favour of the intervention/);
    expect(words).toMatch(/It meets the test registered in the plan/);
    expect(words).not.toMatch(/0\.62|1\.19|0\.031|p = |p < |\b7\b/);
  });
});
