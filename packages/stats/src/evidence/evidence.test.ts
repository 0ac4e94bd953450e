import { describe, expect, it } from 'vitest';
import { attritionMargin, evidenceVerdict, planPreview, rateComparison, ratingRisks, verdictWording, type ComparisonDescription, type EvidenceReason } from './index.js';

// Sources: SOURCES.md beside this file. Attrition boundaries: WWC Handbook v4.1 Table II.1 (T, as in standards.md);
// equivalence bands: WWC FAQ citing Handbook v3.0 (V); tiers: 20 U.S.C. 7801(21)(A) (V) and the 2016 guidance (T/M).

const ids = (p: string, n: number) => Array.from({ length: n }, (_, k) => `${p}${k + 1}`);

/** A clean student-assigned randomised comparison; each test changes what it is about. */
function base(over: Partial<ComparisonDescription> = {}): ComparisonDescription {
  return {
    randomised: true,
    unitOfAssignment: 'student',
    reassignments: 0,
    boundary: 'cautious',
    clusters: null,
    students: { intervention: { randomised: 2000, analysed: 2000 }, comparison: { randomised: 2000, analysed: 2000 } },
    joiners: null,
    baseline: { effectSize: 0.02, kind: 'hedges-g' },
    adjustsForBaseline: true,
    accountsForClustering: true,
    teachers: { intervention: ids('t', 8), comparison: ids('t', 8) },
    schools: { intervention: ids('s', 4), comparison: ids('s', 4) },
    effect: { estimate: 3.1, favourable: true, p: 0.01, significant: true },
    sample: { groupsOfTenOrMore: 8, sites: 4 },
    ...over,
  };
}
const reason = (reasons: EvidenceReason[], id: string) => {
  const r = reasons.find((x) => x.id === id);
  if (!r) throw new Error(`no reason ${id}`);
  return r;
};
const students = (r1: number, a1: number, r2: number, a2: number) => ({ intervention: { randomised: r1, analysed: a1 }, comparison: { randomised: r2, analysed: a2 } });

describe('attrition at a boundary row (WWC v4.1 Table II.1, cautious row 10 % → 6.3 pp)', () => {
  it('when overall attrition is 10 % and the differential exactly 6.3 pp, then attrition is low and the rating can be without reservations', () => {
    // 263 of 2000 lost (13.15 %) against 137 of 2000 (6.85 %): overall 400/4000 = 10 %, differential 6.30 pp.
    const r = rateComparison(base({ students: students(2000, 1737, 2000, 1863) }));
    expect(reason(r.reasons, 'student-attrition').passed).toBe(true);
    expect(reason(r.reasons, 'student-attrition').numbers).toContain('overall 10.0 %, differential 6.3 percentage points');
    expect(r.rating).toBe('without-reservations');
  });
  it('when the differential is 6.4 pp at the same 10 % overall, then attrition is high and equivalence is required (with reservations)', () => {
    const r = rateComparison(base({ students: students(2000, 1736, 2000, 1864) }));
    expect(reason(r.reasons, 'student-attrition').passed).toBe(false);
    expect(reason(r.reasons, 'baseline').consequence).toContain('required because attrition of students is high');
    expect(r.rating).toBe('with-reservations');
  });
  it('when the optimistic boundary is chosen, then the same 6.4 pp (row 10 % → 10.9 pp) is low', () => {
    const r = rateComparison(base({ boundary: 'optimistic', students: students(2000, 1736, 2000, 1864) }));
    expect(reason(r.reasons, 'student-attrition').passed).toBe(true);
    expect(r.rating).toBe('without-reservations');
  });
  it('when attrition is high and the study has no baseline of the measure, then it does not meet the standards', () => {
    const r = rateComparison(base({ students: students(2000, 1736, 2000, 1864), baseline: 'not-measured' }));
    expect(r.rating).toBe('does-not-meet');
    expect(reason(r.reasons, 'baseline').seeOn).toBe('plan');
  });
});

