import { noncentralTCdf, noncentralTSf, studentTQuantile } from './distributions.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readProbability } from './input.js';

export type PowerAlternative = 'two-sided' | 'one-sided';

interface CommonDesign {
  /** Share of units (or clusters) assigned to the intervention, P (default 0.5). */
  p?: number;
  /** Significance level (default 0.05). */
  alpha?: number;
  alternative?: PowerAlternative;
}

/** Students randomised individually. */
export interface IndividualDesign extends CommonDesign {
  design: 'individual';
  /** Total sample size. */
  n: number;
  /** R² of the covariates (e.g. the pretest) for the outcome (default 0). */
  r2?: number;
  /** Number of covariates g (default 0). */
  covariates?: number;
}

/** Classrooms or schools randomised, students analysed (two-level design). */
export interface ClusterDesign extends CommonDesign {
  design: 'cluster';
  /** Number of clusters J. */
  clusters: number;
  /** Students per cluster n. */
  clusterSize: number;
  icc: number;
  /** R² of student-level covariates for the within-cluster variance (default 0). */
  r2Level1?: number;
  /** R² of cluster-level covariates for the between-cluster variance (default 0). */
  r2Level2?: number;
  /** Number of cluster-level covariates g* (default 0). */
  covariates?: number;
}

export type Design = IndividualDesign | ClusterDesign;
export type MdesInput = Design & { power?: number };
export type PowerInput = Design & { effectSize: number };

export interface MdesResult {
  /** Minimum detectable effect size, in outcome SD units. */
  mdes: number;
  /** M = t_{1−α/2, df} + t_{power, df} (t_{1−α} for one-sided). */
  multiplier: number;
  df: number;
  tAlpha: number;
  tPower: number;
  /** Standard error of the impact estimate in SD units (the square-root term). */
  standardError: number;
  alpha: number;
  power: number;
  alternative: PowerAlternative;
}

export interface PowerResult {
  power: number;
  df: number;
  /** Noncentrality δ = effectSize / standardError. */
  noncentrality: number;
  criticalT: number;
  standardError: number;
  effectSize: number;
  alpha: number;
  alternative: PowerAlternative;
}

const COMMON = ['design', 'p', 'alpha', 'alternative'];
const INDIVIDUAL = [...COMMON, 'n', 'r2', 'covariates'];
const CLUSTER = [...COMMON, 'clusters', 'clusterSize', 'icc', 'r2Level1', 'r2Level2', 'covariates'];

function positive(value: unknown, name: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value) || !(value > 0)) {
    throw new StatsInputError(`${name} must be a finite number > 0 (got ${String(value)})`);
  }
  return value;
}

function count(value: unknown, name: string): number {
  if (value === undefined) return 0;
  if (typeof value !== 'number' || !Number.isInteger(value) || value < 0) {
    throw new StatsInputError(`${name} must be a whole number >= 0 (got ${String(value)})`);
  }
  return value;
}

function r2(value: unknown, name: string): number {
  if (value === undefined) return 0;
  if (typeof value !== 'number' || !(value >= 0 && value < 1)) throw new StatsInputError(`${name} must be in [0, 1) (got ${String(value)})`);
  return value;
}

interface Resolved {
  se: number;
  df: number;
  alpha: number;
  alternative: PowerAlternative;
}

