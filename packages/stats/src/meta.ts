import { chiSquareSf, normalQuantile, normalSf } from './distributions.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readConfidence } from './input.js';

/** One site's (or study's) estimate y with its sampling variance v (e.g. Hedges' g and se²). */
export interface Estimate {
  y: number;
  v: number;
}

export interface PooledResult {
  estimate: number;
  se: number;
  ci: [number, number];
  confidence: number;
  /** estimate / se, and its two-sided normal p-value. */
  z: number;
  p: number;
  /** Between-site variance τ² (0 for the fixed-effect model). */
  tau2: number;
  /** Cochran's Q = Σ w_i (y_i − ȳ_FE)², its df (k − 1) and p from χ²(k − 1). */
  q: number;
  df: number;
  pQ: number;
  /** I² = max(0, (Q − df)/Q), as a proportion in [0, 1] (multiply by 100 for the usual percent). */
  i2: number;
  /** Normalised weights of each estimate in the pooled result (sum to 1). */
  weights: number[];
  method: 'fixed-effect' | 'dersimonian-laird';
  k: number;
}

function check(estimates: readonly Estimate[], fn: string): void {
  if (!Array.isArray(estimates) || estimates.length < 2) throw new StatsInputError(`${fn} needs at least 2 estimates`);
  estimates.forEach((e, i) => {
    if (e === null || typeof e !== 'object') throw new StatsInputError(`${fn}: estimate ${i + 1} must be { y, v }`);
    if (typeof e.y !== 'number' || !Number.isFinite(e.y)) throw new StatsInputError(`${fn}: estimate ${i + 1} has a non-finite y`);
    if (typeof e.v !== 'number' || !(e.v > 0) || !Number.isFinite(e.v)) {
      throw new StatsInputError(`${fn}: estimate ${i + 1} needs a finite sampling variance v > 0 (got ${String(e.v)})`);
    }
  });
}

/** Inverse-variance weighted mean Σ w y / Σ w, computed about the first estimate so large offsets keep precision. */
function weightedMean(estimates: readonly Estimate[], w: readonly number[]): [number, number] {
  const shift = estimates[0].y;
  let sw = 0;
  let swy = 0;
  for (let i = 0; i < w.length; i++) {
    sw += w[i];
    swy += w[i] * (estimates[i].y - shift);
  }
  return [shift + swy / sw, sw];
}

function cochranQ(estimates: readonly Estimate[]): { q: number; w: number[]; sw: number; sw2: number } {
  const w = estimates.map((e) => 1 / e.v);
  const [mean, sw] = weightedMean(estimates, w);
  let q = 0;
  let sw2 = 0;
  for (let i = 0; i < w.length; i++) {
    const d = estimates[i].y - mean;
    q += w[i] * d * d;
    sw2 += w[i] * w[i];
  }
  return { q, w, sw, sw2 };
}

function pool(
  estimates: readonly Estimate[],
  tau2: number,
  confidence: number,
  method: PooledResult['method'],
  q: number,
): PooledResult {
  const w = estimates.map((e) => 1 / (e.v + tau2));
  const [estimate, sw] = weightedMean(estimates, w);
  const se = Math.sqrt(1 / sw);
  const z = estimate / se;
  const zq = normalQuantile(0.5 + confidence / 2);
  const df = estimates.length - 1;
  return {
    estimate,
    se,
    ci: [estimate - zq * se, estimate + zq * se],
    confidence,
    z,
    p: Math.min(1, 2 * normalSf(Math.abs(z))),
    tau2,
    q,
    df,
    pQ: chiSquareSf(q, df),
    i2: q > 0 ? Math.max(0, (q - df) / q) : 0,
    weights: w.map((wi) => wi / sw),
    method,
    k: estimates.length,
  };
}

/**
 * Fixed-effect (common-effect) inverse-variance pooling: ȳ = Σ w_i y_i / Σ w_i, w_i = 1/v_i, SE = 1/√Σw_i, normal CI; with
 * Cochran's Q and I² (Cochran 1954; Higgins & Thompson 2002). Use when sites share one true effect.
 */
export function fixedEffect(estimates: readonly Estimate[], opts?: { confidence?: number }): PooledResult {
  const o = checkOptions(opts, ['confidence'], 'fixedEffect');
  const confidence = readConfidence(o.confidence, 'fixedEffect');
  check(estimates, 'fixedEffect');
  const { q } = cochranQ(estimates);
  return pool(estimates, 0, confidence, 'fixed-effect', q);
}

/**
 * DerSimonian–Laird random-effects pooling: τ² = max(0, (Q − (k − 1)) / (Σw − Σw²/Σw)), then weights 1/(v_i + τ²),
 * SE = 1/√Σw*, normal CI (DerSimonian & Laird 1986). Use when sites are expected to differ in their true effects (the
 * usual case for multi-site trials).
 */
export function randomEffects(estimates: readonly Estimate[], opts?: { confidence?: number }): PooledResult {
  const o = checkOptions(opts, ['confidence'], 'randomEffects');
  const confidence = readConfidence(o.confidence, 'randomEffects');
  check(estimates, 'randomEffects');
  const { q, sw, sw2 } = cochranQ(estimates);
  const df = estimates.length - 1;
  const tau2 = Math.max(0, (q - df) / (sw - sw2 / sw));
  return pool(estimates, tau2, confidence, 'dersimonian-laird', q);
}
