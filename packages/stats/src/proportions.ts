import { designEffect } from './cluster.js';
import { clusterRobustFromMoments, type ClusterRobustOptions, type ClusterRobustResult } from './cluster-robust.js';
import { chiSquareSf, normalCdf, normalQuantile, normalSf } from './distributions.js';
import { coxIndex, hedgesCorrection, improvementIndex } from './effect-size.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readConfidence, type Alternative, readAlternative } from './input.js';
import { mdes, power, type Design, type MdesResult, type PowerResult } from './power.js';
import { baselineEquivalence, type BaselineBand } from './standards.js';
import type { UnitMoments } from './unit-moments.js';

/**
 * Yes/no outcomes from counts: per-arm proportions, their differences and ratios, the evidence standard's effect size
 * for binary outcomes, and the tests of a 2 × 2 table. Every function takes the intervention arm first, as
 * `{ yes, n }` (students who answered yes, students with the outcome).
 */
export interface YesNoCounts {
  yes: number;
  n: number;
}

function readCounts(arm: unknown, label: string): YesNoCounts {
  if (arm === null || typeof arm !== 'object') throw new StatsInputError(`${label} must be { yes, n }`);
  const { yes, n } = arm as YesNoCounts;
  if (typeof n !== 'number' || !Number.isInteger(n) || n < 1) {
    throw new StatsInputError(`${label}.n must be a whole number >= 1 (got ${String(n)})`);
  }
  if (typeof yes !== 'number' || !Number.isInteger(yes) || yes < 0 || yes > n) {
    throw new StatsInputError(`${label}.yes must be a whole number from 0 to n = ${n} (got ${String(yes)})`);
  }
  if (n > Number.MAX_SAFE_INTEGER / 4) throw new StatsInputError(`${label}.n is too large (${n})`);
  return { yes, n };
}

function readPair(intervention: unknown, comparison: unknown): [YesNoCounts, YesNoCounts] {
  return [readCounts(intervention, 'intervention'), readCounts(comparison, 'comparison')];
}

function twoSidedZ(confidence: number): number {
  return normalQuantile(0.5 + confidence / 2);
}

// --- one proportion -----------------------------------------------------------------------------------------------

export interface ProportionResult {
  yes: number;
  n: number;
  proportion: number;
  /** Wilson score interval; [0, …] when yes = 0 and […, 1] when yes = n. */
  ci: [number, number];
  confidence: number;
  method: 'wilson';
}

/**
 * Lower Wilson bound for y of n: the smaller root of (n + z²)π² − (2y + z²)π + y²/n = 0, taken as the product of the roots
 * y²/(n(n + z²)) over the larger root, so there is no cancellation when y is small.
 */
function wilsonLower(y: number, n: number, z: number): number {
  if (y === 0) return 0;
  const z2 = z * z;
  const upperRoot = (2 * y + z2 + z * Math.sqrt(z2 + (4 * y * (n - y)) / n)) / (2 * (n + z2));
  return (y * y) / (n * (n + z2) * upperRoot);
}

function wilson(y: number, n: number, z: number): [number, number] {
  // The upper bound for y is 1 − the lower bound for n − y (the interval is symmetric under relabelling yes and no).
  return [wilsonLower(y, n, z), y === n ? 1 : 1 - wilsonLower(n - y, n, z)];
}

/**
 * Proportion yes/n with the Wilson score interval: the set of π whose score test |p − π|/√(π(1 − π)/n) ≤ z accepts,
 * π = [p + z²/(2n) ± z√(p(1 − p)/n + z²/(4n²))]/(1 + z²/n) (Wilson 1927, JASA 22:209–212). Defined for 0 and all yes.
 */
export function proportionWithInterval(counts: YesNoCounts, opts?: { confidence?: number }): ProportionResult {
  const { yes, n } = readCounts(counts, 'counts');
  const o = checkOptions(opts, ['confidence'], 'proportionWithInterval');
  const confidence = readConfidence(o.confidence, 'proportionWithInterval');
  return { yes, n, proportion: yes / n, ci: wilson(yes, n, twoSidedZ(confidence)), confidence, method: 'wilson' };
}

// --- difference in proportions ------------------------------------------------------------------------------------