describe('baseline equivalence bands (WWC FAQ: ≤ .05; .05–.25 with adjustment; > .25 not)', () => {
  const quasi = (effectSize: number, adjustsForBaseline: boolean) => rateComparison(base({ randomised: false, baseline: { effectSize, kind: 'hedges-g' }, adjustsForBaseline }));
  it('when |g| is exactly .05 without adjustment, then the groups are equivalent', () => {
    const r = quasi(-0.05, false);
    expect(reason(r.reasons, 'baseline').passed).toBe(true);
    expect(r.rating).toBe('with-reservations');
  });
  it('when |g| is exactly .25, then equivalence holds only if the analysis adjusts for the baseline', () => {
    expect(quasi(0.25, true).rating).toBe('with-reservations');
    expect(quasi(0.25, false).rating).toBe('does-not-meet');
    expect(reason(quasi(0.25, false).reasons, 'baseline').numbers).toContain('does not make');
  });
  it('when |g| is just above .25, then the groups are not equivalent even with adjustment', () => {
    expect(quasi(0.2501, true).rating).toBe('does-not-meet');
  });
  it('when a yes/no baseline gives a Cox index of .05, then it is banded as g is', () => {
    const r = rateComparison(base({ randomised: false, baseline: { effectSize: 0.05, kind: 'cox-index' }, adjustsForBaseline: false }));
    expect(reason(r.reasons, 'baseline').numbers).toContain('Cox index');
    expect(r.rating).toBe('with-reservations');
  });
  it('when random assignment is intact and attrition low, then a baseline difference of .40 does not matter (FAQ: equivalence not required)', () => {
    const r = rateComparison(base({ baseline: { effectSize: 0.4, kind: 'hedges-g' } }));
    expect(reason(r.reasons, 'baseline').passed).toBe(true);
    expect(r.rating).toBe('without-reservations');
  });
});

describe('compromised randomisation (WWC FAQ: at best with reservations, with equivalence)', () => {
  it('when one classroom was reassigned, then the comparison is rated as a quasi-experiment', () => {
    const r = rateComparison(base({ reassignments: 1 }));
    expect(reason(r.reasons, 'reassignments')).toMatchObject({ passed: false, seeOn: 'draw', numbers: '1 reassignment after the draw' });
    expect(r.reasons.some((x) => x.id === 'student-attrition')).toBe(false);
    expect(r.rating).toBe('with-reservations');
  });
  it('when one classroom was reassigned and the baseline is not yet known, then the rating cannot be told yet', () => {
    expect(rateComparison(base({ reassignments: 1, baseline: null })).rating).toBe('cannot-tell');
  });
});

describe('confounds: a condition delivered by one teacher or one school (Handbook v4.1 II.A)', () => {
  it('when one teacher delivers the whole intervention arm, then it does not meet the standards', () => {
    const r = rateComparison(base({ unitOfAssignment: 'classroom', teachers: { intervention: ['t1'], comparison: ['t2', 't3'] }, clusters: students(1, 1, 2, 2), joiners: 0 }));
    expect(reason(r.reasons, 'confound-teacher-intervention')).toMatchObject({ passed: false, numbers: '1 teacher delivers the intervention arm' });
    expect(r.rating).toBe('does-not-meet');
  });
  it('when the single teacher also teaches the comparison arm (students assigned within her class), then there is no confound', () => {
    const r = rateComparison(base({ teachers: { intervention: ['t1'], comparison: ['t1'] }, schools: { intervention: ['s1'], comparison: ['s1'] } }));
    expect(reason(r.reasons, 'confound-teacher-intervention').passed).toBe(true);
    expect(r.rating).toBe('without-reservations');
  });
  it('when two teachers deliver each arm, then the teacher rule passes', () => {
    const r = rateComparison(base({ teachers: { intervention: ['t1', 't2'], comparison: ['t3', 't4'] } }));
    expect(r.reasons.filter((x) => x.id.startsWith('confound-teacher')).every((x) => x.passed)).toBe(true);
  });
});

