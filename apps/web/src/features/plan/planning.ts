import type { MeasureKind, PlanContentInput, UnitOfAssignment } from '@evenhand/entities';
import { DEFAULT_ICC_ACHIEVEMENT, DEFAULT_ICC_BEHAVIOR, mdes, power, proportionMdes, type Design, type ProportionMdesResult } from '@evenhand/stats';

/** What the planning panel reads from the plan form, as typed so far (numbers may be NaN or missing). */
export type PlanningValues = Pick<
  PlanContentInput,
  | 'alpha'
  | 'alternative'
  | 'shareIntervention'
  | 'smallestEffectOfInterest'
  | 'plannedSites'
  | 'plannedClassrooms'
  | 'plannedStudentsPerClassroom'
  | 'covariate'
  | 'covariateR2'
  | 'iccSource'
  | 'icc'
  | 'primaryTest'
>;

export const planningFields = [
  'alpha',
  'alternative',
  'shareIntervention',
  'smallestEffectOfInterest',
  'plannedSites',
  'plannedClassrooms',
  'plannedStudentsPerClassroom',
  'covariate',
  'covariateR2',
  'iccSource',
  'icc',
  'primaryTest',
] as const satisfies readonly (keyof PlanningValues)[];

export interface PlanningContext {
  unit: UnitOfAssignment;
  /** The primary measure's kind, which sets the standard default ICC; null before one is chosen. */
  measureKind: MeasureKind | null;
  /** The primary measure is yes/no: the panel also says what difference in proportions the plan can detect. */
  yesNo?: boolean;
}

/**
 * For a yes/no primary measure: the smallest difference in proportions the planned design detects at 80% power, given
 * the share expected to answer yes in the comparison arm (`proportionMdes`: the MDES times √(p(1 − p))); null when the
 * share is not strictly between 0 and 1.
 */
export function proportionPlanning(design: Design, comparisonProportion: number): ProportionMdesResult | null {
  if (!(comparisonProportion > 0 && comparisonProportion < 1)) return null;
  return proportionMdes({ ...design, power: POWER, comparisonProportion });
}

export interface IccChoice {
  icc: number;
  /** Which ICC this is, as a phrase to end a sentence with. */
  note: string;
}

export function defaultIcc(kind: MeasureKind | null): number {
  return kind === 'behaviour' ? DEFAULT_ICC_BEHAVIOR : DEFAULT_ICC_ACHIEVEMENT;
}

/** The ICC a power calculation can use before any data exist. */
export function planningIcc(values: Pick<PlanningValues, 'iccSource' | 'icc'>, kind: MeasureKind | null): IccChoice {
  const standard = defaultIcc(kind);
  const kindName = kind === 'behaviour' ? 'a behaviour' : 'an achievement';
  if (values.iccSource === 'assumed' && typeof values.icc === 'number' && Number.isFinite(values.icc)) {
    return { icc: values.icc, note: `the assumed ICC, ${values.icc}` };
  }
  if (values.iccSource === 'observed') {
    return {
      icc: standard,
      note: `the standard default for ${kindName} measure, ${standard.toFixed(2)}, until the ICC can be estimated from the scores`,
    };
  }
  return { icc: standard, note: `the standard default ICC for ${kindName} measure, ${standard.toFixed(2)}` };
}

const isCount = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v) && v >= 1;
const isShare = (v: unknown): v is number => typeof v === 'number' && v > 0 && v < 1;

/** What a row of the planning panel's numbers is counted in: classrooms, or schools when schools are assigned. */
export function curveUnit(unit: UnitOfAssignment): { singular: string; plural: string } {
  return unit === 'school' ? { singular: 'school', plural: 'schools' } : { singular: 'classroom', plural: 'classrooms' };
}

interface Resolved {
  alpha: number;
  alternative: 'two-sided' | 'one-sided';
  share: number;
  studentsPerClassroom: number;
  classroomsPerSchool: number;
  r2: number;
  icc: IccChoice;
  /** Planned units per arm, on average (classrooms, or schools when schools are assigned). */
  unitsPerArm: number;
  /** Block indicators the registered two-level model spends degrees of freedom on: the schools of a classroom draw, less one. */
  blockCovariates: number;
}

