import { fSf, studentTTwoSidedP } from './distributions.js';
import { StatsInputError } from './errors.js';
import { requireFiniteNumber, requireInteger, type Sample } from './input.js';
import { meanDifference, moments, type Summary } from './summary.js';

/** Default ICC for achievement outcomes when none is observed (WWC Handbook — T/M in standards.md). */
export const DEFAULT_ICC_ACHIEVEMENT = 0.2;
/** Default ICC for behavioural and other non-achievement outcomes (WWC Handbook — T/M in standards.md). */
export const DEFAULT_ICC_BEHAVIOR = 0.1;

export interface ClusterAdjustedInput {
  /** Student-level t statistic that ignored clustering (give t or g, not both). */
  t?: number;
  /** Hedges' g (give t or g, not both). */
  g?: number;
  /** Students analysed in each arm. */
  n1: number;
  n2: number;
  /** Clusters (classrooms or schools) assigned to each arm. */
  clusters1: number;
  clusters2: number;
  icc: number;
}

export interface ClusterAdjustedResult {
  g: number;
  /** t ignoring clustering: the given t, or g / √[N/(n₁n₂) + g²/(2N)]. */
  t: number;
  tAdjusted: number;
  /** Degrees of freedom h of the corrected t. */
  df: number;
  /** Two-sided p of tAdjusted on h df. */
  p: number;
  icc: number;
  averageClusterSize: number;
  designEffect: number;
}

/**
 * Design effect of cluster sampling: 1 + (m − 1)ρ for clusters of size m and intraclass correlation ρ (Kish 1965).
 */
export function designEffect(m: number, icc: number): number {
  if (typeof m !== 'number' || !(m >= 1) || !Number.isFinite(m)) {
    throw new StatsInputError(`designEffect: cluster size m must be a finite number >= 1 (got ${String(m)})`);
  }
  checkIcc(icc, 'designEffect');
  return 1 + (m - 1) * icc;
}

function checkIcc(icc: unknown, fn: string): asserts icc is number {
  if (typeof icc !== 'number' || !(icc >= 0 && icc < 1)) {
    throw new StatsInputError(`${fn}: icc must be a number in [0, 1) (got ${String(icc)})`);
  }
}

/**
 * Clustering ("mismatch") correction for designs that assigned clusters but analysed students (Hedges 2007, JEBS 32(2);
 * WWC Handbook v4.1 App. F, v5.0 eq. E.21 — T). With N students, n = N/(clusters₁ + clusters₂) and ρ the ICC:
 *   t = g / √[N/(n₁n₂) + g²/(2N)];  t_a = t·√{[(N − 2) − 2(n − 1)ρ] / [(N − 2)(1 + (n − 1)ρ)]};
 *   h = [(N − 2) − 2(n − 1)ρ]² / [(N − 2)(1 − ρ)² + n(N − 2n)ρ² + 2(N − 2n)ρ(1 − ρ)];  p from t_a on h df (two-sided).
 * The effect size is unchanged. A given t is converted to g by inverting the first formula,
 * g = t·√(N/(n₁n₂)) / √(1 − t²/(2N)), so that passing g or the matching t gives the same result.
 */
export function clusterAdjusted(input: ClusterAdjustedInput): ClusterAdjustedResult {
  if (input === null || typeof input !== 'object') throw new StatsInputError('clusterAdjusted needs an input object');
  const hasT = input.t !== undefined;
  const hasG = input.g !== undefined;
  if (hasT === hasG) throw new StatsInputError('clusterAdjusted: give exactly one of t or g');
  const n1 = requireInteger(input.n1, 'n1', 2);
  const n2 = requireInteger(input.n2, 'n2', 2);
  const c1 = requireInteger(input.clusters1, 'clusters1', 1);
  const c2 = requireInteger(input.clusters2, 'clusters2', 1);
  if (c1 > n1 || c2 > n2) throw new StatsInputError('clusterAdjusted: an arm cannot have more clusters than students');
  checkIcc(input.icc, 'clusterAdjusted');
  const rho = input.icc;
  const N = n1 + n2;
  const n = N / (c1 + c2);
  let g: number;
  let t: number;
  if (hasG) {
    g = requireFiniteNumber(input.g, 'g');
    t = g / Math.sqrt(N / (n1 * n2) + (g * g) / (2 * N));
  } else {
    t = requireFiniteNumber(input.t, 't');
    if (!(t * t < 2 * N)) throw new StatsInputError(`clusterAdjusted: |t| must be below √(2N) = ${Math.sqrt(2 * N)} to convert to g`);
    g = (t * Math.sqrt(N / (n1 * n2))) / Math.sqrt(1 - (t * t) / (2 * N));
  }
  const core = N - 2 - 2 * (n - 1) * rho;
  if (!(core > 0)) {
    throw new StatsInputError('clusterAdjusted: (N − 2) − 2(n − 1)ρ must be positive; too few clusters for this ICC');
  }
  const tAdjusted = t * Math.sqrt(core / ((N - 2) * (1 + (n - 1) * rho)));
  const denom = (N - 2) * (1 - rho) * (1 - rho) + n * (N - 2 * n) * rho * rho + 2 * (N - 2 * n) * rho * (1 - rho);
  const df = (core * core) / denom;
  return {
    g,
    t,
    tAdjusted,
    df,
    p: studentTTwoSidedP(tAdjusted, df),
    icc: rho,
    averageClusterSize: n,
    designEffect: 1 + (n - 1) * rho,
  };
}

