import { attrition, baselineEquivalence, type AttritionBoundary, type AttritionResult } from '../standards.js';

/**
 * The evidence-standard rating of one confirmatory comparison, rule by rule, from a plain description of it. Sources and
 * how sure each is: `SOURCES.md` beside this file (V: read in the published text, T: read in a third-party summary,
 * M: from memory).
 */

export type ArmPair<T> = { intervention: T; comparison: T };
export interface ArmCounts {
  randomised: number;
  analysed: number;
}

export type SeeOn = 'checks' | 'result' | 'plan' | 'draw';

export interface ComparisonDescription {
  /** The arms were formed by the study's random draw (false: a comparison the study built otherwise). */
  randomised: boolean;
  unitOfAssignment: 'student' | 'classroom' | 'school';
  /** Recorded manual changes of a unit's arm after the draw. */
  reassignments: number;
  /** The attrition boundary the research lead chose for this study. */
  boundary: AttritionBoundary;
  /** Assigned units (classrooms or schools) randomised and analysed per arm; null when students were assigned. */
  clusters: ArmPair<ArmCounts> | null;
  /** Students randomised and analysed per arm; null while there are no outcome data to count. */
  students: ArmPair<ArmCounts> | null;
  /** Analysed students who joined an assigned unit after the draw; null when Evenhand cannot tell. */
  joiners: number | null;
  /** Baseline difference of the analytic sample; 'not-measured' when the study has no baseline of this measure; null when not yet known. */
  baseline: { effectSize: number; kind: 'hedges-g' | 'cox-index' } | 'not-measured' | null;
  /** The deciding analysis adjusts for the baseline score. */
  adjustsForBaseline: boolean;
  /** The deciding analysis accounts for clustering (two-level model, cluster-robust errors or the clustering correction). */
  accountsForClustering: boolean;
  /** Who delivers each arm: teacher and school identifiers (empty when unknown). */
  teachers: ArmPair<readonly string[]>;
  schools: ArmPair<readonly string[]>;
  /** The deciding analysis's result; null before a run. `favourable`: the estimate points the way the measure calls better. */
  effect: { estimate: number; favourable: boolean; p: number; significant: boolean } | null;
  /** Analysed assigned units with 10 or more analysed students each, and schools with analysed students. */
  sample: { groupsOfTenOrMore: number; sites: number };
}

export type Rating = 'without-reservations' | 'with-reservations' | 'does-not-meet' | 'cannot-tell';

export interface EvidenceReason {
  /** Stable key of the rule (tests and screens use it). */
  id: string;
  /** The rule in plain words. */
  rule: string;
  /** Handbook section or guidance it comes from. */
  citation: string;
  /** The numbers the rule was judged on, in plain words. */
  numbers: string;
  /** null: cannot be judged yet. */
  passed: boolean | null;
  /** What the outcome does to the verdict. */
  consequence: string;
  seeOn: SeeOn;
}

export interface RatingResult {
  rating: Rating;
  reasons: EvidenceReason[];
  /** What the reviewers must still check: things Evenhand cannot know. */
  reviewerChecks: string[];
}

/** Citations, one place (SOURCES.md says how each was verified). */
export const citations = {
  rctIndividual: 'WWC Standards Handbook v4.1, ch. II.A (individual-level assignment)',
  rctCluster: 'WWC Standards Handbook v4.1, ch. II.B (cluster-level assignment)',
  attritionTable: 'WWC Standards Handbook v4.1, Table II.1 (attrition boundaries)',
  equivalence: 'WWC FAQ on baseline equivalence (citing Handbook v3.0); Handbook v4.1, ch. II.A',
  compromised: 'WWC FAQ on baseline equivalence: a trial whose randomisation is in doubt must show equivalence; best rating with reservations',
  confound: 'WWC Standards Handbook v4.1, ch. II.A (confounding factors: a condition with a single teacher or school)',
  clustering: 'WWC Standards Handbook v4.1, ch. II.B and App. F (clustering correction); Hedges 2007',
  joiners: 'WWC Standards Handbook v4.1, ch. II.B (individuals who joined clusters after assignment)',
} as const;

/**
 * Share of the analysed students who joined an assigned unit after the draw above which a cluster trial's student-level
 * result must show baseline equivalence (M: the handbook's cluster rules look at whether the analysed students were in
 * the clusters when they were assigned; no tolerated share was verified, so any joiner counts).
 */
export const JOINERS_LIMIT_SHARE = 0;

const pct = (x: number) => `${x.toFixed(1)} %`;
const pp = (x: number) => `${x.toFixed(1)} percentage points`;

