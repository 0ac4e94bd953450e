import { studentTCdf, studentTQuantile, studentTSf, studentTTwoSidedP } from './distributions.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readAlternative, readConfidence, type Alternative, type Sample } from './input.js';
import { checkGroupSummary, ldexp, meanDifference, momentsOnCommonScale, rescaleExponent, type GroupSummary } from './summary.js';

export interface TTestOptions {
  alternative?: Alternative;
  confidence?: number;
}

export interface TTestResult {
  t: number;
  df: number;
  p: number;
  /** mean(a) − mean(b). */
  meanDifference: number;
  se: number;
  /** Confidence interval for mean(a) − mean(b); one-sided alternatives give an infinite bound. */
  ci: [number, number];
  confidence: number;
  alternative: Alternative;
  method: 'welch' | 'student';
  n1: number;
  n2: number;
  mean1: number;
  mean2: number;
  sd1: number;
  sd2: number;
}

interface GroupStats {
  n: number;
  mean: number;
  meanResidual: number;
  variance: number;
}

const OPTION_KEYS = ['alternative', 'confidence'] as const;

/** p-value of an observed t for the chosen alternative (a − b greater / less than 0, or either). */
export function tPValue(t: number, df: number, alternative: Alternative): number {
  if (alternative === 'two-sided') return studentTTwoSidedP(t, df);
  return alternative === 'greater' ? studentTSf(t, df) : studentTCdf(t, df);
}

/** Confidence interval estimate ± t_q · se, two-sided or one-sided to match the alternative. */
export function tInterval(estimate: number, se: number, df: number, confidence: number, alternative: Alternative): [number, number] {
  if (alternative === 'two-sided') {
    const q = studentTQuantile(0.5 + confidence / 2, df);
    return [estimate - q * se, estimate + q * se];
  }
  const q = studentTQuantile(confidence, df);
  return alternative === 'greater' ? [estimate - q * se, Infinity] : [-Infinity, estimate + q * se];
}

function finish(
  a: GroupStats,
  b: GroupStats,
  method: 'welch' | 'student',
  opts: TTestOptions | undefined,
  fn: string,
  exponent: number,
): TTestResult {
  const o = checkOptions(opts, OPTION_KEYS, fn);
  const alternative = readAlternative(o.alternative, fn);
  const confidence = readConfidence(o.confidence, fn);
  if (a.variance === 0 && b.variance === 0) {
    throw new StatsInputError(`${fn}: both groups have zero variance (all values within each group are equal); t is undefined`);
  }
  const diff = meanDifference(a, b);
  let se: number;
  let df: number;
  if (method === 'welch') {
    const va = a.variance / a.n;
    const vb = b.variance / b.n;
    se = Math.sqrt(va + vb);
    // Scaled to the larger term before squaring: (va + vb)² and va² underflow for data near 1e-80 (df is scale-free).
    const big = Math.max(va, vb);
    const ra = va / big;
    const rb = vb / big;
    df = ((ra + rb) * (ra + rb)) / ((ra * ra) / (a.n - 1) + (rb * rb) / (b.n - 1));
  } else {
    df = a.n + b.n - 2;
    const pooled = ((a.n - 1) * a.variance + (b.n - 1) * b.variance) / df;
    se = Math.sqrt(pooled * (1 / a.n + 1 / b.n));
  }
  const t = diff / se;
  // Back from the common power-of-two scale the moments were computed on (exponent 0: unchanged).
  const back = (v: number) => (exponent === 0 ? v : ldexp(v, -exponent));
  const ci = tInterval(diff, se, df, confidence, alternative);
  return {
    t,
    df,
    p: tPValue(t, df, alternative),
    meanDifference: back(diff),
    se: back(se),
    ci: [back(ci[0]), back(ci[1])],
    confidence,
    alternative,
    method,
    n1: a.n,
    n2: b.n,
    mean1: back(a.mean),
    mean2: back(b.mean),
    sd1: back(Math.sqrt(a.variance)),
    sd2: back(Math.sqrt(b.variance)),
  };
}

function fromSummaries(a: GroupSummary, b: GroupSummary): { a: GroupStats; b: GroupStats; exponent: number } {
  checkGroupSummary(a, 'group a');
  checkGroupSummary(b, 'group b');
  // SDs below ~1e-120 or above ~1e120 are brought near 1 by a common power of two before squaring.
  const exponent = rescaleExponent(Math.max(a.sd, b.sd));
  const stats = (s: GroupSummary): GroupStats => {
    const sd = ldexp(s.sd, exponent);
    const mean = ldexp(s.mean, exponent);
    if (!Number.isFinite(mean)) throw new StatsInputError('the means are too large relative to the SDs to compare in double precision');
    return { n: s.n, mean, meanResidual: 0, variance: sd * sd };
  };
  return { a: stats(a), b: stats(b), exponent };
}

function fromSamples(a: Sample, b: Sample): { a: GroupStats; b: GroupStats; exponent: number } {
  const { moments, exponent } = momentsOnCommonScale([a, b], ['group a', 'group b']);
  return { a: moments[0], b: moments[1], exponent };
}

/**
 * Welch's unequal-variance t test of mean(a) − mean(b): t = (x̄_a − x̄_b)/√(s_a²/n_a + s_b²/n_b), with the
 * Welch–Satterthwaite df = (s_a²/n_a + s_b²/n_b)² / [(s_a²/n_a)²/(n_a−1) + (s_b²/n_b)²/(n_b−1)] (Welch 1947;
 * Satterthwaite 1946). Evenhand's default two-group comparison: valid whether or not the arms' variances differ.
 */
export function welchT(a: Sample, b: Sample, opts?: TTestOptions): TTestResult {
  const g = fromSamples(a, b);
  return finish(g.a, g.b, 'welch', opts, 'welchT', g.exponent);
}

/**
 * Student's pooled-variance t test: t = (x̄_a − x̄_b)/(s_p √(1/n_a + 1/n_b)), s_p² = [(n_a−1)s_a² + (n_b−1)s_b²]/(n_a+n_b−2),
 * df = n_a + n_b − 2 (Student 1908; Fisher 1925). Use only when equal variances are part of the pre-registered plan.
 */
export function studentT(a: Sample, b: Sample, opts?: TTestOptions): TTestResult {
  const g = fromSamples(a, b);
  return finish(g.a, g.b, 'student', opts, 'studentT', g.exponent);
}

/** Welch's t test from published class summaries { n, mean, sd } (Welch 1947; NIST/SEMATECH e-Handbook §1.3.5.3). */
export function welchTFromSummary(a: GroupSummary, b: GroupSummary, opts?: TTestOptions): TTestResult {
  const g = fromSummaries(a, b);
  return finish(g.a, g.b, 'welch', opts, 'welchTFromSummary', g.exponent);
}

/** Student's pooled t test from published summaries { n, mean, sd } (Student 1908; NIST/SEMATECH e-Handbook §1.3.5.3). */
export function studentTFromSummary(a: GroupSummary, b: GroupSummary, opts?: TTestOptions): TTestResult {
  const g = fromSummaries(a, b);
  return finish(g.a, g.b, 'student', opts, 'studentTFromSummary', g.exponent);
}
