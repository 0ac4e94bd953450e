import { rateComparison, type ComparisonDescription, type EvidenceReason, type Rating } from './rating.js';

/** Evidence tiers of the federal law's definition of "evidence-based" (20 U.S.C. 7801(21)(A) — V); 'none' below them. */
export type Tier = 'strong' | 'moderate' | 'promising' | 'none';

/** "Large sample" in the non-regulatory guidance (2016): 350 or more students (T) or 50 or more groups of 10 or more students (M). */
export const LARGE_SAMPLE_STUDENTS = 350;
export const LARGE_SAMPLE_GROUPS = 50;
export const LARGE_SAMPLE_GROUP_SIZE = 10;

export const tierCitations = {
  law: '20 U.S.C. 7801(21)(A) (ESEA section 8101(21)(A)): evidence-based',
  guidance: 'Non-regulatory guidance “Using Evidence to Strengthen Education Investments” (2016); 34 CFR 77.1',
} as const;

export interface Verdict {
  rating: Rating;
  tier: Tier;
  /** False while the rating or the effect cannot be judged yet: the tier is what the data reach so far. */
  settled: boolean;
  reasons: EvidenceReason[];
  reviewerChecks: string[];
  /** The final wording, for the principal's view and digests. */
  wording: string;
}

export const ratingWords: Record<Rating, string> = {
  'without-reservations': 'would meet the evidence standards without reservations',
  'with-reservations': 'would meet the evidence standards with reservations',
  'does-not-meet': 'would not meet the evidence standards',
  'cannot-tell': 'cannot be rated yet',
};

export const tierWords: Record<Tier, string> = {
  strong: 'strong evidence',
  moderate: 'moderate evidence',
  promising: 'promising evidence',
  none: 'none of the law’s evidence tiers',
};

/** The caution beside a preview on its own (the plan's). */
export const PREVIEW_CAUTION = 'This is a preview, not a review: the evidence reviewers decide.';
/** How the one-sentence wording opens: the same caution, in a clause. */
export const PREVIEW_CAUTION_LEAD = 'Evidence preview, not a review (the evidence reviewers decide)';

/**
 * The one sentence every screen, e-mail and export uses for a verdict (the principal's view and digests carry only it):
 * no counts, and the caution that it is a preview the evidence reviewers decide on.
 */
export function verdictWording(v: Pick<Verdict, 'rating' | 'tier' | 'settled'>): string {
  const meets = v.rating === 'without-reservations' || v.rating === 'with-reservations';
  const tier = !v.settled
    ? 'its evidence tier cannot be told yet'
    : v.tier === 'none'
      ? 'would not reach any of the evidence tiers of federal education law'
      : `would count as ${tierWords[v.tier]} under federal education law`;
  // "but" where the tier goes against the rating (meets, no tier; misses, a tier), "and" otherwise.
  const joint = !v.settled ? '; ' : meets === (v.tier !== 'none') ? ' and ' : ' but ';
  return `${PREVIEW_CAUTION_LEAD}: this comparison ${ratingWords[v.rating]}${joint}${tier}.`;
}