function attritionReason(id: string, what: 'students' | 'classrooms' | 'schools', counts: ArmPair<ArmCounts> | null, boundary: AttritionBoundary, citation: string): { reason: EvidenceReason; high: boolean | null; result: AttritionResult | null } {
  const rule = `Overall and differential attrition of ${what} within the ${boundary} boundary`;
  if (!counts || counts.intervention.randomised === 0 || counts.comparison.randomised === 0) {
    return {
      reason: { id, rule, citation, numbers: `No outcome data for ${what} yet`, passed: null, consequence: 'The rating waits for outcome data.', seeOn: 'checks' },
      high: null,
      result: null,
    };
  }
  const a = attrition({ randomized1: counts.intervention.randomised, analyzed1: counts.intervention.analysed, randomized2: counts.comparison.randomised, analyzed2: counts.comparison.analysed });
  const b = a[boundary];
  const low = b.band === 'low';
  const limit = b.maxDifferential === null ? 'no differential is low at this overall rate' : `at most ${pp(b.maxDifferential)}${b.interpolated ? ' (interpolated between the handbook’s listed rows)' : ''}`;
  return {
    reason: {
      id,
      rule,
      citation: `${citation}; ${citations.attritionTable}`,
      numbers: `${counts.intervention.analysed} of ${counts.intervention.randomised} intervention and ${counts.comparison.analysed} of ${counts.comparison.randomised} comparison ${what} analysed: overall ${pct(a.overall)}, differential ${pp(a.differential)}; the ${boundary} boundary allows ${limit}`,
      passed: low,
      consequence: low ? 'Low attrition.' : 'High attrition: the analysed groups must be shown equivalent at baseline, and the best rating is with reservations.',
      seeOn: 'checks',
    },
    high: !low,
    result: a,
  };
}

function confoundReasons(kind: 'teacher' | 'school', ids: ArmPair<readonly string[]>): EvidenceReason[] {
  const out: EvidenceReason[] = [];
  for (const arm of ['intervention', 'comparison'] as const) {
    const mine = ids[arm];
    const other = arm === 'intervention' ? ids.comparison : ids.intervention;
    if (mine.length === 0) continue;
    // One deliverer who also delivers the other arm is shared by both (students assigned within a class): no confound.
    const alone = mine.length === 1 && !other.includes(mine[0]);
    out.push({
      id: `confound-${kind}-${arm}`,
      rule: `The ${arm} arm is not delivered by a single ${kind}`,
      citation: citations.confound,
      numbers: `${mine.length} ${kind}${mine.length === 1 ? '' : 's'} deliver${mine.length === 1 ? 's' : ''} the ${arm} arm`,
      passed: !alone,
      consequence: alone ? `Does not meet the standards: the ${kind}’s effect cannot be told apart from the intervention’s.` : 'No single-' + kind + ' confound.',
      seeOn: 'draw',
    });
  }
  return out;
}

/** The reviewers' items Evenhand cannot judge, always listed. */
export const alwaysReviewerChecks = [
  'The outcome measure has face validity and adequate reliability (the handbook sets reliability thresholds for each kind of measure).',
  'The outcome measure is not over-aligned with the intervention (for example, a test built from the intervention’s own materials).',
  'The outcome was collected the same way, at the same time, in both arms.',
];