describe('joiners in a cluster trial (Handbook v4.1 II.B; tolerated share M, taken as none)', () => {
  const cluster = (joiners: number | null) =>
    rateComparison(base({ unitOfAssignment: 'classroom', clusters: students(12, 12, 12, 12), students: students(300, 300, 300, 300), joiners, teachers: { intervention: ids('a', 12), comparison: ids('b', 12) } }));
  it('when no analysed student joined after the draw, then the rating can be without reservations', () => {
    expect(cluster(0).rating).toBe('without-reservations');
  });
  it('when one analysed student joined after the draw (above the limit), then equivalence is required and the best is with reservations', () => {
    const r = cluster(1);
    expect(reason(r.reasons, 'joiners')).toMatchObject({ passed: false, numbers: '1 of 600 analysed students joined after the draw (0.2 %)' });
    expect(r.rating).toBe('with-reservations');
  });
  it('when Evenhand cannot tell who joined, then the rule is left to the reviewers and listed for them', () => {
    const r = cluster(null);
    expect(reason(r.reasons, 'joiners').passed).toBeNull();
    expect(r.reviewerChecks.some((c) => c.includes('joined later'))).toBe(true);
  });
});

describe('clustering and the tier', () => {
  it('when a cluster-assigned result treats students as independent, then the rating stands but the effect does not count towards a tier', () => {
    const v = evidenceVerdict(base({ unitOfAssignment: 'classroom', clusters: students(30, 30, 30, 30), students: students(300, 300, 300, 300), joiners: 0, accountsForClustering: false, teachers: { intervention: ids('a', 30), comparison: ids('b', 30) }, sample: { groupsOfTenOrMore: 60, sites: 4 } }));
    expect(v.rating).toBe('without-reservations');
    expect(reason(v.reasons, 'clustering')).toMatchObject({ passed: false, seeOn: 'result' });
    expect(v.tier).toBe('none');
  });
  it('when 350 students are analysed, then the sample is large; at 349 with fewer than 50 groups it is not (guidance: 350 — T)', () => {
    expect(reason(evidenceVerdict(base({ students: students(175, 175, 175, 175) })).reasons, 'large-sample').passed).toBe(true);
    expect(evidenceVerdict(base({ students: students(175, 175, 175, 175) })).tier).toBe('strong');
    const small = evidenceVerdict(base({ students: students(175, 175, 174, 174), sample: { groupsOfTenOrMore: 49, sites: 4 } }));
    expect(reason(small.reasons, 'large-sample').passed).toBe(false);
    expect(small.tier).toBe('promising');
  });
  it('when 50 groups of 10 or more are analysed, then the sample is large even under 350 students (guidance: 50 groups — M)', () => {
    expect(evidenceVerdict(base({ students: students(170, 170, 170, 170), sample: { groupsOfTenOrMore: 50, sites: 4 } })).tier).toBe('strong');
  });
  it('when only one school took part, then the sample is not multi-site and the tier is promising at most', () => {
    expect(evidenceVerdict(base({ sample: { groupsOfTenOrMore: 8, sites: 1 } })).tier).toBe('promising');
  });
  it('when the effect is significant but unfavourable, or favourable but not significant, then no tier', () => {
    expect(evidenceVerdict(base({ effect: { estimate: -3, favourable: false, p: 0.01, significant: true } })).tier).toBe('none');
    expect(evidenceVerdict(base({ effect: { estimate: 3, favourable: true, p: 0.2, significant: false } })).tier).toBe('none');
  });
  it('when there is no result yet, then the verdict is not settled and says so', () => {
    const v = evidenceVerdict(base({ effect: null }));
    expect(v.settled).toBe(false);
    expect(v.wording).toContain('its evidence tier cannot be told yet.');
    expect(v.wording).toContain('preview, not a review (the evidence reviewers decide)');
  });
  it('when there are no outcome data yet, then the rating cannot be told', () => {
    expect(evidenceVerdict(base({ students: null })).rating).toBe('cannot-tell');
  });
  it('every verdict lists the outcome-measure checks Evenhand cannot make', () => {
    const v = evidenceVerdict(base());
    expect(v.reviewerChecks.some((c) => c.includes('over-aligned'))).toBe(true);
    expect(v.reviewerChecks.some((c) => c.includes('reliability'))).toBe(true);
  });
});

