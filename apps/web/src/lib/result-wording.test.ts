import { describe, expect, it } from 'vitest';
import { proportionDifference, twoProportionZTest } from '@evenhand/stats';
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

describe('resultHeadline of a yes/no measure', () => {
  /** 84 of 200 intervention students and 70 of 200 comparison students answered yes. */
  function yesNoResults() {
    const r = demoResults();
    const [i, c] = [{ yes: 84, n: 200 }, { yes: 70, n: 200 }];
    const d = proportionDifference(i, c, { confidence: 0.95 });
    const z = twoProportionZTest(i, c);
    r.measure = { ...r.measure, name: 'Read at grade level by spring', scale: 'yes-no' };
    r.deciding = { analysis: 'difference-in-proportions', estimate: d.difference, p: z.p, df: null, ci: d.ci, confidence: 0.95, alternative: 'two-sided', significant: false };
    r.yesNo = {
      yesIsGood: true,
      confidence: 0.95,
      arms: [
        { arm: 'intervention', yes: 84, no: 116, n: 200, proportion: 0.42, ci: [0.35, 0.49] },
        { arm: 'comparison', yes: 70, no: 130, n: 200, proportion: 0.35, ci: [0.29, 0.42] },
      ],
      difference: { estimate: d.difference, ci: d.ci },
      oddsRatio: { estimate: 1.34, ci: [0.9, 2.0] },
      coxIndex: { value: 0.18, se: 0.12, improvementIndex: 7.1, substantivelyImportant: false },
      zTest: { z: z.z, p: z.p },
      chiSquare: null,
      chiSquareYates: null,
      fisher: { p: 0.18 },
      linearProbability: null,
      designEffect: null,
    };
    return r;
  }

  it('says what share of each arm answered yes and the difference in percentage points with Newcombe’s interval', () => {
    // Newcombe's interval −0.0252 to 0.1634 and z p = .150: statsmodels 0.13 confint_proportions_2indep(84, 200, 70, 200,
    // method='newcomb') and proportions_ztest([84, 70], [200, 200]), run on Debian's python3-statsmodels.
    const h = resultHeadline(yesNoResults());
    expect(h.finding).toBe(
      '42 % of intervention students answered yes to “Read at grade level by spring” at Spring 2026, against 35 % of comparison students: 7.0 percentage points more (95% confidence interval: −2.5 to 16.3 points).',
    );
    expect(h.favours).toBe('“Yes” is the good answer on this measure, so the difference favours the intervention arm.');
    expect(h.met).toBe(false);
    expect(h.verdict).toBe(
      'This does not meet the pre-registered test (the two-proportion z test, with Newcombe’s interval for the difference in proportions, two-sided, at alpha .05): p = .150. The interval includes no difference at all.',
    );
  });

  it('when “no” is the good answer, then more yes answers favour the comparison arm', () => {
    const r = yesNoResults();
    r.yesNo!.yesIsGood = false;
    expect(resultHeadline(r).favours).toBe('“No” is the good answer on this measure, so the difference favours the comparison arm.');
  });
});
