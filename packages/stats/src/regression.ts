import { fSf } from './distributions.js';
import { hedgesCorrection } from './effect-size.js';
import { StatsInputError } from './errors.js';
import { checkOptions, readAlternative, readConfidence, type Alternative, type Sample } from './input.js';
import { copyChecked } from './select.js';
import { meanDifference, moments } from './summary.js';
import { tInterval, tPValue } from './ttest.js';

export interface OlsOptions {
  /** Add an intercept column (default true). */
  intercept?: boolean;
  confidence?: number;
}

export interface OlsResult {
  /** Intercept first (when fitted), then one per column of X. */
  coefficients: number[];
  se: number[];
  t: number[];
  /** Two-sided p-values. */
  p: number[];
  ci: [number, number][];
  confidence: number;
  /** Residual degrees of freedom n − k. */
  df: number;
  /** R² (centred when an intercept is fitted, uncentred otherwise, as statsmodels). */
  r2: number;
  adjustedR2: number;
  /** Residual standard error √(RSS/df). */
  sigma: number;
  rss: number;
  n: number;
  intercept: boolean;
}

interface Fit {
  coefficients: Float64Array;
  /** (X'X)⁻¹ (unscaled covariance). */
  covUnscaled: Float64Array;
  rss: number;
  tss: number;
  n: number;
  k: number;
}

/**
 * Householder QR least squares on a column-major n×q matrix (Golub & Van Loan 2013, Alg. 5.2.1), returning the solution
 * and R⁻¹R⁻ᵀ. Never forms X'X, so the condition number is not squared. Throws when a column is (numerically) a linear
 * combination of earlier ones.
 */
function qrSolve(A: Float64Array, n: number, q: number, y: Float64Array, names: (j: number) => string): [Float64Array, Float64Array] {
  const R = new Float64Array(q * q);
  const qty = y.slice();
  for (let j = 0; j < q; j++) {
    const off = j * n;
    let colNorm2 = 0;
    for (let i = 0; i < n; i++) colNorm2 += A[off + i] * A[off + i];
    let s = 0;
    for (let i = j; i < n; i++) s += A[off + i] * A[off + i];
    const norm = Math.sqrt(s);
    if (!(norm > 1e-10 * Math.sqrt(colNorm2)) || norm === 0) {
      throw new StatsInputError(`ols: ${names(j)} is constant or a linear combination of earlier columns (rank-deficient design)`);
    }
    const ajj = A[off + j];
    const alpha = ajj > 0 ? -norm : norm;
    A[off + j] = ajj - alpha;
    const vtv = s - ajj * ajj + (ajj - alpha) * (ajj - alpha);
    for (let c = j + 1; c < q; c++) {
      const oc = c * n;
      let dot = 0;
      for (let i = j; i < n; i++) dot += A[off + i] * A[oc + i];
      const f = (2 * dot) / vtv;
      for (let i = j; i < n; i++) A[oc + i] -= f * A[off + i];
    }
    let dot = 0;
    for (let i = j; i < n; i++) dot += A[off + i] * qty[i];
    const f = (2 * dot) / vtv;
    for (let i = j; i < n; i++) qty[i] -= f * A[off + i];
    R[j * q + j] = alpha;
    for (let c = j + 1; c < q; c++) R[j * q + c] = A[c * n + j];
  }
  // Back-substitution for b and for R⁻¹ (upper triangular), then (X'X)⁻¹ = R⁻¹ R⁻ᵀ.
  const b = new Float64Array(q);
  for (let r = q - 1; r >= 0; r--) {
    let acc = qty[r];
    for (let c = r + 1; c < q; c++) acc -= R[r * q + c] * b[c];
    b[r] = acc / R[r * q + r];
  }
  const Rinv = new Float64Array(q * q);
  for (let col = 0; col < q; col++) {
    for (let r = col; r >= 0; r--) {
      let acc = r === col ? 1 : 0;
      for (let c = r + 1; c <= col; c++) acc -= R[r * q + c] * Rinv[c * q + col];
      Rinv[r * q + col] = acc / R[r * q + r];
    }
  }
  const cov = new Float64Array(q * q);
  for (let r = 0; r < q; r++) {
    for (let c = r; c < q; c++) {
      let acc = 0;
      for (let m = c; m < q; m++) acc += Rinv[r * q + m] * Rinv[c * q + m];
      cov[r * q + c] = acc;
      cov[c * q + r] = acc;
    }
  }
  return [b, cov];
}