describe('three invented studies, worked by hand', () => {
  it('Study A — 24 classrooms randomised in 4 schools, none lost: without reservations, strong evidence', () => {
    // II.B, cluster attrition: 12 of 12 and 12 of 12 classrooms analysed → overall 0 %, differential 0 pp; Table II.1 row 0 %
    //   allows 5.7 pp (cautious) → low.
    // II.B, student attrition: 276 of 300 (8 % lost) and 285 of 300 (5 %) → overall 39/600 = 6.5 %, differential 3.0 pp;
    //   cautious between rows 5 % (6.1) and 10 % (6.3), interpolated 6.1 + 1.5/5 × 0.2 = 6.16 pp → low.
    // II.B, joiners: roster import shows 0 joiners among the 561 analysed → no equivalence needed for them.
    // FAQ: intact randomisation, low attrition → equivalence not required (g = .12 is reported, not judged).
    // II.A confounds: 12 teachers per arm, every school in both arms → none.
    // II.B clustering: the two-level model decides → accounts for clustering.
    // Rating: meets without reservations.
    // Tier (7801(21)(A); guidance): p = .012 favourable; 561 ≥ 350 analysed → large; 4 schools → multi-site → strong.
    const v = evidenceVerdict({
      randomised: true,
      unitOfAssignment: 'classroom',
      reassignments: 0,
      boundary: 'cautious',
      clusters: students(12, 12, 12, 12),
      students: students(300, 276, 300, 285),
      joiners: 0,
      baseline: { effectSize: 0.12, kind: 'hedges-g' },
      adjustsForBaseline: true,
      accountsForClustering: true,
      teachers: { intervention: ids('a', 12), comparison: ids('b', 12) },
      schools: { intervention: ids('s', 4), comparison: ids('s', 4) },
      effect: { estimate: 4.2, favourable: true, p: 0.012, significant: true },
      sample: { groupsOfTenOrMore: 24, sites: 4 },
    });
    expect(reason(v.reasons, 'cluster-attrition').numbers).toContain('overall 0.0 %, differential 0.0 percentage points; the cautious boundary allows at most 5.7 percentage points');
    expect(reason(v.reasons, 'student-attrition').numbers).toContain('overall 6.5 %, differential 3.0 percentage points');
    expect(reason(v.reasons, 'student-attrition').numbers).toContain('at most 6.2 percentage points (interpolated');
    expect(reason(v.reasons, 'student-attrition').passed).toBe(true);
    expect(v.rating).toBe('without-reservations');
    expect(v.tier).toBe('strong');
    expect(v.wording).toBe(
      'Evidence preview, not a review (the evidence reviewers decide): this comparison would meet the evidence standards without reservations and would count as strong evidence under federal education law.',
    );
  });

  it('Study B — 320 students randomised within 8 classes of 2 schools, uneven losses: with reservations, promising evidence', () => {
    // II.A, student attrition: 120 of 160 (25 % lost) and 150 of 160 (6.25 %) → overall 50/320 = 15.6 %, differential
    //   18.75 pp; cautious between rows 15 % (5.9) and 20 % (5.4) ≈ 5.84 pp → high.
    // FAQ / II.A: high attrition → baseline equivalence required: g = .18 lies in .05–.25 and the analysis adjusts
    //   for the pretest → equivalent; best rating with reservations.
    // II.A confounds: the same 8 teachers and 2 schools deliver both arms → none. Students assigned: no clustering rule.
    // Rating: meets with reservations.
    // Tier: p = .03 favourable; 270 analysed < 350 and 8 classes < 50 groups → not large → promising (2 schools is
    //   multi-site, but strong and moderate need both).
    const v = evidenceVerdict({
      randomised: true,
      unitOfAssignment: 'student',
      reassignments: 0,
      boundary: 'cautious',
      clusters: null,
      students: students(160, 120, 160, 150),
      joiners: null,
      baseline: { effectSize: 0.18, kind: 'hedges-g' },
      adjustsForBaseline: true,
      accountsForClustering: true,
      teachers: { intervention: ids('t', 8), comparison: ids('t', 8) },
      schools: { intervention: ['s1', 's2'], comparison: ['s1', 's2'] },
      effect: { estimate: 2.5, favourable: true, p: 0.03, significant: true },
      sample: { groupsOfTenOrMore: 8, sites: 2 },
    });
    expect(reason(v.reasons, 'student-attrition')).toMatchObject({ passed: false });
    expect(reason(v.reasons, 'student-attrition').numbers).toContain('overall 15.6 %, differential 18.8 percentage points');
    expect(reason(v.reasons, 'baseline').passed).toBe(true);
    expect(v.reasons.some((r) => r.id === 'clustering' || r.id === 'joiners')).toBe(false);
    expect(v.rating).toBe('with-reservations');
    expect(reason(v.reasons, 'large-sample').passed).toBe(false);
    expect(reason(v.reasons, 'multi-site').passed).toBe(true);
    expect(v.tier).toBe('promising');
    expect(v.wording).toBe(
      'Evidence preview, not a review (the evidence reviewers decide): this comparison would meet the evidence standards with reservations and would count as promising evidence under federal education law.',
    );
  });

  it('the wording is one sentence, joined by "but" where the tier goes against the rating', () => {
    expect(verdictWording({ rating: 'with-reservations', tier: 'none', settled: true })).toBe(
      'Evidence preview, not a review (the evidence reviewers decide): this comparison would meet the evidence standards with reservations but would not reach any of the evidence tiers of federal education law.',
    );
    expect(verdictWording({ rating: 'does-not-meet', tier: 'promising', settled: true })).toContain('would not meet the evidence standards but would count as promising evidence');
    expect(verdictWording({ rating: 'cannot-tell', tier: 'none', settled: false })).toBe(
      'Evidence preview, not a review (the evidence reviewers decide): this comparison cannot be rated yet; its evidence tier cannot be told yet.',
    );
  });

  it('Study C — two schools, one per arm, not randomised: does not meet, no tier', () => {
    // II (design): not randomised → quasi-experiment, equivalence required, at best with reservations.
    // FAQ: g = .08 in .05–.25 with the pretest adjusted for → equivalent.
    // II.A confounds: the intervention is delivered by one school only (and the comparison by another) → confounded:
    //   does not meet the standards.
    // Tier: significant favourable effect (p = .004), 400 analysed (large), 2 schools (multi-site), but a confounded
    //   comparison cannot count even as a correlational study with statistical controls → none.
    const v = evidenceVerdict({
      randomised: false,
      unitOfAssignment: 'school',
      reassignments: 0,
      boundary: 'cautious',
      clusters: students(1, 1, 1, 1),
      students: students(210, 200, 210, 200),
      joiners: null,
      baseline: { effectSize: 0.08, kind: 'hedges-g' },
      adjustsForBaseline: true,
      accountsForClustering: true,
      teachers: { intervention: ids('a', 8), comparison: ids('b', 8) },
      schools: { intervention: ['north'], comparison: ['south'] },
      effect: { estimate: 5, favourable: true, p: 0.004, significant: true },
      sample: { groupsOfTenOrMore: 16, sites: 2 },
    });
    expect(reason(v.reasons, 'design').passed).toBe(false);
    expect(reason(v.reasons, 'baseline').passed).toBe(true);
    expect(reason(v.reasons, 'confound-school-intervention').passed).toBe(false);
    expect(reason(v.reasons, 'confound-school-comparison').passed).toBe(false);
    expect(v.rating).toBe('does-not-meet');
    expect(v.tier).toBe('none');
    expect(v.wording).toBe(
      'Evidence preview, not a review (the evidence reviewers decide): this comparison would not meet the evidence standards and would not reach any of the evidence tiers of federal education law.',
    );
  });
});