export interface ProportionDifferenceResult {
  /** p_intervention − p_comparison. */
  difference: number;
  /** Newcombe's hybrid score interval for the difference. */
  ci: [number, number];
  confidence: number;
  proportion1: number;
  proportion2: number;
  /** Wilson intervals of each arm, from which the difference's interval is built. */
  ci1: [number, number];
  ci2: [number, number];
  n1: number;
  n2: number;
  method: 'newcombe-hybrid-score';
}

/**
 * Difference p₁ − p₂ with Newcombe's hybrid score interval (Newcombe 1998, Stat. Med. 17:873–890, method 10): with
 * (l_i, u_i) each arm's Wilson interval, L = d − √[(p₁ − l₁)² + (u₂ − p₂)²], U = d + √[(u₁ − p₁)² + (p₂ − l₂)²].
 * Defined for every table, including arms with no or all yes.
 */
export function proportionDifference(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts?: { confidence?: number },
): ProportionDifferenceResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['confidence'], 'proportionDifference');
  const confidence = readConfidence(o.confidence, 'proportionDifference');
  const z = twoSidedZ(confidence);
  const p1 = a.yes / a.n;
  const p2 = b.yes / b.n;
  const ci1 = wilson(a.yes, a.n, z);
  const ci2 = wilson(b.yes, b.n, z);
  const d = p1 - p2;
  const lower = d - Math.hypot(p1 - ci1[0], ci2[1] - p2);
  const upper = d + Math.hypot(ci1[1] - p1, p2 - ci2[0]);
  return {
    difference: d,
    ci: [Math.max(-1, lower), Math.min(1, upper)],
    confidence,
    proportion1: p1,
    proportion2: p2,
    ci1,
    ci2,
    n1: a.n,
    n2: b.n,
    method: 'newcombe-hybrid-score',
  };
}

// --- odds ratio and the Cox index ---------------------------------------------------------------------------------

/**
 * What to do when a proportion is 0 or 1 (a zero cell): 'refuse' throws a StatsInputError; 'add-half' adds ½ to every
 * cell of the 2 × 2 table (Haldane 1956; Anscombe 1956), so each arm's proportion becomes (yes + ½)/(n + 1).
 */
export type ZeroCellRule = 'refuse' | 'add-half';

function readZeroCell(value: unknown, fn: string, fallback: ZeroCellRule): ZeroCellRule {
  if (value === undefined) return fallback;
  if (value !== 'refuse' && value !== 'add-half') {
    throw new StatsInputError(`${fn}: zeroCell must be 'refuse' or 'add-half' (got ${String(value)})`);
  }
  return value;
}

interface Cells {
  yes1: number;
  no1: number;
  yes2: number;
  no2: number;
  adjusted: boolean;
}

function cells(a: YesNoCounts, b: YesNoCounts, rule: ZeroCellRule, fn: string): Cells {
  const c = { yes1: a.yes, no1: a.n - a.yes, yes2: b.yes, no2: b.n - b.yes, adjusted: false };
  if (c.yes1 > 0 && c.no1 > 0 && c.yes2 > 0 && c.no2 > 0) return c;
  if (rule === 'refuse') {
    throw new StatsInputError(
      `${fn}: an arm has no yes or no "no" answers (a zero cell), so the log odds are infinite; ` +
        `pass { zeroCell: 'add-half' } to add ½ to every cell`,
    );
  }
  return { yes1: c.yes1 + 0.5, no1: c.no1 + 0.5, yes2: c.yes2 + 0.5, no2: c.no2 + 0.5, adjusted: true };
}

export interface OddsRatioResult {
  oddsRatio: number;
  logOddsRatio: number;
  /** Woolf's SE of the log odds ratio, √(1/a + 1/b + 1/c + 1/d). */
  seLog: number;
  ci: [number, number];
  confidence: number;
  /** True when ½ was added to every cell because one was zero. */
  zeroCellAdjusted: boolean;
  method: 'woolf-logit';
}

/**
 * Odds ratio (odds of yes in the intervention arm over the comparison arm) with Woolf's logit interval:
 * exp(log OR ± z√(1/a + 1/b + 1/c + 1/d)) (Woolf 1955, Ann. Hum. Genet. 19:251–253). With a zero cell the default
 * (`zeroCell: 'add-half'`) adds ½ to every cell first (Haldane 1956; Anscombe 1956), as statsmodels' Table2x2 does with
 * shift_zeros; `zeroCell: 'refuse'` throws instead.
 */