/** Fits y on the columns (each a Sample of length n), centring y and the columns when an intercept is fitted. */
function fit(y: Float64Array, columns: Float64Array[], intercept: boolean, names: (j: number) => string): Fit {
  const n = y.length;
  const q = columns.length;
  const k = q + (intercept ? 1 : 0);
  if (n <= k) throw new StatsInputError(`ols: needs more observations (${n}) than coefficients (${k})`);
  if (k === 0) throw new StatsInputError('ols: no columns and no intercept: nothing to fit');
  const my = moments(y, 'y', 1);
  const means = columns.map((c, j) => moments(c, names(j), 1));
  const A = new Float64Array(n * q);
  const yc = new Float64Array(n);
  for (let i = 0; i < n; i++) yc[i] = intercept ? y[i] - my.mean - my.meanResidual : y[i];
  for (let j = 0; j < q; j++) {
    const c = columns[j];
    const mj = intercept ? means[j].mean : 0;
    const rj = intercept ? means[j].meanResidual : 0;
    for (let i = 0; i < n; i++) A[j * n + i] = c[i] - mj - rj;
  }
  let slopes: Float64Array = new Float64Array(0);
  let cov: Float64Array = new Float64Array(0);
  if (q > 0) [slopes, cov] = qrSolve(A, n, q, yc, names);
  let rss = 0;
  for (let i = 0; i < n; i++) {
    let fitted = 0;
    for (let j = 0; j < q; j++) fitted += (columns[j][i] - (intercept ? means[j].mean + means[j].meanResidual : 0)) * slopes[j];
    const e = yc[i] - fitted;
    rss += e * e;
  }
  let tss = 0;
  for (let i = 0; i < n; i++) tss += yc[i] * yc[i];
  if (!intercept) return { coefficients: slopes, covUnscaled: cov, rss, tss, n, k };
  // Intercept b0 = ȳ − x̄'b; Var(b0)/σ² = 1/n + x̄'(Xc'Xc)⁻¹x̄; Cov(b0, b)/σ² = −(Xc'Xc)⁻¹x̄.
  const xbar = means.map((m) => m.mean + m.meanResidual);
  const coefficients = new Float64Array(k);
  let b0 = my.mean;
  for (let j = 0; j < q; j++) b0 -= xbar[j] * slopes[j];
  coefficients[0] = b0 + my.meanResidual;
  coefficients.set(slopes, 1);
  const full = new Float64Array(k * k);
  const cx = new Float64Array(q);
  for (let r = 0; r < q; r++) {
    let acc = 0;
    for (let c = 0; c < q; c++) acc += cov[r * q + c] * xbar[c];
    cx[r] = acc;
  }
  let v00 = 1 / n;
  for (let r = 0; r < q; r++) v00 += xbar[r] * cx[r];
  full[0] = v00;
  for (let r = 0; r < q; r++) {
    full[(r + 1) * k] = -cx[r];
    full[r + 1] = -cx[r];
    for (let c = 0; c < q; c++) full[(r + 1) * k + (c + 1)] = cov[r * q + c];
  }
  return { coefficients, covUnscaled: full, rss, tss, n, k };
}

function toColumns(X: readonly (readonly number[])[] | readonly Sample[], n: number, byRows: boolean): Float64Array[] {
  if (byRows) {
    const rows = X as readonly (readonly number[])[];
    if (rows.length !== n) throw new StatsInputError(`ols: X has ${rows.length} rows but y has ${n} values`);
    const q = rows.length > 0 && Array.isArray(rows[0]) ? rows[0].length : 0;
    const cols = Array.from({ length: q }, () => new Float64Array(n));
    for (let i = 0; i < n; i++) {
      const row = rows[i];
      if (!Array.isArray(row) || row.length !== q) throw new StatsInputError(`ols: row ${i} of X does not have ${q} values`);
      for (let j = 0; j < q; j++) {
        const v = row[j];
        if (typeof v !== 'number' || !Number.isFinite(v)) throw new StatsInputError(`ols: X[${i}][${j}] is not a finite number`);
        cols[j][i] = v;
      }
    }
    return cols;
  }
  return (X as readonly Sample[]).map((c, j) => {
    const col = copyChecked(c, `column ${j + 1}`, 1);
    if (col.length !== n) throw new StatsInputError(`ols: column ${j + 1} has ${col.length} values but y has ${n}`);
    return col;
  });
}

