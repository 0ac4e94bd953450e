import { type Sample } from './input.js';
import { copyChecked } from './select.js';
import { ldexp, momentsOnCommonScale } from './summary.js';

export interface Description {
  n: number;
  mean: number;
  /** Sample SD, n − 1 denominator. */
  sd: number;
  variance: number;
  /** Standard error of the mean, sd/√n. */
  se: number;
  min: number;
  q1: number;
  median: number;
  q3: number;
  max: number;
  /** Adjusted Fisher–Pearson skewness G1; null when n < 3 or the SD is 0 (undefined). */
  skewness: number | null;
  /** Adjusted excess kurtosis G2; null when n < 4 or the SD is 0 (undefined). */
  kurtosis: number | null;
}

/**
 * Quantile of sorted data by linear interpolation between order statistics: h = (n − 1)p (Hyndman & Fan 1996,
 * definition 7). Interpolates from the nearer order statistic, as NumPy does, so results match it to the last bit.
 */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const h = (sorted.length - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(sorted.length - 1, lo + 1);
  const t = h - lo;
  const a = sorted[lo];
  const b = sorted[hi];
  return t >= 0.5 ? b - (b - a) * (1 - t) : a + (b - a) * t;
}

/**
 * Descriptive statistics of one group. SD with n − 1; quartiles by Hyndman & Fan (1996) definition 7 (linear
 * interpolation, h = (n − 1)p, as NumPy's default); skewness G1 = √(n(n−1))/(n−2) · m3/m2^{3/2} and excess kurtosis
 * G2 = (n−1)/((n−2)(n−3)) · [(n+1)(m4/m2² − 3) + 6], with m_k the k-th central moment (Joanes & Gill 1998).
 */
export function describe(values: Sample): Description {
  // Tiny values (below ~1e-120) are described on a power-of-two scale so their squares cannot underflow.
  const {
    moments: [m],
    exponent,
  } = momentsOnCommonScale([values], ['values']);
  const back = (v: number) => (exponent === 0 ? v : ldexp(v, -exponent));
  const sorted = copyChecked(values, 'values').sort();
  const n = m.n;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const d = (exponent === 0 ? sorted[i] : ldexp(sorted[i], exponent)) - m.mean - m.meanResidual;
    const d2 = d * d;
    m2 += d2;
    m3 += d2 * d;
    m4 += d2 * d2;
  }
  m2 /= n;
  m3 /= n;
  m4 /= n;
  const sd = back(Math.sqrt(m.variance));
  const skewness = n >= 3 && m2 > 0 ? ((Math.sqrt(n * (n - 1)) / (n - 2)) * m3) / Math.pow(m2, 1.5) : null;
  const kurtosis = n >= 4 && m2 > 0 ? ((n - 1) / ((n - 2) * (n - 3))) * ((n + 1) * (m4 / (m2 * m2) - 3) + 6) : null;
  return {
    n,
    mean: back(m.mean),
    sd,
    // The nearest double: for SDs below ~1e-162 the variance underflows to 0 although the SD does not.
    variance: back(back(m.variance)),
    se: sd / Math.sqrt(n),
    min: sorted[0],
    q1: quantileSorted(sorted, 0.25),
    median: quantileSorted(sorted, 0.5),
    q3: quantileSorted(sorted, 0.75),
    max: sorted[n - 1],
    skewness,
    kurtosis,
  };
}
