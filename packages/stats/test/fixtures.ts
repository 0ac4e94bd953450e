/**
 * Loads test/fixtures/reference.json (written only by scripts/make-fixtures.py from SciPy 1.10 / statsmodels, with
 * exact-arithmetic cross-checks) and regenerates its large samples bit-identically to the script.
 */
import { readFileSync } from 'node:fs';
import { expect } from 'vitest';

export interface GeneratorSpec {
  seed: number;
  n: number;
  mean?: number;
  sd?: number;
  kind?: 'normal' | 'skewed' | 'heavy' | 'uniform';
  round?: number;
}

export type DataSpec = number[] | GeneratorSpec;

/** A reference value: from SciPy, or exact (fractions + mpmath) where SciPy's float64 result missed the tolerance. */
export interface Ref {
  value: number | null;
  source: 'scipy' | 'exact';
  scipy?: number | null;
  /** The exact value (fractions + mpmath), recorded beside SciPy's. */
  exact?: number | null;
}

export interface TTestRef {
  t: Ref;
  df: Ref;
  p: Ref;
  meanDifference: Ref;
  se: Ref;
  ci: [Ref, Ref];
}

/** SciPy's single-precision W and p, and the float64 port of AS R94 from make-fixtures.py. */
export interface ShapiroRef {
  w: number;
  p: number;
  wDouble: number;
  pDouble: number;
}

export interface TwoSampleCase {
  id: string;
  description: string;
  a: DataSpec;
  b: DataSpec;
  alternative: 'two-sided' | 'greater' | 'less';
  confidence: number;
  n1: number;
  n2: number;
  expected: {
    welch: TTestRef | null;
    student: TTestRef | null;
    levene: { mean: { statistic: Ref; p: Ref } | null; median: { statistic: Ref; p: Ref } | null };
    varianceRatio: { f: Ref; p: Ref } | null;
    shapiro: { a: ShapiroRef | null; b: ShapiroRef | null };
    mannWhitney: { u: number; p: number; method: 'exact' | 'normal' };
    hedges: { g: number; d: number; j: number; se: number; ci: [number, number]; gApproximate: number } | null;
    describe: {
      q1: number;
      median: number;
      q3: number;
      min: number;
      max: number;
      mean: Ref;
      sd: Ref;
      skewness?: Ref | null;
      kurtosis?: Ref | null;
    };
  };
}

export interface RegressionCase {
  id: string;
  description: string;
  y: number[];
  X: number[][];
  expected: { coefficients: Ref[]; se: Ref[]; t: Ref[]; p: Ref[]; r2: Ref; df: number };
}

export interface Fixture {
  versions: Record<string, string>;
  tolerances: { statistic: number; pRelative: number; pAbsolute: number };
  scipyMissedExact: string[];
  twoSample: TwoSampleCase[];
  regression: RegressionCase[];
  distributions: {
    tSf: [number, number, number][];
    normalSf: [number, number][];
    fSf: [number, number, number, number][];
    chiSquareSf: [number, number, number][];
    tQuantile: [number, number, number][];
    normalQuantile: [number, number][];
    logGamma: [number, number][];
  };
  noncentralT: { t: number; df: number; nc: number; cdf: number; sf: number }[];
  power: { input: Record<string, unknown>; expected: Record<string, number> }[];
  meta: {
    id: string;
    estimates: { y: number; v: number }[];
    expected: {
      fixed: { estimate: number; se: number; ci: [number, number] };
      random: { estimate: number; se: number; ci: [number, number]; tau2: number };
      q: number;
      i2: number;
      pQ: number;
    };
  }[];
  benjaminiHochberg: { id: string; p: number[]; q: number; expected: { adjusted: number[]; rejected: boolean[] } }[];
  icc: { id: string; groups: GeneratorSpec[]; expected: { icc: number; msBetween: number; msWithin: number; n0: number } }[];
}

export const fixture: Fixture = JSON.parse(readFileSync(new URL('./fixtures/reference.json', import.meta.url), 'utf8'));

export const TOL = fixture.tolerances;

/** Same generator as make-fixtures.py: Park–Miller LCG with +, −, ×, / and floor only, so both sides are bit-identical. */
export function generate(spec: DataSpec): Float64Array {
  if (Array.isArray(spec)) return Float64Array.from(spec);
  let s = spec.seed;
  const m = 2147483647;
  const uniform = () => {
    s = (s * 48271) % m;
    return s / m;
  };
  const kind = spec.kind ?? 'normal';
  const out = new Float64Array(spec.n);
  for (let i = 0; i < spec.n; i++) {
    let z: number;
    if (kind === 'normal' || kind === 'skewed') {
      z = 0;
      for (let j = 0; j < 12; j++) z += uniform();
      z = z - 6;
      if (kind === 'skewed') z = z * z;
    } else if (kind === 'heavy') {
      const u1 = uniform();
      z = u1 / (uniform() + 0.05);
    } else {
      z = uniform();
    }
    let x = (spec.mean ?? 0) + (spec.sd ?? 1) * z;
    if (spec.round !== undefined) {
      const scale = 10 ** spec.round;
      x = Math.floor(x * scale + 0.5) / scale;
    }
    out[i] = x;
  }
  return out;
}

/** |actual − expected| ≤ max(rel·|expected|, abs); infinite bounds are stored as null. */
export function expectClose(actual: number, expected: number | null, rel: number, abs = 0, label = ''): void {
  if (expected === null) {
    expect(Number.isFinite(actual), `${label}: expected an infinite bound, got ${actual}`).toBe(false);
    return;
  }
  const tol = Math.max(rel * Math.abs(expected), abs);
  const diff = Math.abs(actual - expected);
  expect(diff <= tol, `${label}: got ${actual}, expected ${expected} (diff ${diff.toExponential(2)} > tol ${tol.toExponential(2)})`).toBe(true);
}

export function expectStat(actual: number, ref: Ref | number | null, label: string, rel = TOL.statistic, abs = 0): void {
  const value = ref !== null && typeof ref === 'object' ? ref.value : ref;
  const source = ref !== null && typeof ref === 'object' ? ref.source : 'scipy';
  expectClose(actual, value, rel, abs, `${label} [${source}]`);
}

export function expectP(actual: number, ref: Ref | number, label: string): void {
  expectStat(actual, ref, label, TOL.pRelative, TOL.pAbsolute);
}
