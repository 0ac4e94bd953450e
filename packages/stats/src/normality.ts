import { normalQuantile, normalSf } from './distributions.js';
import { StatsInputError } from './errors.js';
import { type Sample } from './input.js';
import { copyChecked } from './select.js';

export interface ShapiroWilkResult {
  w: number;
  p: number;
  n: number;
}

/** c[0] + c[1] x + c[2] x² + … */
function poly(c: readonly number[], x: number): number {
  let r = 0;
  for (let i = c.length - 1; i >= 0; i--) r = r * x + c[i];
  return r;
}

// Polynomial coefficients of Royston (1995), Applied Statistics algorithm AS R94.
const C1 = [0, 0.221157, -0.147981, -2.07119, 4.434685, -2.706056];
const C2 = [0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633];
const C3 = [0.544, -0.39978, 0.025054, -6.714e-4];
const C4 = [1.3822, -0.77857, 0.062767, -0.0020322];
const C5 = [-1.5861, -0.31082, -0.083751, 0.0038915];
const C6 = [-0.4803, -0.082676, 0.0030302];
const G = [-2.273, 0.459];

/**
 * Shapiro–Wilk W test of normality, for 3 ≤ n ≤ 5000: W = (Σ a_i x_(i))² / Σ(x_i − x̄)², with Royston's approximations
 * to the coefficients a_i and to the null distribution of W (exact for n = 3) — Royston (1992, 1995), algorithm AS R94.
 * Computed in double precision (the AS R94 Fortran used by SciPy is single precision). A diagnostic: with large
 * classes it flags departures too small to matter for a t test.
 */
export function shapiroWilk(values: Sample): ShapiroWilkResult {
  const x = copyChecked(values, 'values', 3).sort();
  const n = x.length;
  if (n > 5000) throw new StatsInputError(`shapiroWilk supports 3 to 5000 values (got ${n}); Royston's approximation is not validated beyond`);
  // Centre on the middle value first (as SciPy does with the median): x/range below then keeps its digits for data
  // far from zero, such as 1e9 + noise.
  const centre = x[n >> 1];
  for (let i = 0; i < n; i++) x[i] -= centre;
  const range = x[n - 1] - x[0];
  if (!(range > 0)) throw new StatsInputError('shapiroWilk: all values are identical; W is undefined');
  const nn2 = n >> 1;
  const a = new Float64Array(nn2 + 1); // 1-based as in AS R94
  if (n === 3) {
    a[1] = Math.SQRT1_2;
  } else {
    const an25 = n + 0.25;
    let summ2 = 0;
    for (let i = 1; i <= nn2; i++) {
      a[i] = normalQuantile((i - 0.375) / an25);
      summ2 += a[i] * a[i];
    }
    summ2 *= 2;
    const ssumm2 = Math.sqrt(summ2);
    const rsn = 1 / Math.sqrt(n);
    const a1 = poly(C1, rsn) - a[1] / ssumm2;
    let i1: number;
    let fac: number;
    if (n > 5) {
      i1 = 3;
      const a2 = -a[2] / ssumm2 + poly(C2, rsn);
      fac = Math.sqrt((summ2 - 2 * a[1] * a[1] - 2 * a[2] * a[2]) / (1 - 2 * a1 * a1 - 2 * a2 * a2));
      a[2] = a2;
    } else {
      i1 = 2;
      fac = Math.sqrt((summ2 - 2 * a[1] * a[1]) / (1 - 2 * a1 * a1));
    }
    a[1] = a1;
    for (let i = i1; i <= nn2; i++) a[i] /= -fac;
  }
  // W as the squared correlation between the scaled data and the coefficients; w1 = 1 − W without rounding loss.
  let sa = -a[1];
  let sx = x[0] / range;
  for (let i = 1, j = n - 1; i < n; j--) {
    sx += x[i] / range;
    i++;
    if (i !== j) sa += Math.sign(i - j) * a[Math.min(i, j)];
  }
  sa /= n;
  sx /= n;
  let ssa = 0;
  let ssx = 0;
  let sax = 0;
  for (let i = 0, j = n - 1; i < n; i++, j--) {
    const asa = i !== j ? Math.sign(i - j) * a[1 + Math.min(i, j)] - sa : -sa;
    const xsx = x[i] / range - sx;
    ssa += asa * asa;
    ssx += xsx * xsx;
    sax += asa * xsx;
  }
  const ssassx = Math.sqrt(ssa * ssx);
  const w1 = ((ssassx - sax) * (ssassx + sax)) / (ssa * ssx);
  const w = 1 - w1;
  if (n === 3) {
    // Exact: p = (6/π)(asin √W − asin √(3/4)).
    const p = (6 / Math.PI) * (Math.asin(Math.sqrt(w)) - Math.PI / 3);
    return { w, p: Math.min(1, Math.max(0, p)), n };
  }
  let y = Math.log(w1);
  const lnN = Math.log(n);
  let mean: number;
  let sd: number;
  if (n <= 11) {
    const gamma = poly(G, n);
    // Beyond the approximation's range: a tiny p, 1e-19 as in the AS R94 Fortran.
    if (y >= gamma) return { w, p: 1e-19, n };
    y = -Math.log(gamma - y);
    mean = poly(C3, n);
    sd = Math.exp(poly(C4, n));
  } else {
    mean = poly(C5, lnN);
    sd = Math.exp(poly(C6, lnN));
  }
  return { w, p: normalSf((y - mean) / sd), n };
}