export interface IccResult {
  /** ANOVA estimate (MSB − MSW)/(MSB + (n₀ − 1)MSW); can be negative when clusters vary less than chance. */
  icc: number;
  msBetween: number;
  msWithin: number;
  /** Effective cluster size n₀ = [N − Σn_i²/N]/(k − 1) (equals n for equal sizes). */
  n0: number;
  groups: number;
  n: number;
}

/**
 * One-way ANOVA estimator of the intraclass correlation: ρ̂ = (MSB − MSW)/(MSB + (n₀ − 1)MSW),
 * n₀ = [N − Σn_i²/N]/(k − 1) (Fisher 1925; Donner 1986 for unequal cluster sizes). Each group is one classroom or school;
 * every group needs at least 2 finite values.
 */
export function iccOneWay(groups: readonly Sample[]): IccResult {
  if (!Array.isArray(groups) || groups.length < 2) throw new StatsInputError('iccOneWay needs at least 2 groups');
  return iccFromSummaries(groups.map((g, i) => moments(g, `group ${i + 1}`)));
}

/**
 * The same ANOVA estimator from per-cluster sufficient statistics { n, mean, m2 } (m2 = Σ(x − x̄)²), so classroom
 * summaries read by SQL aggregates give the ICC without the student rows (Fisher 1925; Donner 1986).
 */
export function iccFromSummaries(groups: readonly Summary[]): IccResult {
  if (!Array.isArray(groups) || groups.length < 2) throw new StatsInputError('iccFromSummaries needs at least 2 groups');
  groups.forEach((g, i) => {
    if (!g || !Number.isInteger(g.n) || g.n < 1 || !Number.isFinite(g.mean) || !(g.m2 >= 0) || !Number.isFinite(g.m2)) {
      throw new StatsInputError(`iccFromSummaries: group ${i + 1} needs a whole n ≥ 1, a finite mean and m2 ≥ 0`);
    }
  });
  const ms = groups;
  const k = ms.length;
  let N = 0;
  let sumSq = 0;
  let ssWithin = 0;
  for (const m of ms) {
    N += m.n;
    sumSq += m.n * m.n;
    ssWithin += m.m2;
  }
  if (N <= k) throw new StatsInputError('iccFromSummaries: needs more values than groups');
  // Grand mean relative to the first group's mean, so offsets far from zero do not cost precision.
  let shiftSum = 0;
  for (const m of ms) shiftSum += m.n * meanDifference(m, ms[0]);
  const grandShift = shiftSum / N;
  let ssBetween = 0;
  for (const m of ms) {
    const d = meanDifference(m, ms[0]) - grandShift;
    ssBetween += m.n * d * d;
  }
  const msBetween = ssBetween / (k - 1);
  const msWithin = ssWithin / (N - k);
  if (msWithin === 0 && msBetween === 0) throw new StatsInputError('iccOneWay: every value is identical; the ICC is undefined');
  const n0 = (N - sumSq / N) / (k - 1);
  const icc = (msBetween - msWithin) / (msBetween + (n0 - 1) * msWithin);
  return { icc, msBetween, msWithin, n0, groups: k, n: N };
}

/** F test that clusters differ, MSB/MSW on (k − 1, N − k) df, from an iccOneWay result (Fisher 1925). */
export function iccFTest(r: IccResult): { f: number; df1: number; df2: number; p: number } {
  if (!(r.msWithin > 0)) throw new StatsInputError('iccFTest: the within-cluster mean square is 0');
  const f = r.msBetween / r.msWithin;
  const df1 = r.groups - 1;
  const df2 = r.n - r.groups;
  return { f, df1, df2, p: fSf(f, df1, df2) };
}