function summarizeFit(f: Fit, intercept: boolean, confidence: number): OlsResult {
  const df = f.n - f.k;
  const sigma2 = f.rss / df;
  const coefficients = Array.from(f.coefficients);
  const se = coefficients.map((_, j) => Math.sqrt(sigma2 * f.covUnscaled[j * f.k + j]));
  const t = coefficients.map((b, j) => b / se[j]);
  const p = t.map((tj) => tPValue(tj, df, 'two-sided'));
  const ci = coefficients.map((b, j) => tInterval(b, se[j], df, confidence, 'two-sided'));
  const r2 = f.tss > 0 ? 1 - f.rss / f.tss : NaN;
  if (!Number.isFinite(r2)) throw new StatsInputError('ols: y has no variation; R² is undefined');
  const adjustedR2 = 1 - ((1 - r2) * (f.n - (intercept ? 1 : 0))) / df;
  return { coefficients, se, t, p, ci, confidence, df, r2, adjustedR2, sigma: Math.sqrt(sigma2), rss: f.rss, n: f.n, intercept };
}

/**
 * Ordinary least squares by Householder QR (never the normal equations): b = R⁻¹Q'y, Var(b) = σ̂²(R'R)⁻¹,
 * σ̂² = RSS/(n − k), t = b/SE on n − k df (Gauss 1809; Golub 1965; Golub & Van Loan 2013 §5.3). X is given by rows
 * (X[i] = predictors of observation i); an intercept is added unless { intercept: false }. With an intercept, y and
 * the columns are centred first, which keeps scores far from zero (e.g. scale scores near 1000) accurate.
 */
export function ols(y: Sample, X: readonly (readonly number[])[], opts?: OlsOptions): OlsResult {
  const o = checkOptions(opts, ['intercept', 'confidence'], 'ols');
  const intercept = o.intercept ?? true;
  if (typeof intercept !== 'boolean') throw new StatsInputError('ols: intercept must be true or false');
  const confidence = readConfidence(o.confidence, 'ols');
  const yy = copyChecked(y, 'y', 2);
  if (!Array.isArray(X)) throw new StatsInputError('ols: X must be an array of rows');
  const cols = toColumns(X, yy.length, true);
  const f = fit(yy, cols, intercept, (j) => `column ${j + 1} of X`);
  return summarizeFit(f, intercept, confidence);
}

export interface AncovaOptions {
  alternative?: Alternative;
  confidence?: number;
  /** Small-sample correction for the effect size g (default 'exact'). */
  correction?: 'exact' | 'approximate';
}

export interface AncovaResult {
  /** Covariate-adjusted mean difference, intervention (arm = 1) minus comparison (arm = 0): the arm coefficient. */
  adjustedDifference: number;
  se: number;
  /** adjustedDifference / se. */
  t: number;
  df: number;
  p: number;
  ci: [number, number];
  confidence: number;
  alternative: Alternative;
  /** Slopes of the covariates, in the order given. */
  covariateSlopes: number[];
  covariateSes: number[];
  r2: number;
  n1: number;
  n2: number;
  /** WWC adjusted effect size: J × adjusted difference / unadjusted pooled within-arm SD (WWC tools 2009 — V). */
  g: number;
  /** Unadjusted pooled within-arm SD used for g. */
  pooledSd: number;
}

/**
 * ANCOVA for a two-arm trial: y = β₀ + β₁·arm + Σγ_j·covariate_j + ε by OLS; the adjusted difference is β₁, t = β₁/SE(β₁)
 * on n − 2 − (number of covariates) df (Fisher 1932; pretest adjustment as in the WWC handbook). arm is 1 for the
 * intervention, 0 for comparison. With no covariate, t equals Student's pooled t exactly. covariate may be one column
 * (e.g. the pretest) or several.
 */
