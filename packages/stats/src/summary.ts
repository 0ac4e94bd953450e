import { StatsInputError } from './errors.js';
import { describeNonFinite, requirePlainNumbers, requireSample, type Sample } from './input.js';

/**
 * Sufficient statistics of one group: count, mean and m2 = Σ(x − mean)². `meanResidual` (optional) is the rounding error of
 * `mean` (true mean ≈ mean + meanResidual); it lets merges of data far from zero (1e9 + noise) stay exact. Summaries from
 * other sources may omit it.
 */
export interface Summary {
  n: number;
  mean: number;
  m2: number;
  meanResidual?: number;
}

/** Published class summary: count, mean and sample SD (n − 1 denominator). */
export interface GroupSummary {
  n: number;
  mean: number;
  sd: number;
}

/** Internal: a summary plus the sample variance, always with its residual. */
export interface Moments {
  n: number;
  mean: number;
  meanResidual: number;
  m2: number;
  variance: number;
}

const BLOCK = 1024;

/** Σ(x − K) and Σ(x − K)², in blocks of 1024 with four accumulators each (close to pairwise summation in accuracy). */
function shiftedSums(x: Sample, shift: number): [number, number] {
  const n = x.length;
  let s1 = 0;
  let s2 = 0;
  for (let start = 0; start < n; start += BLOCK) {
    const end = start + BLOCK < n ? start + BLOCK : n;
    let p0 = 0;
    let p1 = 0;
    let p2 = 0;
    let p3 = 0;
    let q0 = 0;
    let q1 = 0;
    let q2 = 0;
    let q3 = 0;
    let i = start;
    for (; i + 3 < end; i += 4) {
      const d0 = x[i] - shift;
      const d1 = x[i + 1] - shift;
      const d2 = x[i + 2] - shift;
      const d3 = x[i + 3] - shift;
      p0 += d0;
      p1 += d1;
      p2 += d2;
      p3 += d3;
      q0 += d0 * d0;
      q1 += d1 * d1;
      q2 += d2 * d2;
      q3 += d3 * d3;
    }
    for (; i < end; i++) {
      const d = x[i] - shift;
      p0 += d;
      q0 += d * d;
    }
    s1 += p0 + p1 + (p2 + p3);
    s2 += q0 + q1 + (q2 + q3);
  }
  return [s1, s2];
}

/** Error-free sum: returns [s, e] with s + e = a + b exactly (Knuth 1969, TwoSum). */
export function twoSum(a: number, b: number): [number, number] {
  const s = a + b;
  const bb = s - a;
  return [s, a - (s - bb) + (b - bb)];
}

/**
 * Internal kernel: n, mean (with residual), m2 and variance in one pass over data shifted by its first value, with a
 * second pass about the mean when the shift was poor (Chan, Golub & LeVeque 1983, "shifted data" and "corrected two-pass"
 * algorithms). Validates finiteness without a separate pass: any NaN or ±Infinity makes the sums non-finite.
 */
export function moments(x: Sample, label: string, min = 2): Moments {
  requireSample(x, label, min);
  if (!ArrayBuffer.isView(x)) requirePlainNumbers(x, label);
  const n = x.length;
  let shift = x[0];
  if (typeof shift !== 'number' || !Number.isFinite(shift)) throw describeNonFinite(x, label);
  let [s1, s2] = shiftedSums(x, shift);
  if (!Number.isFinite(s1) || !Number.isFinite(s2)) throw describeNonFinite(x, label);
  let m2 = s2 - (s1 * s1) / n;
  // Relative error of m2 grows like s2 / m2; redo about the mean when the first value was far from it.
  if (!(m2 * 1e4 >= s2)) {
    const [mean1] = twoSum(shift, s1 / n);
    shift = mean1;
    [s1, s2] = shiftedSums(x, shift);
    m2 = s2 - (s1 * s1) / n;
  }
  if (m2 < 0) m2 = 0;
  const [mean, meanResidual] = twoSum(shift, s1 / n);
  return { n, mean, meanResidual, m2, variance: m2 / (n - 1) };
}

