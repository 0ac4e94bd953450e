import { describe, expect, it } from 'vitest';
import { resultHeadline } from '@/lib/result-wording';
import { demoResults } from '@/test-fixtures/run-results';

describe('resultHeadline', () => {
  it('says a significant result is higher, by how much and with its interval, and that it met the registered test', () => {
    const r = demoResults();
    r.clustering = null;
    const h = resultHeadline(r);
    expect(h.finding).toBe(
      'On average, students in the intervention arm scored 9.99 higher than students in the comparison arm on Oral reading fluency (words correct per minute) at Spring 2026 (95% confidence interval for the difference: 3.68 to 16.29).',
    );
    expect(h.favours).toBe('Higher scores are better on this measure, so the difference favours the intervention arm.');
    expect(h.met).toBe(true);
    expect(h.verdict).toBe('This meets the pre-registered test (Welch’s t test, two-sided, at alpha .05): p = .002.');
    expect(h.decidedBy).toBe('Decided by the p-value of Welch’s t test as registered (p = .002).');
    expect(h.clustering).toBeNull();
  });

  it('when classrooms were assigned, lets the clustering-corrected p decide, even against a significant student-level p', () => {
    const h = resultHeadline(demoResults());
    expect(h.met).toBe(false);
    expect(h.verdict).toBe(
      'This does not meet the pre-registered test (Welch’s t test, two-sided, at alpha .05) allowing for students being grouped in classrooms: clustering-corrected p = .138, against p = .002 had each student been assigned on their own.',
    );
    expect(h.decidedBy).toMatch(/^Decided by the clustering-corrected p-value \(p = \.138\)/);
    expect(h.clustering).toBe(
      'Allowing for students being grouped in classrooms (ICC 0.15, assumed in the plan), the difference is not statistically significant: p = .138.',
    );
  });

  it('when the clustering-corrected p is below alpha, then the result meets the registered test', () => {
    const r = demoResults();
    r.clustering = { ...r.clustering!, p: 0.012, significant: true };
    const h = resultHeadline(r);
    expect(h.met).toBe(true);
    expect(h.verdict).toMatch(/^This meets the pre-registered test .* clustering-corrected p = \.012/);
  });

  it('says a non-significant result did not meet the test and that its interval includes no difference', () => {
    const r = demoResults();
    r.primary = { ...r.primary, meanDifference: -2.5, ci: [-8.75, 3.75], p: 0.4312, significant: false, t: -0.79 };
    r.clustering = null;
    const h = resultHeadline(r);
    expect(h.finding).toContain('scored 2.50 lower than students in the comparison arm');
    expect(h.finding).toContain('3.75');
    expect(h.favours).toBe('Higher scores are better on this measure, so the difference favours the comparison arm.');
    expect(h.met).toBe(false);
    expect(h.verdict).toBe(
      'This does not meet the pre-registered test (Welch’s t test, two-sided, at alpha .05): p = .431. The interval includes no difference at all.',
    );
    expect(h.clustering).toBeNull();
  });

  it('reads a one-sided "less" test on a measure where lower is better as a bound, and names the direction tested', () => {
    const r = demoResults();
    r.clustering = null;
    r.measure = { ...r.measure, name: 'Behaviour incidents per week', higherIsBetter: false };
    r.alpha = 0.025;
    r.primary = { ...r.primary, alternative: 'less', confidence: 0.975, meanDifference: -1.2, ci: [null, -0.4], p: 0.0004, significant: true };
    const h = resultHeadline(r);
    expect(h.finding).toContain('scored 1.20 lower than students in the comparison arm on Behaviour incidents per week');
    expect(h.finding).toContain('97.5% confidence bound: the difference is at most \u22120.40');
    expect(h.favours).toBe('Lower scores are better on this measure, so the difference favours the intervention arm.');
    expect(h.verdict).toBe('This meets the pre-registered test (Welch’s t test, one-sided (intervention lower), at alpha .025): p < .001.');
  });

  it('says a one-sided "less" test was not met when the intervention arm scored higher', () => {
    const r = demoResults();
    r.clustering = null;
    r.primary = { ...r.primary, alternative: 'less', meanDifference: 3, ci: [null, 8.1], p: 0.91, significant: false };
    const h = resultHeadline(r);
    expect(h.met).toBe(false);
    expect(h.verdict).toContain('The data do not show the intervention arm scoring lower.');
  });
});