/** Standard error (SD units) and df of the design (Bloom 1995; Dong & Maynard 2013 — T for the formulas). */
function resolve(input: Design, extra: readonly string[], fn: string): Resolved {
  if (input === null || typeof input !== 'object') throw new StatsInputError(`${fn} needs a design object`);
  const design = input.design;
  if (design !== 'individual' && design !== 'cluster') {
    throw new StatsInputError(`${fn}: design must be 'individual' or 'cluster' (got ${String(design)})`);
  }
  checkOptions(input, [...(design === 'individual' ? INDIVIDUAL : CLUSTER), ...extra], fn);
  const p = readProbability(input.p, 'p (share assigned to the intervention)', 0.5);
  const alpha = readProbability(input.alpha, 'alpha', 0.05);
  const alternative = input.alternative ?? 'two-sided';
  if (alternative !== 'two-sided' && alternative !== 'one-sided') {
    throw new StatsInputError(`${fn}: alternative must be 'two-sided' or 'one-sided' (got ${String(alternative)})`);
  }
  const pq = p * (1 - p);
  if (design === 'individual') {
    const n = positive(input.n, 'n');
    const g = count(input.covariates, 'covariates');
    const df = n - g - 2;
    if (!(df >= 1)) throw new StatsInputError(`${fn}: n − covariates − 2 must be at least 1 (got ${df})`);
    const se = Math.sqrt((1 - r2(input.r2, 'r2')) / (pq * n));
    return { se, df, alpha, alternative };
  }
  const J = positive(input.clusters, 'clusters');
  const m = positive(input.clusterSize, 'clusterSize');
  const icc = input.icc;
  if (typeof icc !== 'number' || !(icc >= 0 && icc < 1)) throw new StatsInputError(`icc must be in [0, 1) (got ${String(icc)})`);
  const g = count(input.covariates, 'covariates');
  const df = J - g - 2;
  if (!(df >= 1)) throw new StatsInputError(`${fn}: clusters − covariates − 2 must be at least 1 (got ${df})`);
  const se = Math.sqrt(
    (icc * (1 - r2(input.r2Level2, 'r2Level2'))) / (pq * J) + ((1 - icc) * (1 - r2(input.r2Level1, 'r2Level1'))) / (pq * J * m),
  );
  return { se, df, alpha, alternative };
}

/**
 * Minimum detectable effect size: MDES = M_df · SE with M_df = t_{1−α/2, df} + t_{power, df} (one-sided: t_{1−α}).
 * Individual: SE = √[(1 − R²)/(P(1 − P)n)], df = n − g − 2 (Bloom 1995). Two-level cluster:
 * SE = √[ρ(1 − R₂²)/(P(1 − P)J) + (1 − ρ)(1 − R₁²)/(P(1 − P)Jn)], df = J − g* − 2 (Bloom 2005; Dong & Maynard 2013 —
 * M for the citations, T for the formulas). M ≈ 2.80 for large df at α = .05 two-sided and power .80.
 */
export function mdes(input: MdesInput): MdesResult {
  const r = resolve(input, ['power'], 'mdes');
  const power = readProbability(input.power, 'power', 0.8);
  const tAlpha = studentTQuantile(r.alternative === 'two-sided' ? 1 - r.alpha / 2 : 1 - r.alpha, r.df);
  const tPower = studentTQuantile(power, r.df);
  const multiplier = tAlpha + tPower;
  return {
    mdes: multiplier * r.se,
    multiplier,
    df: r.df,
    tAlpha,
    tPower,
    standardError: r.se,
    alpha: r.alpha,
    power,
    alternative: r.alternative,
  };
}

/**
 * Power to detect effectSize (SD units): with δ = effectSize/SE and c the critical t, power = P(T′ > c) + P(T′ < −c)
 * for a two-sided test (P(T′ > c) one-sided), T′ noncentral t on the design's df with noncentrality δ (Cohen 1988, ch. 2;
 * Bloom 1995; for the cluster design the same noncentral t on J − g* − 2 df, as in Dong & Maynard 2013 — T).
 */
export function power(input: PowerInput): PowerResult {
  const r = resolve(input, ['effectSize'], 'power');
  const effectSize = input.effectSize;
  if (typeof effectSize !== 'number' || !Number.isFinite(effectSize)) {
    throw new StatsInputError(`power: effectSize must be a finite number (got ${String(effectSize)})`);
  }
  const delta = effectSize / r.se;
  let criticalT: number;
  let value: number;
  if (r.alternative === 'two-sided') {
    criticalT = studentTQuantile(1 - r.alpha / 2, r.df);
    value = noncentralTSf(criticalT, r.df, delta) + noncentralTCdf(-criticalT, r.df, delta);
  } else {
    criticalT = studentTQuantile(1 - r.alpha, r.df);
    value = noncentralTSf(criticalT, r.df, delta);
  }
  return {
    power: Math.min(1, value),
    df: r.df,
    noncentrality: delta,
    criticalT,
    standardError: r.se,
    effectSize,
    alpha: r.alpha,
    alternative: r.alternative,
  };
}