export function oddsRatio(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts?: { confidence?: number; zeroCell?: ZeroCellRule },
): OddsRatioResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['confidence', 'zeroCell'], 'oddsRatio');
  const confidence = readConfidence(o.confidence, 'oddsRatio');
  const c = cells(a, b, readZeroCell(o.zeroCell, 'oddsRatio', 'add-half'), 'oddsRatio');
  const logOr = Math.log(c.yes1) - Math.log(c.no1) - (Math.log(c.yes2) - Math.log(c.no2));
  const seLog = Math.sqrt(1 / c.yes1 + 1 / c.no1 + 1 / c.yes2 + 1 / c.no2);
  const z = twoSidedZ(confidence);
  return {
    oddsRatio: Math.exp(logOr),
    logOddsRatio: logOr,
    seLog,
    ci: [Math.exp(logOr - z * seLog), Math.exp(logOr + z * seLog)],
    confidence,
    zeroCellAdjusted: c.adjusted,
    method: 'woolf-logit',
  };
}

export interface CoxIndexFromCountsOptions {
  /** Multiply by ω = 1 − 3/(4N − 9); whether the evidence standard applies it is disputed, so it is opt-in. */
  smallSampleCorrection?: boolean;
  /** Default 'refuse': a proportion of 0 or 1 has no finite logit. */
  zeroCell?: ZeroCellRule;
}

export interface CoxIndexResult {
  /** [logit(p₁) − logit(p₂)]/1.65, times ω when smallSampleCorrection. */
  coxIndex: number;
  /** 100·Φ(coxIndex) − 50, as for g. */
  improvementIndex: number;
  /** Woolf's SE of the log odds ratio over 1.65 (times ω when corrected). */
  se: number;
  /** The proportions the index was computed from ((yes + ½)/(n + 1) when zeroCellAdjusted). */
  proportion1: number;
  proportion2: number;
  smallSampleCorrection: boolean;
  zeroCellAdjusted: boolean;
  n1: number;
  n2: number;
}

/**
 * The evidence standard's effect size for a yes/no outcome, the Cox index [logit(p_I) − logit(p_C)]/1.65 (Cox 1970;
 * WWC Procedures Handbook — T), with the improvement index 100·Φ(d) − 50 (WWC v2.0 App. F — V). A proportion of 0 or 1
 * throws unless `zeroCell: 'add-half'` (the handbook's own rule for this case is from memory — M — so it is a choice the
 * caller makes, not a silent default). SE = √(1/a + 1/b + 1/c + 1/d)/1.65 (Sánchez-Meca et al. 2003 — M).
 */
export function coxIndexFromCounts(intervention: YesNoCounts, comparison: YesNoCounts, opts?: CoxIndexFromCountsOptions): CoxIndexResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['smallSampleCorrection', 'zeroCell'], 'coxIndexFromCounts');
  const corrected = o.smallSampleCorrection ?? false;
  if (typeof corrected !== 'boolean') throw new StatsInputError('coxIndexFromCounts: smallSampleCorrection must be true or false');
  const c = cells(a, b, readZeroCell(o.zeroCell, 'coxIndexFromCounts', 'refuse'), 'coxIndexFromCounts');
  const p1 = c.yes1 / (c.yes1 + c.no1);
  const p2 = c.yes2 / (c.yes2 + c.no2);
  const value = coxIndex(p1, p2, corrected ? { smallSampleCorrection: true, n1: a.n, n2: b.n } : undefined);
  const omega = corrected ? hedgesCorrection(a.n + b.n - 2, 'approximate') : 1;
  const se = (omega * Math.sqrt(1 / c.yes1 + 1 / c.no1 + 1 / c.yes2 + 1 / c.no2)) / 1.65;
  return {
    coxIndex: value,
    improvementIndex: improvementIndex(value),
    se,
    proportion1: p1,
    proportion2: p2,
    smallSampleCorrection: corrected,
    zeroCellAdjusted: c.adjusted,
    n1: a.n,
    n2: b.n,
  };
}

export interface BinaryBaselineEquivalenceResult {
  coxIndex: number;
  absCoxIndex: number;
  band: BaselineBand;
  proportion1: number;
  proportion2: number;
  zeroCellAdjusted: boolean;
}

/**
 * Baseline equivalence of a yes/no characteristic (e.g. eligible for free meals): the Cox index judged by the same bands as
 * g (`baselineEquivalence`; WWC FAQ citing Handbook v3.0 — V: Cox index for binary characteristics).
 */