/** The evidence-standard rating and its reasons. */
export function rateComparison(d: ComparisonDescription): RatingResult {
  const reasons: EvidenceReason[] = [];
  const reviewerChecks = [...alwaysReviewerChecks];
  const clustered = d.unitOfAssignment !== 'student';
  const unitWord = d.unitOfAssignment === 'school' ? 'schools' : 'classrooms';
  const designCitation = clustered ? citations.rctCluster : citations.rctIndividual;
  let failed = false;
  let unknown = false;
  let capped = false;
  const needEquivalence: string[] = [];

  reasons.push({
    id: 'design',
    rule: 'The arms were formed by random assignment',
    citation: designCitation,
    numbers: d.randomised ? `Randomised by ${d.unitOfAssignment === 'student' ? 'student' : d.unitOfAssignment}` : 'Not randomised (a quasi-experimental comparison)',
    passed: d.randomised,
    consequence: d.randomised ? 'Eligible for the highest rating.' : 'At best with reservations, and only if the groups were equivalent at baseline.',
    seeOn: 'plan',
  });
  if (!d.randomised) {
    capped = true;
    needEquivalence.push('the design is not randomised');
  }

  const intact = d.randomised && d.reassignments === 0;
  if (d.randomised) {
    reasons.push({
      id: 'reassignments',
      rule: 'Every unit stayed in the arm the draw gave it',
      citation: citations.compromised,
      numbers: d.reassignments === 0 ? 'No reassignments after the draw' : `${d.reassignments} reassignment${d.reassignments === 1 ? '' : 's'} after the draw`,
      passed: d.reassignments === 0,
      consequence: d.reassignments === 0 ? 'Random assignment intact.' : 'Randomisation compromised: reviewed as a quasi-experiment, at best with reservations and only with baseline equivalence.',
      seeOn: 'draw',
    });
    if (!intact) {
      capped = true;
      needEquivalence.push('units were reassigned after the draw');
    }
  }

  if (intact) {
    if (clustered) {
      const c = attritionReason('cluster-attrition', unitWord, d.clusters, d.boundary, citations.rctCluster);
      reasons.push(c.reason);
      if (c.high === null) unknown = true;
      else if (c.high) needEquivalence.push(`attrition of ${unitWord} is high`);
    }
    const s = attritionReason('student-attrition', 'students', d.students, d.boundary, designCitation);
    reasons.push(s.reason);
    if (s.high === null) unknown = true;
    else if (s.high) needEquivalence.push('attrition of students is high');

    if (clustered) {
      const analysed = d.students ? d.students.intervention.analysed + d.students.comparison.analysed : 0;
      if (d.joiners === null) {
        reasons.push({
          id: 'joiners',
          rule: 'The analysed students were in their assigned units when the draw was made',
          citation: citations.joiners,
          numbers: 'Evenhand cannot tell when each student joined a classroom (no roster import with join dates)',
          passed: null,
          consequence: 'Left to the reviewers (see what they must check).',
          seeOn: 'checks',
        });
        reviewerChecks.push('The analysed students were in their classrooms when the draw was made; students who joined later require baseline equivalence.');
      } else {
        const share = analysed > 0 ? d.joiners / analysed : 0;
        const ok = share <= JOINERS_LIMIT_SHARE;
        reasons.push({
          id: 'joiners',
          rule: 'The analysed students were in their assigned units when the draw was made',
          citation: citations.joiners,
          numbers: `${d.joiners} of ${analysed} analysed students joined after the draw (${pct(100 * share)})`,
          passed: ok,
          consequence: ok ? 'No joiners among the analysed students.' : 'Joiners among the analysed students: baseline equivalence is required, and the best rating is with reservations.',
          seeOn: 'checks',
        });
        if (!ok) needEquivalence.push('students joined after the draw');
      }
    }
  }

  const equivalenceRequired = needEquivalence.length > 0;
  if (equivalenceRequired) capped = true;
  const b = d.baseline;
  if (b === 'not-measured') {
    reasons.push({
      id: 'baseline',
      rule: 'Baseline equivalence of the analysed groups',
      citation: citations.equivalence,
      numbers: 'The study has no baseline score of this measure',
      passed: equivalenceRequired ? false : true,
      consequence: equivalenceRequired ? `Does not meet the standards: equivalence is required (${needEquivalence.join('; ')}) and cannot be shown.` : 'Not required while random assignment is intact and attrition low.',
      seeOn: 'plan',
    });
    if (equivalenceRequired) failed = true;
  } else if (b === null) {
    reasons.push({
      id: 'baseline',
      rule: 'Baseline equivalence of the analysed groups',
      citation: citations.equivalence,
      numbers: 'Not known yet: it needs baseline and outcome scores in both arms',
      passed: equivalenceRequired ? null : true,
      consequence: equivalenceRequired ? `Required (${needEquivalence.join('; ')}); the rating waits for it.` : 'Not required while random assignment is intact and attrition low.',
      seeOn: 'checks',
    });
    if (equivalenceRequired) unknown = true;
  } else {
    const e = baselineEquivalence(b.effectSize);
    const name = b.kind === 'cox-index' ? 'Cox index' : 'Hedges’ g';
    const ok = e.band === 'satisfies' || (e.band === 'requires-adjustment' && d.adjustsForBaseline);
    const numbers = `|${name}| = ${e.absG.toFixed(3)} (equivalent at ≤ 0.05; 0.05–0.25 only with adjustment, which the analysis ${d.adjustsForBaseline ? 'makes' : 'does not make'}; over 0.25 not equivalent)`;
    reasons.push({
      id: 'baseline',
      rule: 'Baseline equivalence of the analysed groups',
      citation: citations.equivalence,
      numbers,
      passed: equivalenceRequired ? ok : true,
      consequence: !equivalenceRequired
        ? 'Not required while random assignment is intact and attrition low.'
        : ok
          ? `Equivalent (required because ${needEquivalence.join('; ')}): at best with reservations.`
          : `Does not meet the standards: equivalence is required (${needEquivalence.join('; ')}) and not shown.`,
      seeOn: 'checks',
    });
    if (equivalenceRequired && !ok) failed = true;
  }

  for (const r of [...confoundReasons('teacher', d.teachers), ...confoundReasons('school', d.schools)]) {
    reasons.push(r);
    if (r.passed === false) failed = true;
  }
  if (d.teachers.intervention.length === 0 || d.teachers.comparison.length === 0) {
    reviewerChecks.push('Each arm is delivered by more than one teacher and more than one school (Evenhand does not know who delivers every arm).');
  }

  if (clustered) {
    reasons.push({
      id: 'clustering',
      rule: 'The analysis accounts for the clustering of students in the assigned units',
      citation: citations.clustering,
      numbers: d.accountsForClustering ? 'The deciding analysis accounts for clustering' : 'The deciding analysis treats students as independent',
      passed: d.accountsForClustering,
      consequence: d.accountsForClustering ? 'Its significance can be taken as it is.' : 'The reviewers would correct the significance for clustering; until then it does not count towards a tier.',
      seeOn: 'result',
    });
  }

  const rating: Rating = failed ? 'does-not-meet' : unknown ? 'cannot-tell' : capped ? 'with-reservations' : 'without-reservations';
  return { rating, reasons, reviewerChecks };
}
