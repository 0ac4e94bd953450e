import { attrition, WWC_ATTRITION_TABLE, type AttritionBoundary } from '../standards.js';
import type { ArmCounts, ArmPair, ComparisonDescription, SeeOn } from './rating.js';
import { evidenceVerdict, LARGE_SAMPLE_GROUPS, LARGE_SAMPLE_GROUP_SIZE, LARGE_SAMPLE_STUDENTS, type Verdict } from './tier.js';

export interface PlannedDesign {
  /** False when the study is quasi-experimental (no draw, or a draw already compromised). */
  randomised: boolean;
  unitOfAssignment: 'student' | 'classroom' | 'school';
  plannedSites: number;
  plannedClassrooms: number;
  plannedStudentsPerClassroom: number;
  shareIntervention: number;
  /** The study has a baseline wave of the primary measure. */
  baselineMeasured: boolean;
  adjustsForBaseline: boolean;
  /** The registered analysis accounts for clustering (the two-level model; Welch over students with the clustering correction deciding also does). */
  accountsForClustering: boolean;
  boundary: AttritionBoundary;
}

export interface PlanPreview {
  /** The verdict the design reaches at best: no attrition, no reassignment, equivalent groups, a significant favourable effect. */
  best: Verdict;
  /** What that best case assumes and what the tier needs, in plain words. */
  conditions: string[];
}

const split = (n: number, share: number): [number, number] => {
  const i = Math.max(0, Math.min(n, Math.round(n * share)));
  return [i, n - i];
};
const ids = (prefix: string, n: number) => Array.from({ length: n }, (_, k) => `${prefix}${k + 1}`);

/**
 * What a plan can reach at best, before sealing: the planned numbers run through the same rules as a finished study,
 * with every condition that can still go wrong assumed to go right (and each assumption listed).
 */
export function planPreview(p: PlannedDesign): PlanPreview {
  const students = p.plannedClassrooms * p.plannedStudentsPerClassroom;
  const clustered = p.unitOfAssignment !== 'student';
  const units = p.unitOfAssignment === 'school' ? p.plannedSites : p.plannedClassrooms;
  const [ui, uc] = split(units, p.shareIntervention);
  const [si, sc] = split(students, p.shareIntervention);
  const [ti, tc] = split(p.plannedClassrooms, p.shareIntervention);
  // Classrooms and students assigned within schools: both arms in every school; schools assigned: each school in one arm.
  const [schoolsI, schoolsC] = p.unitOfAssignment === 'school' ? split(p.plannedSites, p.shareIntervention) : [p.plannedSites, p.plannedSites];
  const schoolIds = (arm: 'i' | 'c', n: number) => (p.unitOfAssignment === 'school' ? ids(`school-${arm}`, n) : ids('school-', n));
  const full = (n: number): ArmCounts => ({ randomised: n, analysed: n });
  const best = evidenceVerdict({
    randomised: p.randomised,
    unitOfAssignment: p.unitOfAssignment,
    reassignments: 0,
    boundary: p.boundary,
    clusters: clustered ? { intervention: full(ui), comparison: full(uc) } : null,
    students: { intervention: full(si), comparison: full(sc) },
    joiners: clustered ? 0 : null,
    baseline: p.baselineMeasured ? { effectSize: 0, kind: 'hedges-g' } : 'not-measured',
    adjustsForBaseline: p.adjustsForBaseline,
    accountsForClustering: p.accountsForClustering,
    // Student assignment: each classroom's teacher delivers both arms.
    teachers: clustered ? { intervention: ids('teacher-i', ti), comparison: ids('teacher-c', tc) } : { intervention: ids('teacher-', p.plannedClassrooms), comparison: ids('teacher-', p.plannedClassrooms) },
    schools: { intervention: schoolIds('i', schoolsI), comparison: schoolIds('c', schoolsC) },
    effect: { estimate: 1, favourable: true, p: 0.01, significant: true },
    sample: { groupsOfTenOrMore: p.plannedStudentsPerClassroom >= LARGE_SAMPLE_GROUP_SIZE ? p.plannedClassrooms : 0, sites: p.plannedSites },
  });
  const maxDiff = WWC_ATTRITION_TABLE[p.boundary][0];
  const conditions = [
    `Assumes attrition stays low: with no overall attrition the ${p.boundary} boundary allows ${maxDiff} percentage points of differential attrition, and less as overall attrition grows.`,
    'Assumes no classroom is moved to another arm after the draw, and no student who joins a classroom later is analysed.',
    'Assumes the effect turns out significant and favourable; nothing at the planning stage can promise that.',
    `The strong and moderate tiers need a large sample: ${LARGE_SAMPLE_STUDENTS} or more analysed students, or ${LARGE_SAMPLE_GROUPS} or more classrooms of ${LARGE_SAMPLE_GROUP_SIZE} or more; the plan has ${students} students in ${p.plannedClassrooms} classrooms.`,
    `They also need more than one site; the plan has ${p.plannedSites} school${p.plannedSites === 1 ? '' : 's'}.`,
  ];
  return { best, conditions };
}

export interface AttritionMargin {
  band: 'low' | 'high';
  /** While low: the fewest further losses in one arm that make attrition high (and which arm). */
  lossesToHigh: { arm: 'intervention' | 'comparison'; count: number } | null;
  /** While high: the fewest further analysed units in one arm that make it low again, if any can. */
  recoveriesToLow: { arm: 'intervention' | 'comparison'; count: number } | null;
}

