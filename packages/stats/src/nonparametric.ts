import { normalCdf, normalSf } from './distributions.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readAlternative, requireFiniteNumber, requireInteger, requireNonNegative, type Alternative, type Sample } from './input.js';
import { copyChecked } from './select.js';

export type MannWhitneyMethod = 'auto' | 'exact' | 'normal';

export interface MannWhitneyOptions {
  alternative?: Alternative;
  /** 'auto' (default): exact when there are no ties and the smaller group has at most 8 values (the larger at most 1000). */
  method?: MannWhitneyMethod;
  /** Continuity correction of the normal approximation (default true). */
  continuity?: boolean;
}

export interface MannWhitneyResult {
  /** U for group a: the number of pairs (a_i, b_j) with a_i > b_j, ties counting ½. */
  u: number;
  /** Normal-approximation z of U (tie- and continuity-corrected), reported for either method. */
  z: number;
  p: number;
  method: 'exact' | 'normal';
  alternative: Alternative;
  hasTies: boolean;
}

const EXACT_LIMIT_PRODUCT = 1_000_000;

/**
 * Counts of U = 0…mn over all C(m+n, m) equally likely rankings (no ties): the coefficients of the Gaussian binomial
 * [m+n choose m]_q = Π_{i=1..m} (1 − q^{n+i}) / (1 − q^i) (Mann & Whitney 1947; Andrews 1976, Theory of Partitions,
 * Thm 3.1). BigInt arithmetic keeps every count exact.
 */
function exactCounts(m: number, n: number): bigint[] {
  const small = Math.min(m, n);
  const large = Math.max(m, n);
  const degree = small * large;
  const c: bigint[] = new Array(degree + 1).fill(0n);
  c[0] = 1n;
  let top = 0;
  for (let i = 1; i <= small; i++) {
    const shift = large + i;
    top += large;
    for (let k = top; k >= shift; k--) c[k] -= c[k - shift];
    for (let k = i; k <= top; k++) c[k] += c[k - i];
  }
  return c;
}

/** P(U ≥ u) under the null hypothesis, exactly (no ties). */
function exactSf(u: number, m: number, n: number): number {
  const counts = exactCounts(m, n);
  let total = 0n;
  let tail = 0n;
  const start = Math.ceil(u - 1e-9);
  for (let k = 0; k < counts.length; k++) {
    total += counts[k];
    if (k >= start) tail += counts[k];
  }
  return Number(tail) / Number(total);
}

/**
 * Mann–Whitney U (Wilcoxon rank-sum) test: U_a = R_a − n_a(n_a + 1)/2 with mid-ranks for ties.
 * Normal method: z = (U_a − n_a n_b/2 ∓ ½) / σ, σ² = n_a n_b/12 · [(N + 1) − Σ(t³ − t)/(N(N − 1))] (tie correction,
 * Lehmann 1975 §1.4); exact method: the permutation distribution of U (Mann & Whitney 1947), for small samples without
 * ties. Two-sided p = 2·P(U ≥ max(U_a, U_b)), capped at 1, as in SciPy. Use when scores are ordinal or badly skewed.
 */
export function mannWhitney(a: Sample, b: Sample, opts?: MannWhitneyOptions): MannWhitneyResult {
  const o = checkOptions(opts, ['alternative', 'method', 'continuity'], 'mannWhitney');
  const alternative = readAlternative(o.alternative, 'mannWhitney');
  const method = readMethod(o.method);
  const continuity = readContinuity(o.continuity);
  const xa = copyChecked(a, 'group a');
  const xb = copyChecked(b, 'group b');
  const n1 = xa.length;
  const n2 = xb.length;
  const total = n1 + n2;
  // Sort all values once, carrying a group flag; then assign mid-ranks to runs of ties.
  const order = new Float64Array(total);
  const idx = new Uint32Array(total);
  order.set(xa, 0);
  order.set(xb, n1);
  for (let i = 0; i < total; i++) idx[i] = i;
  idx.sort((p, q) => order[p] - order[q]);
  let rankSumA = 0;
  let tieTerm = 0;
  for (let i = 0; i < total; ) {
    let j = i + 1;
    while (j < total && order[idx[j]] === order[idx[i]]) j++;
    const t = j - i;
    const midRank = (i + 1 + j) / 2;
    for (let k = i; k < j; k++) if (idx[k] < n1) rankSumA += midRank;
    if (t > 1) tieTerm += t * t * t - t;
    i = j;
  }
  return fromRanks(n1, n2, rankSumA, tieTerm, alternative, method, continuity);
}