/** Difference of two means using their residuals: (mean_a − mean_b) without the rounding of each mean. */
export function meanDifference(a: { mean: number; meanResidual?: number }, b: { mean: number; meanResidual?: number }): number {
  return a.mean - b.mean + ((a.meanResidual ?? 0) - (b.meanResidual ?? 0));
}

/**
 * Sufficient statistics { n, mean, m2 } of a sample, m2 = Σ(x − x̄)².
 * Formula: shifted one-pass sums with a corrected second pass when needed (Chan, Golub & LeVeque 1983), stable for data
 * such as 1e9 + small noise. Needs at least 1 finite value.
 */
export function summarize(values: Sample): Summary {
  const m = moments(values, 'values', 1);
  return { n: m.n, mean: m.mean, m2: m.m2, meanResidual: m.meanResidual };
}

function checkSummary(s: Summary, label: string): void {
  if (s === null || typeof s !== 'object') throw new StatsInputError(`${label} must be a summary { n, mean, m2 }`);
  if (!Number.isInteger(s.n) || s.n < 1) throw new StatsInputError(`${label}.n must be an integer >= 1 (got ${s.n})`);
  if (!Number.isFinite(s.mean)) throw new StatsInputError(`${label}.mean must be finite (got ${s.mean})`);
  if (!Number.isFinite(s.m2) || s.m2 < 0) throw new StatsInputError(`${label}.m2 must be finite and >= 0 (got ${s.m2})`);
  if (s.meanResidual !== undefined && !Number.isFinite(s.meanResidual)) {
    throw new StatsInputError(`${label}.meanResidual must be finite when given (got ${s.meanResidual})`);
  }
}

/**
 * Combines the summaries of two disjoint parts into the summary of their union.
 * Formula: δ = x̄_b − x̄_a, n = n_a + n_b, x̄ = x̄_a + δ n_b/n, m2 = m2_a + m2_b + δ² n_a n_b / n (Chan, Golub & LeVeque 1979).
 */
export function mergeSummaries(a: Summary, b: Summary): Summary {
  checkSummary(a, 'a');
  checkSummary(b, 'b');
  const n = a.n + b.n;
  const delta = meanDifference(b, a);
  const [mean, err] = twoSum(a.mean, (a.meanResidual ?? 0) + (delta * b.n) / n);
  const m2 = a.m2 + b.m2 + ((delta * delta * a.n) / n) * b.n;
  return { n, mean, m2, meanResidual: err };
}

/** Merges any number of summaries pairwise (a balanced tree, so rounding grows with log of the count). */
export function mergeAllSummaries(parts: readonly Summary[]): Summary {
  if (!Array.isArray(parts) || parts.length === 0) throw new StatsInputError('mergeAllSummaries needs at least one summary');
  let level: Summary[] = parts.slice();
  while (level.length > 1) {
    const next: Summary[] = [];
    for (let i = 0; i + 1 < level.length; i += 2) next.push(mergeSummaries(level[i], level[i + 1]));
    if (level.length % 2 === 1) next.push(level[level.length - 1]);
    level = next;
  }
  checkSummary(level[0], 'summary');
  return level[0];
}

/** Sample variance m2 / (n − 1) of a summary (needs n ≥ 2). */
export function summaryVariance(s: Summary): number {
  checkSummary(s, 'summary');
  if (s.n < 2) throw new StatsInputError(`summary has fewer than 2 values (n = ${s.n}); its variance is undefined`);
  return s.m2 / (s.n - 1);
}

/** Converts a published { n, mean, sd } into a summary, m2 = sd² (n − 1). */
export function summaryFromGroup(g: GroupSummary, label = 'summary'): Summary {
  checkGroupSummary(g, label);
  return { n: g.n, mean: g.mean, m2: g.sd * g.sd * (g.n - 1), meanResidual: 0 };
}