describe('what a plan can reach, and how far attrition is from the boundary', () => {
  const plan = { randomised: true, unitOfAssignment: 'classroom' as const, plannedSites: 4, plannedClassrooms: 24, plannedStudentsPerClassroom: 25, shareIntervention: 0.5, baselineMeasured: true, adjustsForBaseline: true, accountsForClustering: true, boundary: 'cautious' as const };
  it('when 24 classrooms of 25 in 4 schools are randomised, then the best case is without reservations and strong', () => {
    const p = planPreview(plan);
    expect([p.best.rating, p.best.tier]).toEqual(['without-reservations', 'strong']);
    expect(p.conditions.join(' ')).toContain('the plan has 600 students in 24 classrooms');
  });
  it('when two schools are assigned one to each arm, then no design change short of more schools can meet the standards', () => {
    expect(planPreview({ ...plan, unitOfAssignment: 'school', plannedSites: 2 }).best.rating).toBe('does-not-meet');
  });
  it('when 8 classrooms of 20 in one school are planned, then the best tier is promising', () => {
    expect(planPreview({ ...plan, plannedSites: 1, plannedClassrooms: 8, plannedStudentsPerClassroom: 20 }).best.tier).toBe('promising');
  });
  it('when the study is quasi-experimental, then the best case is with reservations (moderate)', () => {
    const p = planPreview({ ...plan, randomised: false });
    expect([p.best.rating, p.best.tier]).toEqual(['with-reservations', 'moderate']);
  });
  it('when attrition sits exactly on the 10 % row, then one more intervention loss makes it high', () => {
    // 264/2000 and 137/2000 lost: overall 10.025 %, boundary 6.3 − 0.025/3 × 0.2 ≈ 6.298 pp < differential 6.35 pp.
    expect(attritionMargin(students(2000, 1737, 2000, 1863), 'cautious')).toEqual({ band: 'low', lossesToHigh: { arm: 'intervention', count: 1 }, recoveriesToLow: null });
  });
  it('when 1 of 12 intervention classrooms is lost, then attrition is high and that classroom’s sheet would make it low again', () => {
    // 11/12 vs 12/12: overall 4.17 %, differential 8.33 pp > interpolated 6.03 pp (cautious) → high.
    expect(attritionMargin(students(12, 11, 12, 12), 'cautious')).toEqual({ band: 'high', lossesToHigh: null, recoveriesToLow: { arm: 'intervention', count: 1 } });
  });
  it('when one intervention classroom of 12 has no accepted outcome sheet, then Checks says that one more sheet brings classroom attrition back to low', () => {
    const risks = ratingRisks(base({ unitOfAssignment: 'classroom', clusters: students(12, 11, 12, 12), students: students(300, 275, 300, 300), joiners: 0 }));
    expect(risks[0]).toEqual({ text: 'Attrition of classrooms is high under the cautious boundary; 1 more intervention classroom with an accepted outcome sheet would bring it back to low.', seeOn: 'checks' });
  });
  it('when attrition sits on the boundary, then Checks says how many more losses make it high', () => {
    expect(ratingRisks(base({ students: students(2000, 1737, 2000, 1863) }))).toContainEqual({ text: '1 more intervention student without an outcome score would make attrition of students high under the cautious boundary.', seeOn: 'checks' });
  });
  it('when the baseline difference needs adjustment the analysis does not make, a reassignment was recorded and one teacher delivers an arm, then each is a risk', () => {
    const risks = ratingRisks(base({ baseline: { effectSize: 0.12, kind: 'hedges-g' }, adjustsForBaseline: false, reassignments: 1, teachers: { intervention: ['t1'], comparison: ['t2'] } }));
    expect(risks.map((r) => r.seeOn)).toEqual(['draw', 'checks', 'draw', 'draw']);
    expect(risks[1].text).toContain('(0.12) is above 0.05');
  });
});