/** The rating, then the tier from the rating, the effect's sign and significance, and the sample. */
export function evidenceVerdict(d: ComparisonDescription): Verdict {
  const { rating, reasons, reviewerChecks } = rateComparison(d);
  const tierReasons: EvidenceReason[] = [];
  const clustered = d.unitOfAssignment !== 'student';

  const e = d.effect;
  const effectCounts = e !== null && e.significant && e.favourable && (!clustered || d.accountsForClustering);
  tierReasons.push({
    id: 'effect',
    rule: 'A statistically significant favourable effect on the outcome',
    citation: tierCitations.law,
    numbers: e === null ? 'No result yet' : `Estimate ${e.estimate.toPrecision(3)} (${e.favourable ? 'favourable' : 'unfavourable'}), p = ${e.p < 0.001 ? '< .001' : e.p.toFixed(3)}, ${e.significant ? 'significant' : 'not significant'}`,
    passed: e === null ? null : effectCounts,
    consequence: e === null ? 'The tier waits for the result.' : effectCounts ? 'Counts towards a tier.' : 'No tier: the law asks for a significant improvement.',
    seeOn: 'result',
  });

  const analysed = d.students ? d.students.intervention.analysed + d.students.comparison.analysed : 0;
  const large = analysed >= LARGE_SAMPLE_STUDENTS || d.sample.groupsOfTenOrMore >= LARGE_SAMPLE_GROUPS;
  tierReasons.push({
    id: 'large-sample',
    rule: `A large sample: ${LARGE_SAMPLE_STUDENTS} or more students, or ${LARGE_SAMPLE_GROUPS} or more groups of ${LARGE_SAMPLE_GROUP_SIZE} or more`,
    citation: tierCitations.guidance,
    numbers: `${analysed} students analysed; ${d.sample.groupsOfTenOrMore} groups with ${LARGE_SAMPLE_GROUP_SIZE} or more analysed students`,
    passed: d.students === null ? null : large,
    consequence: large ? 'Large enough for strong or moderate evidence.' : 'Too small for strong or moderate evidence; promising at most.',
    seeOn: 'result',
  });
  const multi = d.sample.sites > 1;
  tierReasons.push({
    id: 'multi-site',
    rule: 'A multi-site sample: more than one site',
    citation: tierCitations.guidance,
    numbers: `${d.sample.sites} school${d.sample.sites === 1 ? '' : 's'} with analysed students`,
    passed: multi,
    consequence: multi ? 'Multi-site, if the reviewers count a school as a site.' : 'One site: promising at most.',
    seeOn: 'plan',
  });
  const checks = [
    ...reviewerChecks,
    'Whether a school counts as a site: the guidance may count sites as districts, localities or states, and a study in one district’s schools may not be multi-site.',
    'The sample overlaps with the students and settings where the intervention is proposed.',
    'No other study of the intervention that meets the standards finds a significant unfavourable effect that outweighs this one.',
  ];

  const settled = rating !== 'cannot-tell' && e !== null && d.students !== null;
  const meets = rating === 'without-reservations' || rating === 'with-reservations';
  const confounded = reasons.some((r) => r.id.startsWith('confound-') && r.passed === false);
  let tier: Tier = 'none';
  if (settled && effectCounts) {
    if (rating === 'without-reservations' && large && multi) tier = 'strong';
    else if (meets && large && multi) tier = 'moderate';
    else if (meets) tier = 'promising';
    // A comparison that misses the standards but controls for the baseline may still be a correlational study with
    // statistical controls for selection bias (the promising tier); a confounded one cannot.
    else if (d.adjustsForBaseline && d.baseline !== 'not-measured' && !confounded) tier = 'promising';
  }
  const tierRule: Record<Tier, string> = {
    strong: 'Meets the standards without reservations, with a significant favourable effect in a large, multi-site sample: strong evidence.',
    moderate: 'Meets the standards (with reservations, or a quasi-experiment), with a significant favourable effect in a large, multi-site sample: moderate evidence.',
    promising: meets
      ? 'Meets the standards with a significant favourable effect, but the sample is not both large and multi-site: promising evidence.'
      : 'Misses the standards but controls for the baseline score: at most a correlational study with statistical controls for selection bias, promising evidence.',
    none: !settled ? 'Not settled yet: the rating or the result is still missing.' : 'No tier: the effect is not a significant improvement, or the study neither meets the standards nor controls for selection bias.',
  };
  tierReasons.push({
    id: 'tier',
    rule: 'The tier follows from the rating, the effect and the sample',
    citation: `${tierCitations.law}; ${tierCitations.guidance}`,
    numbers: `Rating: ${ratingWords[rating]}; tier: ${tierWords[tier]}`,
    passed: settled ? tier !== 'none' : null,
    consequence: tierRule[tier],
    seeOn: 'result',
  });
  const all = [...reasons, ...tierReasons];
  return { rating, tier, settled, reasons: all, reviewerChecks: checks, wording: verdictWording({ rating, tier, settled }) };
}