export function baselineEquivalenceYesNo(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts?: CoxIndexFromCountsOptions,
): BinaryBaselineEquivalenceResult {
  const cox = coxIndexFromCounts(intervention, comparison, opts);
  const { g, absG, band } = baselineEquivalence(cox.coxIndex);
  return {
    coxIndex: g,
    absCoxIndex: absG,
    band,
    proportion1: cox.proportion1,
    proportion2: cox.proportion2,
    zeroCellAdjusted: cox.zeroCellAdjusted,
  };
}

// --- tests of the 2 × 2 table -------------------------------------------------------------------------------------

export interface TwoProportionZResult {
  z: number;
  p: number;
  alternative: Alternative;
  difference: number;
  /** Pooled proportion (yes₁ + yes₂)/(n₁ + n₂). */
  pooledProportion: number;
  /** √(p̄(1 − p̄)(1/n₁ + 1/n₂)). */
  se: number;
}

/**
 * Two-proportion z test with the pooled SE: z = (p₁ − p₂)/√(p̄(1 − p̄)(1/n₁ + 1/n₂)) (Fleiss, Levin & Paik 2003, §2.5 —
 * M); z² equals Pearson's χ² without continuity correction. 'greater' means p₁ > p₂. Undefined (throws) when no one or
 * everyone answered yes.
 */
export function twoProportionZTest(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts?: { alternative?: Alternative },
): TwoProportionZResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['alternative'], 'twoProportionZTest');
  const alternative = readAlternative(o.alternative, 'twoProportionZTest');
  const yes = a.yes + b.yes;
  const total = a.n + b.n;
  if (yes === 0 || yes === total) {
    throw new StatsInputError(`twoProportionZTest: every student has the same answer (${yes === 0 ? 'no' : 'yes'}); z is undefined`);
  }
  const pooled = yes / total;
  const d = a.yes / a.n - b.yes / b.n;
  const se = Math.sqrt(pooled * (1 - pooled) * (1 / a.n + 1 / b.n));
  const z = d / se;
  const p = alternative === 'two-sided' ? 2 * normalSf(Math.abs(z)) : alternative === 'greater' ? normalSf(z) : normalCdf(z);
  return { z, p: Math.min(1, p), alternative, difference: d, pooledProportion: pooled, se };
}

export interface ChiSquareResult {
  statistic: number;
  df: 1;
  p: number;
  correction: boolean;
  /** Expected counts [[yes₁, no₁], [yes₂, no₂]] under independence. */
  expected: [[number, number], [number, number]];
  /** Smallest expected count; below 5 the χ² approximation is doubtful (Cochran 1954 — common practice), prefer Fisher. */
  minExpected: number;
}

/**
 * Pearson's χ² test of the 2 × 2 table (arm × yes/no) on 1 df, Σ(|O − E| − c)²/E, with Yates's continuity correction
 * (`correction: true`, the default) c = min(½, |O − E|) as SciPy 1.10's chi2_contingency applies it, or c = 0 (Pearson
 * 1900; Yates 1934). Undefined (throws) when an expected count is 0, i.e. no one or everyone answered yes.
 */
export function chiSquareTest(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts?: { correction?: boolean },
): ChiSquareResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['correction'], 'chiSquareTest');
  const correction = o.correction ?? true;
  if (typeof correction !== 'boolean') throw new StatsInputError('chiSquareTest: correction must be true or false');
  const yes = a.yes + b.yes;
  const total = a.n + b.n;
  if (yes === 0 || yes === total) {
    throw new StatsInputError(`chiSquareTest: every student has the same answer (${yes === 0 ? 'no' : 'yes'}); an expected count is 0`);
  }
  const no = total - yes;
  const e11 = (a.n * yes) / total;
  const e12 = (a.n * no) / total;
  const e21 = (b.n * yes) / total;
  const e22 = (b.n * no) / total;
  // In a 2 × 2 table |O − E| is the same in every cell: |yes₁n₂ − yes₂n₁|/N, computed from integers.
  const dev = Math.abs(a.yes * b.n - b.yes * a.n) / total;
  const c = correction ? Math.min(0.5, dev) : 0;
  const r = dev - c;
  const statistic = r * r * (1 / e11 + 1 / e12 + 1 / e21 + 1 / e22);
  return {
    statistic,
    df: 1,
    p: chiSquareSf(statistic, 1),
    correction,
    expected: [
      [e11, e12],
      [e21, e22],
    ],
    minExpected: Math.min(e11, e12, e21, e22),
  };
}