/** What U needs from the data: the group sizes, group a's sum of mid-ranks and the tie term Σ(t³ − t) over runs of ties. */
export interface RankSums {
  n1: number;
  n2: number;
  rankSumA: number;
  tieTerm: number;
}

/**
 * Mann–Whitney U from rank sums rather than values, with the same formulas, tie correction and choice of method as
 * mannWhitney (Mann & Whitney 1947; Lehmann 1975 §1.4). For data too large to hold: the rank sum and the ties follow from
 * the count of each distinct value in each group, which a database can aggregate.
 */
export function mannWhitneyFromRanks(r: RankSums, opts?: MannWhitneyOptions): MannWhitneyResult {
  const o = checkOptions(opts, ['alternative', 'method', 'continuity'], 'mannWhitneyFromRanks');
  const alternative = readAlternative(o.alternative, 'mannWhitneyFromRanks');
  const method = readMethod(o.method);
  const continuity = readContinuity(o.continuity);
  if (r === null || typeof r !== 'object') throw new StatsInputError('mannWhitneyFromRanks needs { n1, n2, rankSumA, tieTerm }');
  const n1 = requireInteger(r.n1, 'n1', 2);
  const n2 = requireInteger(r.n2, 'n2', 2);
  const rankSumA = requireFiniteNumber(r.rankSumA, 'rankSumA');
  const tieTerm = requireNonNegative(r.tieTerm, 'tieTerm');
  const low = (n1 * (n1 + 1)) / 2;
  if (rankSumA < low || rankSumA > low + n1 * n2) {
    throw new StatsInputError(`mannWhitneyFromRanks: rankSumA must lie between ${low} and ${low + n1 * n2} (got ${rankSumA})`);
  }
  return fromRanks(n1, n2, rankSumA, tieTerm, alternative, method, continuity);
}

function readMethod(method: unknown): MannWhitneyMethod {
  const m = method ?? 'auto';
  if (m !== 'auto' && m !== 'exact' && m !== 'normal') {
    throw new StatsInputError(`mannWhitney: method must be 'auto', 'exact' or 'normal' (got ${String(m)})`);
  }
  return m;
}

function readContinuity(continuity: unknown): boolean {
  if (continuity !== undefined && typeof continuity !== 'boolean') throw new StatsInputError('mannWhitney: continuity must be true or false');
  return continuity ?? true;
}

function fromRanks(n1: number, n2: number, rankSumA: number, tieTerm: number, alternative: Alternative, method: MannWhitneyMethod, continuity: boolean): MannWhitneyResult {
  const total = n1 + n2;
  const hasTies = tieTerm > 0;
  const u1 = rankSumA - (n1 * (n1 + 1)) / 2;
  const u2 = n1 * n2 - u1;
  const mu = (n1 * n2) / 2;
  const variance = ((n1 * n2) / 12) * (total + 1 - tieTerm / (total * (total - 1)));
  if (!(variance > 0)) {
    throw new StatsInputError('mannWhitney: every value in both groups is the same; U carries no information');
  }
  const sigma = Math.sqrt(variance);
  const cc = continuity ? 0.5 : 0;
  const correction = alternative === 'greater' ? cc : alternative === 'less' ? -cc : cc * Math.sign(u1 - mu);
  const z = (u1 - mu - correction) / sigma;

  let useExact: boolean;
  if (method === 'exact') {
    if (hasTies) throw new StatsInputError('mannWhitney: the exact method needs data without ties; use method "normal"');
    if (n1 * n2 > EXACT_LIMIT_PRODUCT) {
      throw new StatsInputError(`mannWhitney: the exact method is limited to n1·n2 <= ${EXACT_LIMIT_PRODUCT}`);
    }
    useExact = true;
  } else {
    useExact = method === 'auto' && !hasTies && Math.min(n1, n2) <= 8 && Math.max(n1, n2) <= 1000;
  }

  let p: number;
  if (useExact) {
    if (alternative === 'greater') p = exactSf(u1, n1, n2);
    else if (alternative === 'less') p = exactSf(u2, n1, n2);
    else p = 2 * exactSf(Math.max(u1, u2), n1, n2);
  } else if (alternative === 'greater') p = normalSf(z);
  else if (alternative === 'less') p = normalCdf(z);
  else p = 2 * normalSf(Math.abs(z));
  return { u: u1, z, p: Math.min(1, p), method: useExact ? 'exact' : 'normal', alternative, hasTies };
}
