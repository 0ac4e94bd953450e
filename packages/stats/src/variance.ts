import { fCdf, fSf } from './distributions.js';
import { StatsInputError } from './errors.js';
import { checkOptions, describeNonFinite, requireInteger, requireNonNegative, requirePlainNumbers, requireSample, type Sample } from './input.js';
import { copyChecked, finishBand, planBand, selectInPlace, SMALL } from './select.js';
import {
  checkGroupSummary,
  ldexp,
  mayHaveUnderflowed,
  moments,
  momentsOnCommonScale,
  rescaleExponent,
  scaleSamples,
  tinySamplesExponent,
  twoSum,
  type GroupSummary,
} from './summary.js';

export type LeveneCenter = 'mean' | 'median';

export interface LeveneResult {
  statistic: number;
  df1: number;
  df2: number;
  p: number;
  center: LeveneCenter;
}

export interface VarianceRatioResult {
  f: number;
  df1: number;
  df2: number;
  p: number;
  alternative: 'two-sided';
}

/** Per group: n, mean of z = |x − centre| and Σ(z − z̄)². */
interface Deviations {
  n: number;
  zMean: number;
  zSs: number;
}

/** Σz and Σ(z − z̄)² by two passes over z = |x − c − r| (r: the rounding residual of c, for data far from zero). */
function deviationsTwoPass(x: Sample, centre: number, residual: number): Deviations {
  const n = x.length;
  let sz = 0;
  for (let i = 0; i < n; i++) sz += Math.abs(x[i] - centre - residual);
  const zMean = sz / n;
  let ss = 0;
  let corr = 0;
  for (let i = 0; i < n; i++) {
    const e = Math.abs(x[i] - centre - residual) - zMean;
    ss += e * e;
    corr += e;
  }
  // Corrected two-pass (Chan, Golub & LeVeque 1983): removes the rounding left in zMean.
  return { n, zMean: zMean + corr / n, zSs: Math.max(0, ss - (corr * corr) / n) };
}

/**
 * Mean-centred deviations: one pass for the mean, then the corrected two-pass over z. When the arms' spreads are nearly
 * equal, W depends on a small difference of mean deviations, so their rounding is removed rather than risked.
 */
function meanDeviations(x: Sample, label: string): Deviations {
  const m = moments(x, label);
  return deviationsTwoPass(x, m.mean, m.meanResidual);
}

/** Median-centred deviations for small groups: copy, Hoare selection, then two passes over z. */
function medianDeviationsSmall(x: Sample, label: string): Deviations {
  const buf = copyChecked(x, label);
  const n = buf.length;
  const k = (n - 1) >> 1;
  selectInPlace(buf, k);
  if (n % 2 === 1) return deviationsTwoPass(buf, buf[k], 0);
  let next = buf[k + 1];
  for (let i = k + 2; i < n; i++) if (buf[i] < next) next = buf[i];
  // The median (a + b)/2 as a double plus its rounding error, so the deviations use the exact median.
  const [sum, error] = twoSum(buf[k], next);
  return deviationsTwoPass(buf, sum / 2, error / 2);
}

/** Outputs of scanForMedianDeviations: Σu, Σu², Σ|u|, count below lo. */
const scanOut = new Float64Array(4);

const SCAN_BLOCK = 256;

/**
 * The single data pass of medianDeviationsLarge, kept in its own small function so the JIT compiles the loop well.
 * Two values per step; comparisons as 0/1 and every value written at band[m], with m advancing only inside [lo, hi],
 * so nothing branches on the data. Sums run in blocks of 256 whose totals are added with Neumaier's compensation
 * (Neumaier 1974), so the error does not grow with n: Levene's W can hinge on a tiny difference of mean deviations.
 * Returns the band size, or −1 if the band overflowed.
 */
function scanForMedianDeviations(
  x: Sample,
  lo: number,
  hi: number,
  shift: number,
  band: Float64Array,
  capacity: number,
): number {
  const n = x.length;
  let s1 = 0;
  let e1 = 0;
  let s2 = 0;
  let e2 = 0;
  let sa = 0;
  let ea = 0;
  let below = 0;
  let m = 0;
  let i = 0;
  while (i < n) {
    const end = Math.min(n, i + SCAN_BLOCK);
    let a0 = 0;
    let a1 = 0;
    let b0 = 0;
    let b1 = 0;
    let c0 = 0;
    let c1 = 0;
    for (; i + 1 < end; i += 2) {
      const v0 = x[i];
      const v1 = x[i + 1];
      const u0 = v0 - shift;
      const u1 = v1 - shift;
      a0 += u0;
      a1 += u1;
      b0 += u0 * u0;
      b1 += u1 * u1;
      c0 += Math.abs(u0);
      c1 += Math.abs(u1);
      below += +(v0 < lo) + +(v1 < lo);
      band[m] = v0;
      m += +(v0 >= lo) & +(v0 <= hi);
      band[m] = v1;
      m += +(v1 >= lo) & +(v1 <= hi);
    }
    if (i < end) {
      const v = x[i];
      const u = v - shift;
      a0 += u;
      b0 += u * u;
      c0 += Math.abs(u);
      below += +(v < lo);
      band[m] = v;
      m += +(v >= lo) & +(v <= hi);
      i++;
    }
    if (m >= capacity - SCAN_BLOCK) return -1;
    let t = s1 + (a0 + a1);
    e1 += Math.abs(s1) >= Math.abs(a0 + a1) ? s1 - t + (a0 + a1) : a0 + a1 - t + s1;
    s1 = t;
    t = s2 + (b0 + b1);
    e2 += s2 >= b0 + b1 ? s2 - t + (b0 + b1) : b0 + b1 - t + s2;
    s2 = t;
    t = sa + (c0 + c1);
    ea += sa >= c0 + c1 ? sa - t + (c0 + c1) : c0 + c1 - t + sa;
    sa = t;
  }
  scanOut[0] = s1 + e1;
  scanOut[1] = s2 + e2;
  scanOut[2] = sa + ea;
  scanOut[3] = below;
  return m;
}