function resolve(values: PlanningValues, context: PlanningContext): Resolved | string {
  const { plannedSites: sites, plannedClassrooms: classrooms, plannedStudentsPerClassroom: students } = values;
  if (!isCount(sites) || !isCount(classrooms) || !isCount(students)) return 'Enter the planned numbers of sites, classrooms and students per classroom.';
  const alpha = values.alpha ?? 0.05;
  if (!isShare(alpha)) return 'Enter an alpha between 0 and 1.';
  const share = values.shareIntervention ?? 0.5;
  if (!isShare(share)) return 'Enter the share in the intervention as a number between 0 and 1.';
  const r2 = values.covariate === 'none' ? 0 : (values.covariateR2 ?? 0);
  if (typeof r2 !== 'number' || !(r2 >= 0 && r2 < 1)) return 'Enter the expected R² as a number from 0 up to 1.';
  const icc = planningIcc(values, context.measureKind);
  if (!(icc.icc >= 0 && icc.icc < 1)) return 'Enter an ICC from 0 up to 1.';
  const units = context.unit === 'school' ? sites : classrooms;
  return {
    alpha,
    alternative: values.alternative === 'greater' || values.alternative === 'less' ? 'one-sided' : 'two-sided',
    share,
    studentsPerClassroom: students,
    classroomsPerSchool: classrooms / sites,
    r2,
    icc,
    unitsPerArm: units / 2,
    blockCovariates: values.primaryTest === 'two-level' && context.unit === 'classroom' && sites >= 2 ? sites - 1 : 0,
  };
}

/**
 * The design @evenhand/stats computes with, for a number of units per arm: classrooms or schools
 * assigned → two-level cluster design (students within them); students assigned → individual design.
 */
function designFor(r: Resolved, unit: UnitOfAssignment, unitsPerArm: number): Design {
  const common = { p: r.share, alpha: r.alpha, alternative: r.alternative };
  const units = unitsPerArm * 2;
  if (unit === 'student') {
    return { ...common, design: 'individual', n: units * r.studentsPerClassroom, r2: r.r2, covariates: r.r2 > 0 ? 1 : 0 };
  }
  const clusterSize = unit === 'school' ? r.classroomsPerSchool * r.studentsPerClassroom : r.studentsPerClassroom;
  return { ...common, design: 'cluster', clusters: units, clusterSize, icc: r.icc.icc, r2Level1: r.r2, covariates: r.blockCovariates };
}

export interface CurvePoint {
  unitsPerArm: number;
  mdes: number;
}

export type PlanningFigures =
  | {
      ok: true;
      /** Minimum detectable effect size (SD units) at 80% power for the planned numbers. */
      mdes: number;
      /** Power to detect the smallest effect of interest; null when none is entered. */
      power: number | null;
      effect: number | null;
      icc: IccChoice;
      design: Design;
      unitsPerArm: number;
      /** Units per arm needed for the MDES to reach the smallest effect of interest; null if beyond the search. */
      unitsPerArmNeeded: number | null;
      curve: CurvePoint[];
    }
  | { ok: false; problem: string };

const POWER = 0.8;
const SEARCH_LIMIT = 2000;

export function planningFigures(values: PlanningValues, context: PlanningContext): PlanningFigures {
  const r = resolve(values, context);
  if (typeof r === 'string') return { ok: false, problem: r };
  if (r.unitsPerArm < 2) return { ok: false, problem: `Plan at least four ${curveUnit(context.unit).plural}, two in each arm.` };
  // The cluster design's degrees of freedom are J − g* − 2 (Dong & Maynard 2013): blocks need units to spare.
  const fewest = Math.max(2, Math.ceil((r.blockCovariates + 3) / 2));
  if (r.unitsPerArm < fewest) {
    return { ok: false, problem: `With ${r.blockCovariates + 1} schools as blocks, plan at least ${fewest * 2} ${curveUnit(context.unit).plural} so the model keeps degrees of freedom.` };
  }
  const at = (unitsPerArm: number) => mdes({ ...designFor(r, context.unit, unitsPerArm), power: POWER }).mdes;
  const design = designFor(r, context.unit, r.unitsPerArm);
  const effect = typeof values.smallestEffectOfInterest === 'number' && values.smallestEffectOfInterest > 0 ? values.smallestEffectOfInterest : null;

  let unitsPerArmNeeded: number | null = null;
  if (effect !== null) {
    // MDES falls as units are added: binary search for the first whole number of units per arm that reaches the effect.
    let lo = fewest;
    let hi = SEARCH_LIMIT;
    if (at(hi) <= effect) {
      while (lo < hi) {
        const mid = Math.floor((lo + hi) / 2);
        if (at(mid) <= effect) hi = mid;
        else lo = mid + 1;
      }
      unitsPerArmNeeded = lo;
    }
  }

  const top = Math.max(12, Math.ceil(r.unitsPerArm * 2), unitsPerArmNeeded !== null ? Math.min(unitsPerArmNeeded + 2, 200) : 0);
  const step = Math.max(1, Math.ceil((top - 2) / 60));
  const curve: CurvePoint[] = [];
  for (let u = fewest; u <= top; u += step) curve.push({ unitsPerArm: u, mdes: at(u) });

  return {
    ok: true,
    mdes: mdes({ ...design, power: POWER }).mdes,
    power: effect === null ? null : power({ ...design, effectSize: effect }).power,
    effect,
    icc: r.icc,
    design,
    unitsPerArm: r.unitsPerArm,
    unitsPerArmNeeded,
    curve,
  };
}
