import { StatsInputError } from './errors.js';
import { requireFiniteNumber, requireInteger } from './input.js';

/**
 * The rows of the WWC attrition boundary table that standards.md lists (Procedures and Standards Handbook v4.1, Table II.1
 * — T; unchanged in v5.0 — M): the highest differential attrition (percentage points) that still counts as low attrition,
 * by overall attrition (%). `null` means every differential is high attrition. The handbook has a row for every whole
 * percent 0–65; only these rows are encoded, and rates between them are interpolated and flagged.
 */
export const WWC_ATTRITION_TABLE = {
  overall: [0, 5, 10, 13, 15, 20, 25, 30, 35, 40, 45, 50, 55, 57, 60, 65],
  cautious: [5.7, 6.1, 6.3, 6.1, 5.9, 5.4, 4.8, 4.1, 3.3, 2.6, 1.8, 1.0, 0.3, 0.0, null, null],
  optimistic: [10.0, 10.5, 10.9, 10.8, 10.7, 10.0, 9.2, 8.2, 7.2, 6.0, 4.9, 3.7, 2.6, 2.1, 1.4, 0.3],
} as const;

/** Under the cautious boundary, overall attrition at or above this (%) is always high (standards.md — T). */
export const CAUTIOUS_ALWAYS_HIGH_FROM = 58;
/** Beyond this overall attrition (%) both boundaries give high attrition (standards.md — T). */
export const BOTH_HIGH_ABOVE = 65;

export type AttritionBoundary = 'cautious' | 'optimistic';

export interface BoundaryResult {
  boundary: AttritionBoundary;
  /** Highest differential (percentage points) that is still low attrition at this overall rate; null when none is. */
  maxDifferential: number | null;
  band: 'low' | 'high';
  /** True when maxDifferential came from between listed rows rather than a listed row. */
  interpolated: boolean;
  /** The listed overall rates either side of the observed rate when interpolated (or the rule that applied). */
  bracketingRows: [number, number] | null;
  basis: 'listed-row' | 'interpolated' | 'always-high';
}

export interface AttritionResult {
  /** Overall attrition, % of the randomised sample without outcome data. */
  overall: number;
  /** |attrition₁ − attrition₂| in percentage points. */
  differential: number;
  attrition1: number;
  attrition2: number;
  cautious: BoundaryResult;
  optimistic: BoundaryResult;
  boundaries: [BoundaryResult, BoundaryResult];
}

export interface AttritionInput {
  randomized1: number;
  analyzed1: number;
  randomized2: number;
  analyzed2: number;
}

function boundaryFor(boundary: AttritionBoundary, overall: number, differential: number): BoundaryResult {
  const rows = WWC_ATTRITION_TABLE.overall;
  const values = WWC_ATTRITION_TABLE[boundary];
  const high = (rule: [number, number] | null): BoundaryResult => ({
    boundary,
    maxDifferential: null,
    band: 'high',
    interpolated: false,
    bracketingRows: rule,
    basis: 'always-high',
  });
  if (overall > BOTH_HIGH_ABOVE) return high(null);
  if (boundary === 'cautious' && overall >= CAUTIOUS_ALWAYS_HIGH_FROM) return high(null);
  const band = (max: number): 'low' | 'high' => (differential <= max + 1e-9 ? 'low' : 'high');
  for (let i = 0; i < rows.length; i++) {
    if (Math.abs(overall - rows[i]) < 1e-12) {
      const max = values[i];
      if (max === null) return high(null);
      return { boundary, maxDifferential: max, band: band(max), interpolated: false, bracketingRows: null, basis: 'listed-row' };
    }
  }
  let i = 0;
  while (i + 1 < rows.length && rows[i + 1] < overall) i++;
  const lower = rows[i];
  const upper = rows[i + 1];
  const vLower = values[i] as number;
  const vUpper = values[i + 1];
  // Cautious between 57% (0.0) and 58% (always high): no listed row above to interpolate to; the 57% row's 0.0 applies.
  const max = vUpper === null ? vLower : vLower + ((overall - lower) / (upper - lower)) * (vUpper - vLower);
  const bracket: [number, number] = vUpper === null ? [lower, CAUTIOUS_ALWAYS_HIGH_FROM] : [lower, upper];
  return { boundary, maxDifferential: max, band: band(max), interpolated: true, bracketingRows: bracket, basis: 'interpolated' };
}

/**
 * WWC attrition: overall = 1 − (analysed₁ + analysed₂)/(randomised₁ + randomised₂); differential = |a₁ − a₂| with
 * a_i = 1 − analysed_i/randomised_i, both in percent (WWC Handbook v4.1 — V), judged against the cautious and optimistic
 * boundaries (Table II.1 — T). Between listed rows the boundary is interpolated linearly and flagged: the handbook's own
 * row must be checked before a rating is published. Differentials are compared unrounded.
 */
export function attrition(input: AttritionInput): AttritionResult {
  if (input === null || typeof input !== 'object') throw new StatsInputError('attrition needs { randomized1, analyzed1, randomized2, analyzed2 }');
  const r1 = requireInteger(input.randomized1, 'randomized1', 1);
  const a1 = requireInteger(input.analyzed1, 'analyzed1', 0);
  const r2 = requireInteger(input.randomized2, 'randomized2', 1);
  const a2 = requireInteger(input.analyzed2, 'analyzed2', 0);
  if (a1 > r1) throw new StatsInputError(`attrition: analyzed1 (${a1}) exceeds randomized1 (${r1})`);
  if (a2 > r2) throw new StatsInputError(`attrition: analyzed2 (${a2}) exceeds randomized2 (${r2})`);
  const overall = 100 * (1 - (a1 + a2) / (r1 + r2));
  const attrition1 = 100 * (1 - a1 / r1);
  const attrition2 = 100 * (1 - a2 / r2);
  const differential = Math.abs(attrition1 - attrition2);
  const cautious = boundaryFor('cautious', overall, differential);
  const optimistic = boundaryFor('optimistic', overall, differential);
  return { overall, differential, attrition1, attrition2, cautious, optimistic, boundaries: [cautious, optimistic] };
}

export type BaselineBand = 'satisfies' | 'requires-adjustment' | 'fails';

export interface BaselineEquivalenceResult {
  g: number;
  absG: number;
  band: BaselineBand;
}

/**
 * WWC baseline equivalence of a pretest effect size: |g| ≤ 0.05 satisfies; 0.05 < |g| ≤ 0.25 satisfies only if the analysis
 * adjusts for the pretest; |g| > 0.25 fails (WWC FAQ citing Handbook v3.0 — V). Required for quasi-experiments and for
 * randomised trials with high attrition.
 */
export function baselineEquivalence(gPretest: number): BaselineEquivalenceResult {
  const g = requireFiniteNumber(gPretest, 'gPretest');
  const absG = Math.abs(g);
  const band: BaselineBand = absG <= 0.05 ? 'satisfies' : absG <= 0.25 ? 'requires-adjustment' : 'fails';
  return { g, absG, band };
}

/** WWC "substantively important" threshold |g| ≥ 0.25 (WWC Handbook v2.0 App. E — V). */
export const SUBSTANTIVELY_IMPORTANT_G = 0.25;

/** True when |g| ≥ 0.25, the WWC's substantively important effect size (WWC Handbook v2.0 App. E — V). */
export function isSubstantivelyImportant(g: number): boolean {
  return Math.abs(requireFiniteNumber(g, 'g')) >= SUBSTANTIVELY_IMPORTANT_G;
}
