import { logGammaHalfRatio, normalCdf, normalQuantile } from './distributions.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readConfidence, requireFiniteNumber, type Sample } from './input.js';
import { checkGroupSummary, meanDifference, moments, type GroupSummary } from './summary.js';

export type SmallSampleCorrection = 'exact' | 'approximate';

export interface HedgesGOptions {
  /** 'exact' (default): the gamma-function J; 'approximate': ω = 1 − 3/(4N − 9) as in the WWC handbook. */
  correction?: SmallSampleCorrection;
  confidence?: number;
}

export interface HedgesGResult {
  /** Hedges' g = j · d. */
  g: number;
  /** Cohen's d on the pooled within-group SD. */
  d: number;
  /** Small-sample correction factor applied to d. */
  j: number;
  /** Large-sample standard error √(N/(n₁n₂) + g²/(2N)). */
  se: number;
  /** Normal-theory interval g ± z·se. */
  ci: [number, number];
  confidence: number;
  correction: SmallSampleCorrection;
  pooledSd: number;
  meanDifference: number;
  n1: number;
  n2: number;
}

/**
 * Exact small-sample correction J(m) = Γ(m/2) / (√(m/2) Γ((m − 1)/2)), m = n₁ + n₂ − 2 (Hedges 1981, eq. 6e).
 * Approximate form 1 − 3/(4m − 1) = 1 − 3/(4N − 9) (Hedges 1981; WWC Handbook v5.0 — T).
 */
export function hedgesCorrection(m: number, correction: SmallSampleCorrection = 'exact'): number {
  if (!(m >= 2)) throw new StatsInputError(`the correction needs m = n1 + n2 − 2 >= 2 (got ${m})`);
  if (correction === 'approximate') return 1 - 3 / (4 * m - 1);
  return Math.exp(logGammaHalfRatio((m - 1) / 2)) / Math.sqrt(m / 2);
}

function gFromStats(
  n1: number,
  n2: number,
  diff: number,
  v1: number,
  v2: number,
  opts: HedgesGOptions | undefined,
  fn: string,
): HedgesGResult {
  const o = checkOptions(opts, ['correction', 'confidence'], fn);
  const correction = o.correction ?? 'exact';
  if (correction !== 'exact' && correction !== 'approximate') {
    throw new StatsInputError(`${fn}: correction must be 'exact' or 'approximate' (got ${String(correction)})`);
  }
  const confidence = readConfidence(o.confidence, fn);
  const m = n1 + n2 - 2;
  const pooledSd = Math.sqrt(((n1 - 1) * v1 + (n2 - 1) * v2) / m);
  if (pooledSd === 0) throw new StatsInputError(`${fn}: both groups have zero variance; the pooled SD is 0 and g is undefined`);
  const d = diff / pooledSd;
  const j = hedgesCorrection(m, correction);
  const g = j * d;
  const total = n1 + n2;
  const se = Math.sqrt(total / (n1 * n2) + (g * g) / (2 * total));
  const z = normalQuantile(0.5 + confidence / 2);
  return { g, d, j, se, ci: [g - z * se, g + z * se], confidence, correction, pooledSd, meanDifference: diff, n1, n2 };
}

/**
 * Hedges' g: g = J·(x̄_a − x̄_b)/s_p, s_p² = [(n_a−1)s_a² + (n_b−1)s_b²]/(N − 2), with J the exact gamma-function correction
 * (Hedges 1981); SE = √(N/(n_a n_b) + g²/(2N)) and a normal CI (Hedges & Olkin 1985, eq. 5.14). The WWC's effect size for
 * continuous outcomes (with the approximate correction: pass { correction: 'approximate' }).
 */
export function hedgesG(a: Sample, b: Sample, opts?: HedgesGOptions): HedgesGResult {
  const ma = moments(a, 'group a');
  const mb = moments(b, 'group b');
  return gFromStats(ma.n, mb.n, meanDifference(ma, mb), ma.variance, mb.variance, opts, 'hedgesG');
}

/** Hedges' g from published summaries { n, mean, sd } (Hedges 1981; WWC Handbook v5.0 — T). */
export function hedgesGFromSummary(a: GroupSummary, b: GroupSummary, opts?: HedgesGOptions): HedgesGResult {
  checkGroupSummary(a, 'group a');
  checkGroupSummary(b, 'group b');
  return gFromStats(a.n, b.n, a.mean - b.mean, a.sd * a.sd, b.sd * b.sd, opts, 'hedgesGFromSummary');
}

export interface GlassDeltaResult {
  delta: number;
  meanDifference: number;
  /** SD of group b, the comparison arm. */
  sdComparison: number;
}

/**
 * Glass's Δ = (x̄_a − x̄_b)/s_b, scaled by the comparison group's SD only (Glass 1976). Use when the intervention is expected
 * to change the spread as well as the mean.
 */
export function glassDelta(a: Sample, b: Sample): GlassDeltaResult {
  const ma = moments(a, 'group a');
  const mb = moments(b, 'group b (comparison)');
  const sd = Math.sqrt(mb.variance);
  if (sd === 0) throw new StatsInputError('glassDelta: group b (comparison) has zero variance; Δ is undefined');
  const diff = meanDifference(ma, mb);
  return { delta: diff / sd, meanDifference: diff, sdComparison: sd };
}

/**
 * WWC improvement index: 100·Φ(g) − 50, the expected change in percentile rank of an average comparison-group student
 * had they received the intervention, from −50 to +50 (WWC Handbook v2.0 App. F — V).
 */
export function improvementIndex(g: number): number {
  requireFiniteNumber(g, 'g');
  return 100 * normalCdf(g) - 50;
}

export interface CoxIndexOptions {
  /** Multiply by ω = 1 − 3/(4N − 9); whether the WWC applies it is disputed (standards.md), so it is opt-in. */
  smallSampleCorrection?: boolean;
  n1?: number;
  n2?: number;
}

/**
 * Cox index for a binary outcome: [logit(p_I) − logit(p_C)] / 1.65 (Cox 1970; WWC Handbook — T). Proportions must be
 * strictly between 0 and 1.
 */
export function coxIndex(pIntervention: number, pComparison: number, opts?: CoxIndexOptions): number {
  const o = checkOptions(opts, ['smallSampleCorrection', 'n1', 'n2'], 'coxIndex');
  for (const [p, name] of [
    [pIntervention, 'pIntervention'],
    [pComparison, 'pComparison'],
  ] as const) {
    if (typeof p !== 'number' || !(p > 0 && p < 1)) {
      throw new StatsInputError(`coxIndex: ${name} must be strictly between 0 and 1 (got ${String(p)})`);
    }
  }
  const logit = (p: number) => Math.log(p / (1 - p));
  const value = (logit(pIntervention) - logit(pComparison)) / 1.65;
  if (!o.smallSampleCorrection) return value;
  if (!Number.isInteger(o.n1) || !Number.isInteger(o.n2) || (o.n1 as number) < 2 || (o.n2 as number) < 2) {
    throw new StatsInputError('coxIndex: the small-sample correction needs integer n1 and n2 >= 2');
  }
  return value * hedgesCorrection((o.n1 as number) + (o.n2 as number) - 2, 'approximate');
}