export interface FisherExactResult {
  p: number;
  alternative: Alternative;
}

/** SciPy 1.10's relative tolerance for "as likely as the observed table", as the integers 1 + 10⁻¹⁴ = NUM/DEN. */
const SCIPY_GAMMA_NUM = 100_000_000_000_001n;
const SCIPY_GAMMA_DEN = 100_000_000_000_000n;
/** Float weights this close to the observed one (relative) are compared exactly instead. */
const NEAR_TIE = 1e-9;
/**
 * Relative weights below this are taken as 0: the tails of a large table run into subnormal doubles, which are slow and
 * too coarse for the near-tie test (two different subnormals can compare equal), and any p they could add is < 1e-290.
 */
const NEGLIGIBLE_WEIGHT = 1e-300;

/** Product of BigInts as a balanced tree (fast for long products). */
function product(values: bigint[], from = 0, to = values.length): bigint {
  if (to - from === 0) return 1n;
  if (to - from === 1) return values[from];
  const mid = (from + to) >> 1;
  return product(values, from, mid) * product(values, mid, to);
}

/**
 * Exactly whether P(X = k) ≤ P(X = x)·(1 + 10⁻¹⁴), from the ratio P(X = k)/P(X = x) as a product of the hypergeometric
 * recurrence factors (n1 − i)(K − i) / ((i + 1)(n2 − K + i + 1)), in integers.
 */
function exactlyAsLikely(n1: number, n2: number, yes: number, x: number, k: number): boolean {
  const up: bigint[] = [];
  const down: bigint[] = [];
  for (let i = Math.min(x, k); i < Math.max(x, k); i++) {
    up.push(BigInt(n1 - i) * BigInt(yes - i));
    down.push(BigInt(i + 1) * BigInt(n2 - yes + i + 1));
  }
  // For k > x the ratio is Π up / Π down; for k < x its inverse.
  const [num, den] = k > x ? [product(up), product(down)] : [product(down), product(up)];
  return num * SCIPY_GAMMA_DEN <= den * SCIPY_GAMMA_NUM;
}

/**
 * Fisher's exact test of the 2 × 2 table (Fisher 1935, §21): with the margins fixed, the intervention arm's yes count X is
 * hypergeometric. 'less' gives P(X ≤ yes₁), 'greater' P(X ≥ yes₁); 'two-sided' sums P(X = x) over every x with
 * P(X = x) ≤ P(X = yes₁)·(1 + 10⁻¹⁴), the rule and tolerance of SciPy 1.10's fisher_exact. A table whose row or column
 * sums include 0 has p = 1, as in SciPy. The probabilities are double-precision weights relative to the most likely
 * table (relative error below about 1e-11 even for millions of students); a table whose weight is within 1e-9 of the
 * observed one's is compared exactly in integer arithmetic, so ties (e.g. mirror tables with equal arms) are found exactly.
 * p-values below about 1e-300 are returned as 0.
 */
export function fisherExactTest(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts?: { alternative?: Alternative },
): FisherExactResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['alternative'], 'fisherExactTest');
  const alternative = readAlternative(o.alternative, 'fisherExactTest');
  const n1 = a.n;
  const n2 = b.n;
  const yes = a.yes + b.yes;
  const x = a.yes;
  if (yes === 0 || yes === n1 + n2) return { p: 1, alternative };
  const lo = Math.max(0, yes - n2);
  const hi = Math.min(yes, n1);
  const mode = Math.min(hi, Math.max(lo, Math.floor(((yes + 1) * (n1 + 1)) / (n1 + n2 + 2))));
  const w = new Float64Array(hi - lo + 1);
  w[mode - lo] = 1;
  // Outward from the mode by the ratio recurrence; once a weight is negligible, the rest of that side is 0.
  for (let k = mode; k < hi; k++) {
    const next = (w[k - lo] * ((n1 - k) * (yes - k))) / ((k + 1) * (n2 - yes + k + 1));
    if (next < NEGLIGIBLE_WEIGHT) break;
    w[k + 1 - lo] = next;
  }
  for (let k = mode; k > lo; k--) {
    const prev = (w[k - lo] * (k * (n2 - yes + k))) / ((n1 - k + 1) * (yes - k + 1));
    if (prev < NEGLIGIBLE_WEIGHT) break;
    w[k - 1 - lo] = prev;
  }
  let sum = 0;
  for (let i = 0; i < w.length; i++) sum += w[i];
  let tail = 0;
  if (alternative === 'less') for (let k = lo; k <= x; k++) tail += w[k - lo];
  else if (alternative === 'greater') for (let k = x; k <= hi; k++) tail += w[k - lo];
  else {
    const wx = w[x - lo];
    for (let k = lo; k <= hi; k++) {
      const v = w[k - lo];
      const asLikely = Math.abs(v - wx) <= NEAR_TIE * wx && wx > 0 && v > 0 ? exactlyAsLikely(n1, n2, yes, x, k) : v <= wx;
      if (asLikely) tail += v;
    }
  }
  return { p: Math.min(1, tail / sum), alternative };
}