export function ancova(y: Sample, arm: ArrayLike<number | boolean>, covariate?: Sample | readonly Sample[], opts?: AncovaOptions): AncovaResult {
  const o = checkOptions(opts, ['alternative', 'confidence', 'correction'], 'ancova');
  const alternative = readAlternative(o.alternative, 'ancova');
  const confidence = readConfidence(o.confidence, 'ancova');
  const yy = copyChecked(y, 'y', 4);
  const n = yy.length;
  if (arm === null || typeof arm !== 'object' || arm.length !== n) {
    throw new StatsInputError(`ancova: arm must have one 0/1 value per outcome (${n})`);
  }
  const armCol = new Float64Array(n);
  let n1 = 0;
  for (let i = 0; i < n; i++) {
    const v = arm[i];
    const code = v === true ? 1 : v === false ? 0 : v;
    if (code !== 0 && code !== 1) throw new StatsInputError(`ancova: arm[${i}] must be 0 (comparison) or 1 (intervention), got ${String(v)}`);
    armCol[i] = code;
    n1 += code;
  }
  const n2 = n - n1;
  if (n1 < 2 || n2 < 2) throw new StatsInputError(`ancova: each arm needs at least 2 values (intervention ${n1}, comparison ${n2})`);
  let covs: Float64Array[] = [];
  if (covariate !== undefined) {
    const list = isListOfSamples(covariate) ? covariate : [covariate as Sample];
    covs = toColumns(list, n, false);
  }
  const f = fit(yy, [armCol, ...covs], true, (j) => (j === 0 ? 'arm' : `covariate ${j}`));
  const df = f.n - f.k;
  const sigma2 = f.rss / df;
  const se = (j: number) => Math.sqrt(sigma2 * f.covUnscaled[j * f.k + j]);
  const diff = f.coefficients[1];
  const seDiff = se(1);
  const t = diff / seDiff;
  const groupA = yy.filter((_, i) => armCol[i] === 1);
  const groupB = yy.filter((_, i) => armCol[i] === 0);
  const ma = moments(groupA, 'intervention outcomes');
  const mb = moments(groupB, 'comparison outcomes');
  const pooledSd = Math.sqrt((ma.m2 + mb.m2) / (n - 2));
  if (!(pooledSd > 0)) throw new StatsInputError('ancova: the outcome has zero variance within both arms');
  const j = hedgesCorrection(n - 2, o.correction ?? 'exact');
  return {
    adjustedDifference: diff,
    se: seDiff,
    t,
    df,
    p: tPValue(t, df, alternative),
    ci: tInterval(diff, seDiff, df, confidence, alternative),
    confidence,
    alternative,
    covariateSlopes: Array.from(f.coefficients.subarray(2)),
    covariateSes: covs.map((_, c) => se(c + 2)),
    r2: 1 - f.rss / f.tss,
    n1,
    n2,
    g: (j * diff) / pooledSd,
    pooledSd,
  };
}

/** Sufficient statistics of (outcome y, covariate x) pairs: count, means, and sums of squares and products about the means. */
export interface PairedSummary {
  n: number;
  meanY: number;
  meanX: number;
  syy: number;
  sxx: number;
  sxy: number;
}

/**
 * Combines the paired summaries of disjoint parts, pairwise in a balanced tree: with δ = means_b − means_a,
 * S_uv = S_uv,a + S_uv,b + δ_u δ_v n_a n_b / n (Chan, Golub & LeVeque 1979; for co-moments, Pébay 2008, SAND2008-6212).
 */
export function mergePairedSummaries(parts: readonly PairedSummary[]): PairedSummary {
  if (!Array.isArray(parts) || parts.length === 0) throw new StatsInputError('mergePairedSummaries needs at least one summary');
  let level = parts.map((p, i) => checkPaired(p, `part ${i + 1}`, 1));
  while (level.length > 1) {
    const next: PairedSummary[] = [];
    for (let i = 0; i + 1 < level.length; i += 2) {
      const a = level[i];
      const b = level[i + 1];
      const n = a.n + b.n;
      const dy = b.meanY - a.meanY;
      const dx = b.meanX - a.meanX;
      const w = (a.n / n) * b.n;
      next.push({
        n,
        meanY: a.meanY + (dy * b.n) / n,
        meanX: a.meanX + (dx * b.n) / n,
        syy: a.syy + b.syy + dy * dy * w,
        sxx: a.sxx + b.sxx + dx * dx * w,
        sxy: a.sxy + b.sxy + dy * dx * w,
      });
    }
    if (level.length % 2 === 1) next.push(level[level.length - 1]);
    level = next;
  }
  return level[0];
}

function checkPaired(s: PairedSummary, label: string, min: number): PairedSummary {
  if (s === null || typeof s !== 'object') throw new StatsInputError(`${label} must be { n, meanY, meanX, syy, sxx, sxy }`);
  if (!Number.isInteger(s.n) || s.n < min) throw new StatsInputError(`${label}.n must be an integer >= ${min} (got ${s.n})`);
  for (const key of ['meanY', 'meanX', 'sxy'] as const) {
    if (!Number.isFinite(s[key])) throw new StatsInputError(`${label}.${key} must be finite (got ${s[key]})`);
  }
  for (const key of ['syy', 'sxx'] as const) {
    if (!Number.isFinite(s[key]) || s[key] < 0) throw new StatsInputError(`${label}.${key} must be finite and >= 0 (got ${s[key]})`);
  }
  return s;
}