/**
 * Median-centred deviations for large groups in a single pass over the data. With u = x − K (K a sampled value near the
 * median) the pass accumulates Σu, Σu², Σ|u| and the count of values below a sampled band, and copies the band. Once
 * Hoare's selection has found the median M inside the band, with d = M − K, every value outside the interval between K
 * and M has |u − d| = |u| ∓ d, so
 *   Σz = Σ|u| + d·(#{u ≤ min(0, d)} − #{u ≥ max(0, d)}) + Σ_{u strictly between 0 and d} (|u − d| − |u|),
 *   Σz² = Σu² − 2dΣu + n d²,
 * and the values between K and M all lie in the band. The shift keeps both sums well conditioned; a two-pass fallback
 * covers the rest.
 */
function medianDeviationsLarge(x: Sample, label: string): Deviations {
  const n = x.length;
  const k = (n - 1) >> 1;
  const kHigh = n % 2 === 1 ? k : k + 1;
  const plan = planBand(x, k, kHigh);
  const { lo, hi, capacity } = plan;
  const shift = plan.centre;
  const band = new Float64Array(capacity + SCAN_BLOCK + 2);
  const m = scanForMedianDeviations(x, lo, hi, shift, band, capacity);
  if (m < 0) return medianDeviationsSmall(x, label);
  const [s1, s2, sa, below] = scanOut;
  if (!Number.isFinite(s1) || !Number.isFinite(s2) || !Number.isFinite(sa)) throw describeNonFinite(x, label);
  const found = finishBand(band, m, below, k, kHigh, n);
  if (found === null) return medianDeviationsSmall(x, label);
  // For even n the median (a + b)/2 is kept exact: d = M − K from the two differences, and M with its rounding error.
  const [sum, error] = twoSum(found[0], found[1]);
  const med = sum / 2;
  const medResidual = error / 2;
  const d = found[0] === found[1] ? found[0] - shift : (found[0] - shift + (found[1] - shift)) / 2;
  const low = Math.min(0, d);
  const high = Math.max(0, d);
  // Outside the band: below lo counts as "down", above hi as "up". Selection reordered the band but kept its values.
  let down = below;
  let up = n - below - m;
  let between = 0;
  for (let j = 0; j < m; j++) {
    const u = band[j] - shift;
    const isDown = +(u <= low);
    const isUp = +(u >= high);
    down += isDown;
    up += isUp;
    if ((isDown | isUp) === 0) between += Math.abs(u - d) - Math.abs(u);
  }
  const sumZ = sa + d * (down - up) + between;
  const sumZ2 = s2 - 2 * d * s1 + n * d * d;
  const zMean = sumZ / n;
  const ss = sumZ2 - sumZ * zMean;
  if (!(ss * 1e4 >= sumZ2)) return deviationsTwoPass(x, med, medResidual);
  return { n, zMean, zSs: Math.max(0, ss) };
}

function groupDeviations(x: Sample, label: string, center: LeveneCenter): Deviations {
  requireSample(x, label, 2);
  if (!ArrayBuffer.isView(x)) requirePlainNumbers(x, label);
  if (center === 'mean') return meanDeviations(x, label);
  return x.length < SMALL ? medianDeviationsSmall(x, label) : medianDeviationsLarge(x, label);
}

/**
 * Levene's test of equal variances: one-way ANOVA on z_ij = |x_ij − c_i|.
 * Formula: W = (N − k)/(k − 1) · Σ n_i (z̄_i − z̄)² / ΣΣ (z_ij − z̄_i)², W ~ F(k − 1, N − k) (Levene 1960, c_i = group
 * mean; Brown & Forsythe 1974, c_i = group median, the default, robust to skewed data). Use it to decide whether equal
 * variances are plausible; Evenhand's primary comparison is Welch's t regardless. The median comes from an expected
 * linear-time selection, never a sort.
 */