// --- planning -----------------------------------------------------------------------------------------------------

export type ProportionMdesInput = Design & { power?: number; comparisonProportion: number };

export interface ProportionMdesResult extends MdesResult {
  comparisonProportion: number;
  /** √(p_C(1 − p_C)), the outcome SD the effect size is scaled by. */
  outcomeSd: number;
  /** Smallest detectable difference in proportions, MDES·√(p_C(1 − p_C)). */
  detectableDifference: number;
  /** p_C ± detectableDifference, or null when it leaves [0, 1]. */
  detectableProportionAbove: number | null;
  detectableProportionBelow: number | null;
}

function readComparisonProportion(input: unknown, fn: string): number {
  if (input === null || typeof input !== 'object') throw new StatsInputError(`${fn} needs a design object`);
  const p = (input as { comparisonProportion?: unknown }).comparisonProportion;
  if (typeof p !== 'number' || !(p > 0 && p < 1)) {
    throw new StatsInputError(`${fn}: comparisonProportion must be strictly between 0 and 1 (got ${String(p)})`);
  }
  return p;
}

function designWithout<T extends object>(input: T, key: string): Design {
  const rest = { ...input } as Record<string, unknown>;
  delete rest[key];
  return rest as unknown as Design;
}

/**
 * Minimum detectable difference in proportions: the design's MDES in SD units (`mdes`, Bloom 1995; Dong & Maynard 2013)
 * times the SD of a yes/no outcome at the comparison arm's expected proportion, √(p_C(1 − p_C)) (common practice, e.g.
 * Schochet 2008, NCEE 2008-4018 — M). For cluster designs the ICC must be on the proportion scale (of the 0/1 outcome).
 */
export function proportionMdes(input: ProportionMdesInput): ProportionMdesResult {
  const pC = readComparisonProportion(input, 'proportionMdes');
  const r = mdes(designWithout(input, 'comparisonProportion') as Design & { power?: number });
  const outcomeSd = Math.sqrt(pC * (1 - pC));
  const detectableDifference = r.mdes * outcomeSd;
  const above = pC + detectableDifference;
  const below = pC - detectableDifference;
  return {
    ...r,
    comparisonProportion: pC,
    outcomeSd,
    detectableDifference,
    detectableProportionAbove: above <= 1 ? above : null,
    detectableProportionBelow: below >= 0 ? below : null,
  };
}

export type ProportionPowerInput = Design & { comparisonProportion: number; difference: number };

export interface ProportionPowerResult extends PowerResult {
  comparisonProportion: number;
  difference: number;
  outcomeSd: number;
}

/** Power to detect a difference in proportions, as `power` with effect size difference/√(p_C(1 − p_C)) (as proportionMdes). */
export function proportionPower(input: ProportionPowerInput): ProportionPowerResult {
  const pC = readComparisonProportion(input, 'proportionPower');
  const difference = input.difference;
  if (typeof difference !== 'number' || !Number.isFinite(difference) || !(pC + difference >= 0 && pC + difference <= 1)) {
    throw new StatsInputError(`proportionPower: difference must keep comparisonProportion + difference in [0, 1] (got ${String(difference)})`);
  }
  const outcomeSd = Math.sqrt(pC * (1 - pC));
  const design = designWithout(designWithout(input, 'comparisonProportion'), 'difference');
  const r = power({ ...design, effectSize: difference / outcomeSd });
  return { ...r, comparisonProportion: pC, difference, outcomeSd };
}