/**
 * ANCOVA with one covariate from each arm's paired summary instead of the rows; the same model and result as ancova with
 * one covariate. With pooled within-arm sums E_xx = Σ S_xx, E_xy, E_yy: slope b = E_xy/E_xx, adjusted difference
 * (ȳ₁ − ȳ₂) − b(x̄₁ − x̄₂), RSS = E_yy − E_xy²/E_xx on n − 3 df, Var = σ̂²[1/n₁ + 1/n₂ + (x̄₁ − x̄₂)²/E_xx]
 * (Snedecor & Cochran 1989 §18.3); g as in ancova (WWC tools 2009 — V).
 */
export function ancovaFromSummaries(intervention: PairedSummary, comparison: PairedSummary, opts?: AncovaOptions): AncovaResult {
  const o = checkOptions(opts, ['alternative', 'confidence', 'correction'], 'ancovaFromSummaries');
  const alternative = readAlternative(o.alternative, 'ancovaFromSummaries');
  const confidence = readConfidence(o.confidence, 'ancovaFromSummaries');
  const a = checkPaired(intervention, 'intervention', 2);
  const b = checkPaired(comparison, 'comparison', 2);
  const n = a.n + b.n;
  if (n < 4) throw new StatsInputError(`ancova: needs at least 4 pairs (got ${n})`);
  const exx = a.sxx + b.sxx;
  const exy = a.sxy + b.sxy;
  const eyy = a.syy + b.syy;
  // The QR path refuses the same case: a covariate constant within both arms is collinear with the arm.
  if (!(exx > 0)) throw new StatsInputError('ancova: covariate 1 is constant within both arms, so its slope is undefined');
  const slope = exy / exx;
  const dx = a.meanX - b.meanX;
  const diff = a.meanY - b.meanY - slope * dx;
  const rss = Math.max(0, eyy - slope * exy);
  const df = n - 3;
  const sigma2 = rss / df;
  const seDiff = Math.sqrt(sigma2 * (1 / a.n + 1 / b.n + (dx * dx) / exx));
  const t = diff / seDiff;
  const dy = a.meanY - b.meanY;
  const tss = eyy + ((a.n * b.n) / n) * dy * dy;
  const pooledSd = Math.sqrt(eyy / (n - 2));
  if (!(pooledSd > 0)) throw new StatsInputError('ancova: the outcome has zero variance within both arms');
  const j = hedgesCorrection(n - 2, o.correction ?? 'exact');
  return {
    adjustedDifference: diff,
    se: seDiff,
    t,
    df,
    p: tPValue(t, df, alternative),
    ci: tInterval(diff, seDiff, df, confidence, alternative),
    confidence,
    alternative,
    covariateSlopes: [slope],
    covariateSes: [Math.sqrt(sigma2 / exx)],
    r2: 1 - rss / tss,
    n1: a.n,
    n2: b.n,
    g: (j * diff) / pooledSd,
    pooledSd,
  };
}

function isListOfSamples(c: Sample | readonly Sample[]): c is readonly Sample[] {
  return Array.isArray(c) && c.length > 0 && typeof c[0] === 'object' && c[0] !== null;
}

export interface AnovaResult {
  f: number;
  df1: number;
  df2: number;
  p: number;
  ssBetween: number;
  ssWithin: number;
}

/**
 * One-way ANOVA: F = [Σ n_i (x̄_i − x̄)²/(k − 1)] / [Σ Σ (x_ij − x̄_i)²/(N − k)] on (k − 1, N − k) df (Fisher 1925). For two
 * groups F equals Student's t².
 */
export function oneWayAnova(groups: readonly Sample[]): AnovaResult {
  if (!Array.isArray(groups) || groups.length < 2) throw new StatsInputError('oneWayAnova needs at least 2 groups');
  const ms = groups.map((g, i) => moments(g, `group ${i + 1}`));
  let N = 0;
  let ssWithin = 0;
  let shiftSum = 0;
  for (const m of ms) {
    N += m.n;
    ssWithin += m.m2;
    shiftSum += m.n * meanDifference(m, ms[0]);
  }
  const grandShift = shiftSum / N;
  let ssBetween = 0;
  for (const m of ms) {
    const d = meanDifference(m, ms[0]) - grandShift;
    ssBetween += m.n * d * d;
  }
  const df1 = ms.length - 1;
  const df2 = N - ms.length;
  if (!(ssWithin > 0)) throw new StatsInputError('oneWayAnova: every group has zero variance; F is undefined');
  const f = ssBetween / df1 / (ssWithin / df2);
  return { f, df1, df2, p: fSf(f, df1, df2), ssBetween, ssWithin };
}