/**
 * How far the current counts are from the other side of the chosen boundary: used on Checks to say what puts the rating
 * at risk ("2 more intervention classrooms lost make differential attrition high") or what would rescue it.
 */
export function attritionMargin(counts: ArmPair<ArmCounts>, boundary: AttritionBoundary): AttritionMargin {
  const bandOf = (i: ArmCounts, c: ArmCounts) => attrition({ randomized1: i.randomised, analyzed1: i.analysed, randomized2: c.randomised, analyzed2: c.analysed })[boundary].band;
  const band = bandOf(counts.intervention, counts.comparison);
  const arms = ['intervention', 'comparison'] as const;
  const moved = (arm: (typeof arms)[number], delta: number) => {
    const next = { ...counts, [arm]: { ...counts[arm], analysed: counts[arm].analysed + delta } };
    return bandOf(next.intervention, next.comparison);
  };
  let best: { arm: (typeof arms)[number]; count: number } | null = null;
  for (const arm of arms) {
    const room = band === 'low' ? counts[arm].analysed : counts[arm].randomised - counts[arm].analysed;
    for (let k = 1; k <= room && (best === null || k < best.count); k++) {
      if (moved(arm, band === 'low' ? -k : k) !== band) {
        best = { arm, count: k };
        break;
      }
    }
  }
  return { band, lossesToHigh: band === 'low' ? best : null, recoveriesToLow: band === 'high' ? best : null };
}

export interface RatingRisk {
  text: string;
  seeOn: SeeOn;
}

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/**
 * What currently puts a comparison's rating at risk, in plain words with the numbers that would change it: attrition
 * margins against the chosen boundary, a baseline difference that needs adjustment, reassignments, joiners, confounds.
 */
export function ratingRisks(d: ComparisonDescription): RatingRisk[] {
  const risks: RatingRisk[] = [];
  const intact = d.randomised && d.reassignments === 0;
  const unitWords = d.unitOfAssignment === 'school' ? (['school', 'schools'] as const) : (['classroom', 'classrooms'] as const);
  const margin = (counts: ArmPair<ArmCounts> | null, one: string, many: string, lostAs: string, foundAs: string) => {
    if (!intact || !counts || counts.intervention.randomised === 0 || counts.comparison.randomised === 0) return;
    const m = attritionMargin(counts, d.boundary);
    if (m.band === 'low' && m.lossesToHigh) {
      risks.push({ text: `${plural(m.lossesToHigh.count, `more ${m.lossesToHigh.arm} ${one}`, `more ${m.lossesToHigh.arm} ${many}`)} ${lostAs} would make attrition of ${many} high under the ${d.boundary} boundary.`, seeOn: 'checks' });
    } else if (m.band === 'high') {
      risks.push({
        text: m.recoveriesToLow
          ? `Attrition of ${many} is high under the ${d.boundary} boundary; ${plural(m.recoveriesToLow.count, `more ${m.recoveriesToLow.arm} ${one}`, `more ${m.recoveriesToLow.arm} ${many}`)} ${foundAs} would bring it back to low.`
          : `Attrition of ${many} is high under the ${d.boundary} boundary, and no further ${foundAs.replace(/^with /, '')} can bring it back to low: the groups must be shown equivalent at baseline.`,
        seeOn: 'checks',
      });
    }
  };
  if (d.unitOfAssignment !== 'student') margin(d.clusters, unitWords[0], unitWords[1], 'without an accepted outcome sheet', 'with an accepted outcome sheet');
  margin(d.students, 'student', 'students', 'without an outcome score', 'with an outcome score');

  if (d.reassignments > 0) risks.push({ text: `${plural(d.reassignments, 'reassignment', 'reassignments')} after the draw: random assignment is compromised, so the best rating is with reservations and needs baseline equivalence.`, seeOn: 'draw' });
  if (d.joiners !== null && d.joiners > 0) risks.push({ text: `${plural(d.joiners, 'analysed student', 'analysed students')} joined a classroom after the draw: baseline equivalence is required.`, seeOn: 'checks' });
  if (d.baseline !== null && d.baseline !== 'not-measured') {
    const g = Math.abs(d.baseline.effectSize);
    if (g > 0.25) risks.push({ text: `The baseline difference (${g.toFixed(2)}) is above 0.25: wherever equivalence is required, the comparison cannot meet the standards.`, seeOn: 'checks' });
    else if (g > 0.05 && !d.adjustsForBaseline) risks.push({ text: `The baseline difference (${g.toFixed(2)}) is above 0.05 and the analysis does not adjust for it: wherever equivalence is required, it is not shown.`, seeOn: 'checks' });
    else if (g > 0.2) risks.push({ text: `The baseline difference (${g.toFixed(2)}) is ${(0.25 - g).toFixed(2)} from 0.25, beyond which the groups are not equivalent.`, seeOn: 'checks' });
  } else if (d.baseline === 'not-measured' && d.randomised) {
    risks.push({ text: 'There is no baseline score of this measure: if attrition turns high, equivalence cannot be shown and the comparison would not meet the standards.', seeOn: 'plan' });
  }
  for (const kind of ['teachers', 'schools'] as const) {
    for (const arm of ['intervention', 'comparison'] as const) {
      const mine = d[kind][arm];
      const other = d[kind][arm === 'intervention' ? 'comparison' : 'intervention'];
      if (mine.length === 1 && !other.includes(mine[0])) risks.push({ text: `A single ${kind === 'teachers' ? 'teacher' : 'school'} delivers the ${arm} arm: the comparison cannot meet the standards.`, seeOn: 'draw' });
    }
  }
  return risks;
}