// --- cluster-assigned designs: design-effect sensitivity check ----------------------------------------------------

export interface DesignEffectDifferenceResult {
  difference: number;
  /** Unpooled SE √(p₁(1 − p₁)/n₁ + p₂(1 − p₂)/n₂) as if students had been assigned. */
  seUnadjusted: number;
  /** seUnadjusted · √(1 + (m − 1)ρ). */
  se: number;
  designEffect: number;
  z: number;
  p: number;
  ci: [number, number];
  confidence: number;
  averageClusterSize: number;
  icc: number;
}

/**
 * Sensitivity check for a cluster-assigned yes/no outcome: the difference in proportions with its variance inflated by the
 * design effect 1 + (m − 1)ρ, m the average cluster size (Kish 1965; Donner & Klar 2000, Design and Analysis of Cluster
 * Randomization Trials, ch. 6 — M), normal z, p and interval. Not the deciding analysis: that is the cluster-robust
 * regression. Throws when both arms are all yes or all no (the SE is 0).
 */
export function proportionDifferenceDesignEffect(
  intervention: YesNoCounts,
  comparison: YesNoCounts,
  opts: { averageClusterSize: number; icc: number; confidence?: number },
): DesignEffectDifferenceResult {
  const [a, b] = readPair(intervention, comparison);
  const o = checkOptions(opts, ['averageClusterSize', 'icc', 'confidence'], 'proportionDifferenceDesignEffect');
  if (o.averageClusterSize === undefined || o.icc === undefined) {
    throw new StatsInputError('proportionDifferenceDesignEffect needs { averageClusterSize, icc }');
  }
  const confidence = readConfidence(o.confidence, 'proportionDifferenceDesignEffect');
  const deff = designEffect(o.averageClusterSize, o.icc);
  const p1 = a.yes / a.n;
  const p2 = b.yes / b.n;
  const seUnadjusted = Math.sqrt((p1 * (1 - p1)) / a.n + (p2 * (1 - p2)) / b.n);
  if (seUnadjusted === 0) {
    throw new StatsInputError('proportionDifferenceDesignEffect: both arms are all yes or all no, so the SE is 0');
  }
  const se = seUnadjusted * Math.sqrt(deff);
  const d = p1 - p2;
  const z = d / se;
  const q = twoSidedZ(confidence);
  return {
    difference: d,
    seUnadjusted,
    se,
    designEffect: deff,
    z,
    p: Math.min(1, 2 * normalSf(Math.abs(z))),
    ci: [d - q * se, d + q * se],
    confidence,
    averageClusterSize: o.averageClusterSize,
    icc: o.icc,
  };
}

// --- cluster-assigned designs: the deciding analysis --------------------------------------------------------------

/** One assigned unit (classroom or school) of a yes/no outcome: its arm (1 intervention, 0 comparison) and counts. */
export interface YesNoUnit {
  unit: string;
  arm: 0 | 1;
  block?: string;
  yes: number;
  n: number;
}

/**
 * Difference in proportions for a cluster-assigned study: the linear probability model y = β₀ + β·arm (+ blocks) fitted
 * by least squares on the 0/1 outcomes, with CR2 cluster-robust SE and Satterthwaite df (`clusterRobustFromMoments`;
 * Bell & McCaffrey 2002; Pustejovsky & Tipton 2018). A 0/1 outcome's unit moments follow from its counts: ȳ = yes/n and
 * Σ(y − ȳ)² = yes·(1 − yes/n), so no student rows are needed. Without blocks, `estimate` is the student-weighted
 * difference in proportions.
 */
export function proportionDifferenceClustered(units: readonly YesNoUnit[], options?: ClusterRobustOptions): ClusterRobustResult {
  if (!Array.isArray(units)) throw new StatsInputError('proportionDifferenceClustered needs an array of units { unit, arm, yes, n }');
  const moments: UnitMoments[] = units.map((u, i) => {
    const label = u && typeof u.unit === 'string' ? `unit ${u.unit}` : `unit ${i + 1}`;
    const { yes, n } = readCounts(u, label);
    const meanY = yes / n;
    return {
      unit: u.unit,
      arm: u.arm,
      ...(u.block === undefined ? {} : { block: u.block }),
      n,
      meanY,
      ssY: yes * (1 - meanY),
      meanX: [],
      spXY: [],
      spXX: [],
    };
  });
  return clusterRobustFromMoments(moments, options);
}