export function checkGroupSummary(g: GroupSummary, label: string): void {
  if (g === null || typeof g !== 'object') throw new StatsInputError(`${label} must be { n, mean, sd }`);
  if (!Number.isInteger(g.n) || g.n < 2) {
    throw new StatsInputError(`${label} has fewer than 2 values (n must be an integer >= 2, got ${g.n})`);
  }
  if (!Number.isFinite(g.mean)) throw new StatsInputError(`${label}.mean must be finite (got ${g.mean})`);
  if (!Number.isFinite(g.sd) || g.sd < 0) throw new StatsInputError(`${label}.sd must be finite and >= 0 (got ${g.sd})`);
}

/** Below this m2 (2⁻⁹⁰⁰ ≈ 1e-271) squared deviations may have lost digits to underflow. */
const TINY_M2 = 2 ** -900;
/** Magnitudes outside [2⁻⁴⁰⁰, 2⁴⁰⁰] (≈ 4e-121 … 3e120) are rescaled before squaring. */
const SAFE_LOW = 2 ** -400;
const SAFE_HIGH = 2 ** 400;

/** x · 2^k, exact unless the result is subnormal; two steps so 2^k itself never overflows (|k| ≤ 2100). */
export function ldexp(x: number, k: number): number {
  const half = Math.trunc(k / 2);
  return x * 2 ** half * 2 ** (k - half);
}

/**
 * The power-of-two exponent e that brings a magnitude near 1 (m·2^e in [½, 1)) when m lies outside the range where
 * squares are safe, else 0 (m = 0 also gives 0).
 */
export function rescaleExponent(magnitude: number): number {
  if (!(magnitude > 0) || (magnitude >= SAFE_LOW && magnitude <= SAFE_HIGH)) return 0;
  let e = -Math.floor(Math.log2(magnitude)) - 1;
  while (ldexp(magnitude, e) >= 1) e--;
  while (ldexp(magnitude, e) < 0.5) e++;
  return e;
}

/** True when an m2 (or other sum of squares) is small enough that its squares may have underflowed. */
export function mayHaveUnderflowed(m2: number): boolean {
  return m2 < TINY_M2;
}

/** The common exponent e for rescaling samples whose every |x| is below 2⁻⁴⁰⁰ (≈ 4e-121); 0 otherwise. */
export function tinySamplesExponent(samples: readonly Sample[]): number {
  let maxAbs = 0;
  for (const x of samples) for (let i = 0; i < x.length; i++) maxAbs = Math.max(maxAbs, Math.abs(x[i]));
  return maxAbs >= SAFE_LOW ? 0 : rescaleExponent(maxAbs);
}

/** Copies of the samples multiplied by 2^e (exact for normal and subnormal values alike). */
export function scaleSamples(samples: readonly Sample[], exponent: number): Float64Array[] {
  return samples.map((x) => {
    const out = new Float64Array(x.length);
    for (let i = 0; i < x.length; i++) out[i] = ldexp(x[i], exponent);
    return out;
  });
}

/**
 * Moments of several samples on one power-of-two scale. When a sample's squared deviations could have underflowed
 * (m2 below 2⁻⁹⁰⁰, possible only when every |x| is below about 1e-120), all samples are multiplied by the same power of
 * two 2^e (exact) so the largest |x| is near 1, and their moments recomputed. Locations and spreads of the result are on
 * that scale (multiply by 2^−e, `ldexp(v, −exponent)`); t, df, p, F and W do not depend on it. Values too large to
 * square (|x − x₁| above about 1e154) are refused by `moments` with a clear message.
 */
export function momentsOnCommonScale(samples: readonly Sample[], labels: readonly string[]): { moments: Moments[]; exponent: number } {
  const first = samples.map((x, i) => moments(x, labels[i]));
  // m2 = 0 may be a constant sample or a total underflow; the magnitude check tells them apart.
  if (!first.some((m) => mayHaveUnderflowed(m.m2))) return { moments: first, exponent: 0 };
  const exponent = tinySamplesExponent(samples);
  if (exponent === 0) return { moments: first, exponent: 0 };
  return { moments: scaleSamples(samples, exponent).map((x, i) => moments(x, labels[i])), exponent };
}