export function levene(groups: readonly Sample[], opts?: { center?: LeveneCenter }): LeveneResult {
  const o = checkOptions(opts, ['center'], 'levene');
  const center = o.center ?? 'median';
  if (center !== 'mean' && center !== 'median') {
    throw new StatsInputError(`levene: center must be 'mean' or 'median' (got ${String(center)})`);
  }
  if (!Array.isArray(groups) || groups.length < 2) throw new StatsInputError('levene needs at least 2 groups');
  const dev = groups.map((g, i) => groupDeviations(g, `group ${i + 1}`, center));
  // Deviations below ~1e-150 square to subnormals; W is scale-free, so tiny data are rescaled by a power of two.
  const exponent = dev.some((d) => mayHaveUnderflowed(d.zSs)) ? tinySamplesExponent(groups) : 0;
  if (exponent === 0) return fromDeviations(dev, center);
  const scaled = scaleSamples(groups, exponent);
  return fromDeviations(scaled.map((g, i) => groupDeviations(g, `group ${i + 1}`, center)), center);
}

/** One group's absolute deviations z = |x − centre|: their count, mean, and sum of squares about that mean. */
export interface AbsoluteDeviations {
  n: number;
  meanDeviation: number;
  ssDeviation: number;
}

/**
 * Levene's (or Brown–Forsythe's) W from each group's absolute deviations about its centre rather than from the values,
 * with the same formula as levene (Levene 1960; Brown & Forsythe 1974). For groups too large to hold: Σ|x − c| and
 * Σ(x − c)² per group give the mean deviation and, as Σ(x − c)² − (Σ|x − c|)²/n, its sum of squares.
 */
export function leveneFromDeviations(groups: readonly AbsoluteDeviations[], center: LeveneCenter): LeveneResult {
  if (center !== 'mean' && center !== 'median') throw new StatsInputError(`leveneFromDeviations: center must be 'mean' or 'median' (got ${String(center)})`);
  if (!Array.isArray(groups) || groups.length < 2) throw new StatsInputError('levene needs at least 2 groups');
  return fromDeviations(
    groups.map((g, i) => ({
      n: requireInteger(g?.n, `group ${i + 1}.n`, 2),
      zMean: requireNonNegative(g.meanDeviation, `group ${i + 1}.meanDeviation`),
      zSs: requireNonNegative(g.ssDeviation, `group ${i + 1}.ssDeviation`),
    })),
    center,
  );
}

function fromDeviations(dev: Deviations[], center: LeveneCenter): LeveneResult {
  const k = dev.length;
  let total = 0;
  let sumZ = 0;
  let within = 0;
  for (const d of dev) {
    total += d.n;
    sumZ += d.n * d.zMean;
    within += d.zSs;
  }
  const grand = sumZ / total;
  let between = 0;
  for (const d of dev) between += d.n * (d.zMean - grand) * (d.zMean - grand);
  if (!(within > 0)) {
    throw new StatsInputError(
      `levene: in every group the absolute deviations from the ${center} are constant, so the statistic is undefined`,
    );
  }
  const df1 = k - 1;
  const df2 = total - k;
  const statistic = ((df2 / df1) * between) / within;
  return { statistic, df1, df2, p: fSf(statistic, df1, df2), center };
}

function ratioTest(va: number, na: number, vb: number, nb: number): VarianceRatioResult {
  if (va === 0 && vb === 0) throw new StatsInputError('varianceRatioF: both groups have zero variance; F is undefined');
  if (vb === 0) throw new StatsInputError('varianceRatioF: group b has zero variance; F = s_a²/s_b² is undefined');
  // A constant group a gives F = 0, where P(F ≤ 0) = 0 and so the two-sided p is 0.
  const f = va / vb;
  const df1 = na - 1;
  const df2 = nb - 1;
  const p = Math.min(1, 2 * Math.min(fCdf(f, df1, df2), fSf(f, df1, df2)));
  return { f, df1, df2, p, alternative: 'two-sided' };
}

/**
 * F test of equal variances for two normal samples: F = s_a² / s_b² ~ F(n_a − 1, n_b − 1), two-sided p = 2·min(P(F ≤ f),
 * P(F ≥ f)) (Snedecor & Cochran 1989; NIST/SEMATECH e-Handbook §1.3.5.9). Sensitive to non-normality; prefer Levene.
 */
export function varianceRatioF(a: Sample, b: Sample): VarianceRatioResult {
  const {
    moments: [ma, mb],
  } = momentsOnCommonScale([a, b], ['group a', 'group b']);
  return ratioTest(ma.variance, ma.n, mb.variance, mb.n);
}

/** The F test of equal variances from published summaries { n, mean, sd } (NIST/SEMATECH e-Handbook §1.3.5.9). */
export function varianceRatioFFromSummary(a: GroupSummary, b: GroupSummary): VarianceRatioResult {
  checkGroupSummary(a, 'group a');
  checkGroupSummary(b, 'group b');
  // SDs outside ~1e-120…1e120 are brought near 1 by a common power of two before squaring (F is scale-free).
  const e = rescaleExponent(Math.max(a.sd, b.sd));
  const sa = ldexp(a.sd, e);
  const sb = ldexp(b.sd, e);
  return ratioTest(sa * sa, a.n, sb * sb, b.n);
}
