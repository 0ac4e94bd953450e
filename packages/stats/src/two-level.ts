import { hedgesCorrection, type SmallSampleCorrection } from './effect-size.js';
import { StatsInputError } from './errors.js';
import { inverseFromCholesky } from './linear-algebra.js';
import { checkOptions, readAlternative, readConfidence, type Alternative } from './input.js';
import { tInterval, tPValue } from './ttest.js';
import { unitMomentsFromRows, type ClusteredRows, type UnitMoments } from './unit-moments.js';

/** Options of the two-level model, as the t tests: the alternative for p and the CI, the CI's confidence, g's correction. */
export interface TwoLevelOptions {
  alternative?: Alternative;
  confidence?: number;
  /** Small-sample correction of g: the exact J (default, as `hedgesG` and `ancova`) or ω = 1 − 3/(4N − 9). */
  correction?: SmallSampleCorrection;
}

/** A covariate's fixed effect β_k with SE √(σ²(X'V⁻¹X)⁻¹_kk), in outcome units per covariate unit. */
export interface TwoLevelCoefficient {
  estimate: number;
  se: number;
}

/**
 * The two-level model's arm effect with t = estimate/SE on Satterthwaite df, the REML variance components and ICC, and the
 * WWC standardised effect g (see `twoLevelFromMoments` for formulas and sources).
 */
export interface TwoLevelResult {
  /** The arm effect, intervention − comparison, adjusted for the blocks and covariates in the model. */
  estimate: number;
  se: number;
  /** Satterthwaite degrees of freedom (Giesbrecht & Burns 1985, as lmerTest); N − p when τ² sits at 0. */
  df: number;
  t: number;
  p: number;
  /** Confidence interval for the arm effect; one-sided alternatives give an infinite bound. */
  ci: [number, number];
  confidence: number;
  alternative: Alternative;
  /** Variance between units (random intercepts), REML. */
  tau2: number;
  /** Variance of students within units, REML. */
  sigma2: number;
  /** τ² / (τ² + σ²), conditional on the fixed effects. */
  icc: number;
  /** The restricted log-likelihood at the optimum, with every constant (as lme4's logLik(REML = TRUE)). */
  remlLogLik: number;
  /** True when the REML estimate of τ² is 0 (the boundary of the parameter space). */
  boundary: boolean;
  /** Students. */
  n: number;
  students: { intervention: number; comparison: number };
  units: { intervention: number; comparison: number };
  /** Number of blocks (0 when the model has none); the first label in code-unit order is the reference. */
  blocks: number;
  /** Number of fixed effects p = 2 + (blocks − 1) + covariates. */
  fixedEffects: number;
  /** One per covariate, in input order, in outcome units per covariate unit. */
  covariateCoefficients: TwoLevelCoefficient[];
  /** Standardised effect: correction × estimate / pooledSd (WWC: adjusted difference over the unadjusted SD). */
  g: number;
  /** The small-sample correction applied to g (J or ω with N − 2). */
  gCorrection: number;
  /** Unadjusted pooled within-arm SD of the students' outcomes, on N − 2 df. */
  pooledSd: number;
}

const OPTION_KEYS = ['alternative', 'confidence', 'correction'] as const;
const FN = 'twoLevel';

/** Per-unit inputs after validation, centring and scaling, grouped by (block, arm, size): all units of a group share the weight n/(1 + nλ). */
interface Prepared {
  N: number;
  p: number;
  /** Position of the arm column; blocks occupy 1…B−1, covariates B+1…B+k, the outcome p. */
  armCol: number;
  k: number;
  groups: number;
  gCount: Float64Array;
  gN: Float64Array;
  gBlock: Int32Array;
  gArm: Uint8Array;
  /** Σ z per group, z = (scaled unit means of the covariates, scaled unit mean of y). */
  gSumZ: Float64Array;
  /** Σ z z' per group, (k + 1)² each. */
  gSumZZ: Float64Array;
  /** Within-unit sums (scaled): covariates × covariates, covariates × y, y × y. */
  wXX: Float64Array;
  wXY: Float64Array;
  wYY: number;
  sy: number;
  sx: Float64Array;
}

interface Fit {
  lambda: number;
  /** −2 × restricted log-likelihood with σ² profiled out (scaled data). */
  deviance: number;
  rss: number;
  beta: Float64Array;
  /** Lower Cholesky factor of A = X'H⁻¹X (p × p, row-major). */
  chol: Float64Array;
}

function fail(message: string): never {
  throw new StatsInputError(`${FN}: ${message}`);
}

function isFiniteArray(value: unknown, length: number): boolean {
  if (!Array.isArray(value) || value.length !== length) return false;
  for (let i = 0; i < length; i++) {
    const v = value[i];
    if (typeof v !== 'number' || !Number.isFinite(v)) return false;
  }
  return true;
}

/** Validates one unit's moments; messages are built only on failure (this runs for every one of 80 000 units). */
function checkUnit(u: UnitMoments, index: number, k: number, withBlocks: boolean): void {
  if (u === null || typeof u !== 'object') fail(`unit ${index} is not an object`);
  if (typeof u.unit !== 'string') fail(`unit ${index} has no string label`);
  if (
    (u.arm !== 0 && u.arm !== 1) ||
    typeof u.n !== 'number' ||
    !Number.isInteger(u.n) ||
    u.n < 1 ||
    typeof u.meanY !== 'number' ||
    !Number.isFinite(u.meanY) ||
    typeof u.ssY !== 'number' ||
    !Number.isFinite(u.ssY) ||
    u.ssY < 0 ||
    !isFiniteArray(u.meanX, k) ||
    !isFiniteArray(u.spXY, k) ||
    !Array.isArray(u.spXX) ||
    u.spXX.length !== k ||
    withBlocks !== (u.block !== undefined) ||
    (withBlocks && typeof u.block !== 'string')
  ) {
    describeBadUnit(u, k, withBlocks);
  }
  for (let r = 0; r < k; r++) if (!isFiniteArray(u.spXX[r], k)) fail(`unit ${u.unit}: spXX row ${r + 1} must be an array of ${k} finite numbers`);
}

function describeBadUnit(u: UnitMoments, k: number, withBlocks: boolean): never {
  const name = `unit ${u.unit}`;
  if (u.arm !== 0 && u.arm !== 1) fail(`${name}: arm must be 0 or 1 (got ${String(u.arm)})`);
  if (typeof u.n !== 'number' || !Number.isInteger(u.n) || u.n < 1) fail(`${name}: n must be a whole number >= 1 (got ${String(u.n)})`);
  if (typeof u.meanY !== 'number' || !Number.isFinite(u.meanY)) fail(`${name}: meanY is not a finite number (${String(u.meanY)})`);
  if (typeof u.ssY !== 'number' || !Number.isFinite(u.ssY) || u.ssY < 0) fail(`${name}: ssY must be a finite number >= 0 (got ${String(u.ssY)})`);
  if (!isFiniteArray(u.meanX, k)) fail(`${name}: meanX must be an array of ${k} finite numbers`);
  if (!isFiniteArray(u.spXY, k)) fail(`${name}: spXY must be an array of ${k} finite numbers`);
  if (!Array.isArray(u.spXX) || u.spXX.length !== k) fail(`${name}: spXX must be a ${k} × ${k} array`);
  if (withBlocks !== (u.block !== undefined)) fail(`${name}: either every unit has a block or none has`);
  fail(`${name}: block must be a string label`);
}

/** Cholesky A = LL' of the leading m × m part of a row-major `stride`-wide matrix; returns the pivot index that failed, or −1. */
function cholesky(a: Float64Array, stride: number, m: number, out: Float64Array, tol: number): number {
  for (let j = 0; j < m; j++) {
    let d = a[j * stride + j];
    for (let c = 0; c < j; c++) d -= out[j * m + c] * out[j * m + c];
    if (!(d > tol * a[j * stride + j]) || !(d > 0)) return j;
    const ljj = Math.sqrt(d);
    out[j * m + j] = ljj;
    for (let i = j + 1; i < m; i++) {
      let s = a[i * stride + j];
      for (let c = 0; c < j; c++) s -= out[i * m + c] * out[j * m + c];
      out[i * m + j] = s / ljj;
    }
  }
  return -1;
}

function prepare(units: readonly UnitMoments[]): Prepared & { names: string[]; blockLabels: string[]; units: [number, number]; students: [number, number]; pooledSs: number } {
  if (!Array.isArray(units)) fail('units must be an array of per-unit moments');
  if (units.length === 0) fail('no units');
  const first = units[0];
  if (first === null || typeof first !== 'object' || !Array.isArray(first.meanX)) fail('unit 0 has no meanX array');
  const k = first.meanX.length;
  const withBlocks = first.block !== undefined;

  // Pass 1: validate; counts; sums about the first unit's means (so scores far from zero keep their digits);
  // within-unit sums, which do not depend on τ²/σ².
  const unitsPerArm: [number, number] = [0, 0];
  const studentsPerArm: [number, number] = [0, 0];
  const blockSet = new Set<string>();
  const shiftY = first.meanY;
  const shiftX = Float64Array.from(first.meanX);
  const dyArm = [0, 0];
  const dx = new Float64Array(k);
  const wXX = new Float64Array(k * k);
  const wXY = new Float64Array(k);
  let wYY = 0;
  let maxN = 0;
  let lastBlock: string | undefined;
  for (let i = 0; i < units.length; i++) {
    const u = units[i];
    checkUnit(u, i, k, withBlocks);
    if (withBlocks && u.block !== lastBlock) {
      lastBlock = u.block as string;
      blockSet.add(lastBlock);
    }
    const n = u.n;
    unitsPerArm[u.arm]++;
    studentsPerArm[u.arm] += n;
    if (n > maxN) maxN = n;
    dyArm[u.arm] += n * (u.meanY - shiftY);
    wYY += u.ssY;
    for (let c = 0; c < k; c++) {
      dx[c] += n * (u.meanX[c] - shiftX[c]);
      wXY[c] += u.spXY[c];
      const row = u.spXX[c];
      for (let d = 0; d < k; d++) wXX[c * k + d] += row[d];
    }
  }
  if (unitsPerArm[1] < 2 || unitsPerArm[0] < 2) {
    fail(`each arm needs at least two units (intervention ${unitsPerArm[1]}, comparison ${unitsPerArm[0]})`);
  }
  const N = studentsPerArm[0] + studentsPerArm[1];
  const blockLabels = [...blockSet].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  const B = Math.max(1, blockLabels.length);
  const blockIndex = new Map(blockLabels.map((b, i) => [b, i]));
  const armCol = B;
  const p = B + 1 + k;
  if (N - p < 1) fail(`${N} students cannot support ${p} fixed effects (intercept, ${B - 1} block indicators, arm, ${k} covariates)`);
  const grandY = shiftY + (dyArm[0] + dyArm[1]) / N;
  const grandX = shiftX.map((v, c) => v + dx[c] / N);
  // Arm means relative to the grand mean, for the unadjusted pooled SD of g.
  const armOffset = [0, 1].map((a) => shiftY + dyArm[a] / studentsPerArm[a] - grandY);

  // Pass 2: group units that share block, arm and size: their weights n/(1 + nλ) are equal, so each λ costs
  // O(groups · k²) and never touches the units again. z = (covariate means, outcome mean) about the grand means.
  const z = k + 1;
  const groupOf = new Map<number, number>();
  const count: number[] = [];
  const size: number[] = [];
  const gBlockList: number[] = [];
  const gArmList: number[] = [];
  const sumZ: number[] = [];
  const sumZZ: number[] = [];
  const zj = new Float64Array(z);
  let b = 0;
  lastBlock = undefined;
  for (const u of units) {
    // Units usually arrive grouped by block: look the label up only when it changes.
    if (withBlocks && u.block !== lastBlock) {
      lastBlock = u.block as string;
      b = blockIndex.get(lastBlock) as number;
    }
    const key = (b * 2 + u.arm) * (maxN + 1) + u.n;
    let g = groupOf.get(key);
    if (g === undefined) {
      g = count.length;
      groupOf.set(key, g);
      count.push(0);
      size.push(u.n);
      gBlockList.push(b);
      gArmList.push(u.arm);
      for (let c = 0; c < z; c++) sumZ.push(0);
      for (let c = 0; c < z * z; c++) sumZZ.push(0);
    }
    count[g]++;
    for (let c = 0; c < k; c++) zj[c] = u.meanX[c] - grandX[c];
    zj[k] = u.meanY - grandY;
    const o = g * z;
    const oo = g * z * z;
    for (let c = 0; c < z; c++) {
      sumZ[o + c] += zj[c];
      for (let d = 0; d < z; d++) sumZZ[oo + c * z + d] += zj[c] * zj[d];
    }
  }
  const groups = count.length;

  // Total sums of squares about the grand means (parallel-axis rule: within + Σ n_j (mean_j − grand)²) set the
  // scales; the within-arm SS of the outcome (about each arm's mean) gives the unadjusted pooled SD for g.
  let ssY = wYY;
  let pooledSs = wYY;
  const ssX = new Float64Array(k);
  for (let c = 0; c < k; c++) ssX[c] = wXX[c * k + c];
  for (let g = 0; g < groups; g++) {
    const oo = g * z * z;
    const n = size[g];
    ssY += n * sumZZ[oo + k * z + k];
    const off = armOffset[gArmList[g]];
    pooledSs += n * (sumZZ[oo + k * z + k] - 2 * off * sumZ[g * z + k] + count[g] * off * off);
    for (let c = 0; c < k; c++) ssX[c] += n * sumZZ[oo + c * z + c];
  }
  if (!(ssY > 0)) fail('the outcome is the same for every student');
  const sy = Math.sqrt(ssY / N);
  const sx = new Float64Array(k);
  for (let c = 0; c < k; c++) {
    if (!(ssX[c] > 0)) fail(`covariate ${c + 1} is the same for every student`);
    sx[c] = Math.sqrt(ssX[c] / N);
  }
  // Scale everything to unit total variance (the REML problem is then well conditioned whatever the score scale).
  const scale = Float64Array.from({ length: z }, (_, c) => (c < k ? sx[c] : sy));
  for (let g = 0; g < groups; g++) {
    for (let c = 0; c < z; c++) {
      sumZ[g * z + c] /= scale[c];
      for (let d = 0; d < z; d++) sumZZ[g * z * z + c * z + d] /= scale[c] * scale[d];
    }
  }
  wYY /= sy * sy;
  for (let c = 0; c < k; c++) {
    wXY[c] /= sx[c] * sy;
    for (let d = 0; d < k; d++) wXX[c * k + d] /= sx[c] * sx[d];
  }

  const names = ['the intercept', ...blockLabels.slice(1).map((b) => `block ${b}`), 'the arm', ...Array.from({ length: k }, (_, c) => `covariate ${c + 1}`)];
  return {
    N,
    p,
    armCol,
    k,
    groups,
    gCount: Float64Array.from(count),
    gN: Float64Array.from(size),
    gBlock: Int32Array.from(gBlockList),
    gArm: Uint8Array.from(gArmList),
    gSumZ: Float64Array.from(sumZ),
    gSumZZ: Float64Array.from(sumZZ),
    wXX,
    wXY,
    wYY,
    sy,
    sx,
    names,
    blockLabels,
    units: unitsPerArm,
    students: studentsPerArm,
    pooledSs,
  };
}

/**
 * Σ_j w_j^power · [x̄_j; ȳ_j][x̄_j; ȳ_j]' over units, w_j = n_j/(1 + n_jλ), as a (p + 1)² row-major matrix (the outcome
 * last). With `withinAdded`, the within-unit sums are added, which gives the augmented [X'H⁻¹X, X'H⁻¹y; ·, y'H⁻¹y].
 */
function assemble(P: Prepared, lambda: number, power: number, withinAdded: boolean): Float64Array {
  const { p, k, armCol } = P;
  const m = p + 1;
  const z = k + 1;
  const zStart = armCol + 1;
  const M = new Float64Array(m * m);
  const U = [0, 0, 0];
  for (let g = 0; g < P.groups; g++) {
    const n = P.gN[g];
    const w = n / (1 + n * lambda);
    const wt = power === 1 ? w : power === 2 ? w * w : w * w * w;
    const c = P.gCount[g] * wt;
    let nu = 0;
    U[nu++] = 0;
    if (P.gBlock[g] > 0) U[nu++] = P.gBlock[g];
    if (P.gArm[g] === 1) U[nu++] = armCol;
    const o = g * z;
    const oo = g * z * z;
    for (let a = 0; a < nu; a++) {
      const i = U[a];
      for (let b = 0; b < nu; b++) M[i * m + U[b]] += c;
      for (let l = 0; l < z; l++) {
        const v = wt * P.gSumZ[o + l];
        M[i * m + zStart + l] += v;
        M[(zStart + l) * m + i] += v;
      }
    }
    for (let l = 0; l < z; l++) {
      const row = (zStart + l) * m + zStart;
      for (let q = 0; q < z; q++) M[row + q] += wt * P.gSumZZ[oo + l * z + q];
    }
  }
  if (withinAdded) {
    for (let c = 0; c < k; c++) {
      for (let d = 0; d < k; d++) M[(zStart + c) * m + zStart + d] += P.wXX[c * k + d];
      M[(zStart + c) * m + p] += P.wXY[c];
      M[p * m + zStart + c] += P.wXY[c];
    }
    M[p * m + p] += P.wYY;
  }
  return M;
}

/** Profiled REML deviance at λ = τ²/σ²: (N − p)[1 + log(2π R/(N − p))] + Σ log(1 + n_jλ) + log|X'H⁻¹X| (Bates et al. 2015, eq. 42). */
function fitAt(P: Prepared, lambda: number): Fit {
  const { p, N } = P;
  const m = p + 1;
  const M = assemble(P, lambda, 1, true);
  const L = new Float64Array(p * p);
  const bad = cholesky(M, m, p, L, 1e-13);
  if (bad >= 0) fail(`the fixed-effects matrix became singular at τ²/σ² = ${lambda} (column ${bad + 1}); the model cannot be fitted`);
  // β = A⁻¹b by forward and back substitution; R = q − b'β.
  const yv = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let s = M[i * m + p];
    for (let c = 0; c < i; c++) s -= L[i * p + c] * yv[c];
    yv[i] = s / L[i * p + i];
  }
  let rss = M[p * m + p];
  for (let i = 0; i < p; i++) rss -= yv[i] * yv[i];
  const beta = new Float64Array(p);
  for (let i = p - 1; i >= 0; i--) {
    let s = yv[i];
    for (let c = i + 1; c < p; c++) s -= L[c * p + i] * beta[c];
    beta[i] = s / L[i * p + i];
  }
  if (!(rss > 0)) fail(`no residual variation is left at τ²/σ² = ${lambda}; the model cannot be fitted`);
  let logDet = 0;
  for (let i = 0; i < p; i++) logDet += 2 * Math.log(L[i * p + i]);
  let logDetH = 0;
  for (let g = 0; g < P.groups; g++) logDetH += P.gCount[g] * Math.log1p(P.gN[g] * lambda);
  const dfr = N - p;
  const deviance = dfr * (1 + Math.log((2 * Math.PI * rss) / dfr)) + logDetH + logDet;
  return { lambda, deviance, rss, beta, chol: L };
}

interface Derivatives {
  /** d deviance / dλ and d² deviance / dλ² (profiled). */
  d1: number;
  d2: number;
  /** A⁻¹ = (X'H⁻¹X)⁻¹. */
  ainv: Float64Array;
  /** B₂ = Σ w_j² x̄_j x̄_j' (A' = −B₂). */
  b2: Float64Array;
  /** G' and G'' for G = log|H| + log|A|; R' and R'' for the residual form R. */
  g1: number;
  g2: number;
  r1: number;
  r2: number;
}

/**
 * Analytic derivatives of the profiled deviance in λ. With w_j = n_j/(1 + n_jλ) (so w' = −w²), A' = −Σw²x̄x̄',
 * R' = −Σ w_j² e_j², R'' = 2Σ w_j³ e_j² − 2 s'A⁻¹s (e_j the unit-mean residual, s = Σ w_j² x̄_j e_j),
 * d log|A| = −tr(A⁻¹B₂), d² log|A| = 2 tr(A⁻¹B₃) − tr((A⁻¹B₂)²).
 */
function derivativesAt(P: Prepared, f: Fit): Derivatives {
  const { p, N } = P;
  const m = p + 1;
  const lambda = f.lambda;
  const S2 = assemble(P, lambda, 2, false);
  const S3 = assemble(P, lambda, 3, false);
  const v = new Float64Array(m);
  for (let i = 0; i < p; i++) v[i] = -f.beta[i];
  v[p] = 1;
  const quad = (S: Float64Array) => {
    let s = 0;
    for (let i = 0; i < m; i++) {
      let r = 0;
      for (let j = 0; j < m; j++) r += S[i * m + j] * v[j];
      s += v[i] * r;
    }
    return s;
  };
  const sv = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    let r = 0;
    for (let j = 0; j < m; j++) r += S2[i * m + j] * v[j];
    sv[i] = r;
  }
  const ainv = inverseFromCholesky(f.chol, p);
  const b2 = new Float64Array(p * p);
  for (let i = 0; i < p; i++) for (let j = 0; j < p; j++) b2[i * p + j] = S2[i * m + j];
  // T = A⁻¹B₂
  const T = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let c = 0; c < p; c++) {
      const a = ainv[i * p + c];
      if (a === 0) continue;
      for (let j = 0; j < p; j++) T[i * p + j] += a * b2[c * p + j];
    }
  }
  let trT = 0;
  let trT2 = 0;
  let trAB3 = 0;
  let sAs = 0;
  for (let i = 0; i < p; i++) {
    trT += T[i * p + i];
    for (let j = 0; j < p; j++) {
      trT2 += T[i * p + j] * T[j * p + i];
      trAB3 += ainv[i * p + j] * S3[j * m + i];
      sAs += sv[i] * ainv[i * p + j] * sv[j];
    }
  }
  let sw = 0;
  let sw2 = 0;
  for (let g = 0; g < P.groups; g++) {
    const w = P.gN[g] / (1 + P.gN[g] * lambda);
    sw += P.gCount[g] * w;
    sw2 += P.gCount[g] * w * w;
  }
  const r1 = -quad(S2);
  const r2 = 2 * quad(S3) - 2 * sAs;
  const g1 = sw - trT;
  const g2 = -sw2 + 2 * trAB3 - trT2;
  const dfr = N - p;
  const R = f.rss;
  return { d1: g1 + (dfr * r1) / R, d2: g2 + dfr * (r2 / R - (r1 / R) ** 2), ainv, b2, g1, g2, r1, r2 };
}

/** Brent's minimisation (golden section with parabolic steps) of f on [a, b] to tol·|x| + absTol (Brent 1973, ch. 5). */
function brentMin(f: (x: number) => number, a: number, b: number, tol: number, absTol: number, maxIter = 200): number {
  const golden = 0.3819660112501051;
  let x = a + golden * (b - a);
  let w = x;
  let v = x;
  let fx = f(x);
  let fw = fx;
  let fv = fx;
  let d = 0;
  let e = 0;
  for (let it = 0; it < maxIter; it++) {
    const xm = 0.5 * (a + b);
    const tol1 = tol * Math.abs(x) + absTol;
    const tol2 = 2 * tol1;
    if (Math.abs(x - xm) <= tol2 - 0.5 * (b - a)) break;
    let useGolden = true;
    if (Math.abs(e) > tol1) {
      const r = (x - w) * (fx - fv);
      let q = (x - v) * (fx - fw);
      let pp = (x - v) * q - (x - w) * r;
      q = 2 * (q - r);
      if (q > 0) pp = -pp;
      q = Math.abs(q);
      const etemp = e;
      e = d;
      if (!(Math.abs(pp) >= Math.abs(0.5 * q * etemp) || pp <= q * (a - x) || pp >= q * (b - x))) {
        d = pp / q;
        const u = x + d;
        if (u - a < tol2 || b - u < tol2) d = xm - x >= 0 ? tol1 : -tol1;
        useGolden = false;
      }
    }
    if (useGolden) {
      e = x >= xm ? a - x : b - x;
      d = golden * e;
    }
    const u = Math.abs(d) >= tol1 ? x + d : x + (d >= 0 ? tol1 : -tol1);
    const fu = f(u);
    if (fu <= fx) {
      if (u >= x) a = x;
      else b = x;
      v = w;
      fv = fw;
      w = x;
      fw = fx;
      x = u;
      fx = fu;
    } else {
      if (u < x) a = u;
      else b = u;
      if (fu <= fw || w === x) {
        v = w;
        fv = fw;
        w = u;
        fw = fu;
      } else if (fu <= fv || v === x || v === w) {
        v = u;
        fv = fu;
      }
    }
  }
  return x;
}

/**
 * Maximises the restricted likelihood over λ = τ²/σ² ≥ 0: a grid in log λ (the data are scaled to unit variance),
 * Brent's method inside the best grid bracket, then safeguarded Newton steps on the analytic derivative until λ is
 * correct to the last digits. Returns the fit at the optimum (λ = 0 exactly when the maximum is on the boundary).
 */
function maximise(P: Prepared): { fit: Fit; der: Derivatives; boundary: boolean } {
  const grid: number[] = [0];
  for (let e = -24; e <= 24; e++) grid.push(10 ** (e / 4));
  const fits = grid.map((l) => fitAt(P, l));
  let best = 0;
  for (let i = 1; i < fits.length; i++) if (fits[i].deviance < fits[best].deviance) best = i;
  // Still falling at the top of the grid: extend it (τ² much larger than σ²), but not without limit.
  while (best === grid.length - 1) {
    const next = grid[grid.length - 1] * 10 ** 0.25;
    if (next > 1e12) {
      fail('the model did not converge: the restricted likelihood keeps rising as τ²/σ² grows past 1e12, so the students barely vary within units once the fixed effects are taken out (σ² → 0)');
    }
    grid.push(next);
    fits.push(fitAt(P, next));
    if (fits[fits.length - 1].deviance < fits[best].deviance) best = fits.length - 1;
  }
  if (best === 0) {
    const der0 = derivativesAt(P, fits[0]);
    if (der0.d1 >= 0) return { fit: fits[0], der: der0, boundary: true };
  }
  const lo = best === 0 ? 0 : grid[best - 1];
  const hi = grid[best + 1];
  const dev = (l: number) => fitAt(P, l).deviance;
  let lambda =
    lo === 0 ? brentMin(dev, 0, hi, 1e-9, 1e-9 * hi) : Math.exp(brentMin((s) => dev(Math.exp(s)), Math.log(lo), Math.log(hi), 1e-9, 1e-9));
  let fit = fitAt(P, lambda);
  let der = derivativesAt(P, fit);
  // Brent leaves λ near 1e-9 relative (the deviance is flat to rounding there); Newton on D'(λ) = 0 finishes the
  // digits, kept inside the bracket (bisection when a step would leave it).
  let a = lo;
  let b = hi;
  for (let it = 0; it < 60; it++) {
    if (der.d1 < 0) a = lambda;
    else b = lambda;
    let next = der.d2 > 0 ? lambda - der.d1 / der.d2 : 0.5 * (a + b);
    if (!(next > a && next < b)) next = 0.5 * (a + b);
    if (next === lambda) break;
    const trial = fitAt(P, next);
    const trialDer = derivativesAt(P, trial);
    // Once the derivative is at its rounding noise, further steps only wander.
    if (Math.abs(trialDer.d1) >= Math.abs(der.d1) && Math.abs(next - lambda) <= 1e-9 * lambda) break;
    const step = Math.abs(next - lambda);
    lambda = next;
    fit = trial;
    der = trialDer;
    if (step <= 4e-16 * lambda) break;
  }
  if (!(der.d2 > 0)) {
    fail(`the model did not converge: the restricted likelihood is not curved at its maximum (τ²/σ² = ${lambda.toPrecision(6)}), so τ² cannot be estimated from these units`);
  }
  if (lambda === 0) return { fit, der, boundary: true };
  return { fit, der, boundary: false };
}

/**
 * Two-level random-intercept model fitted by REML from per-unit moments: y_ij = x_ij'β + u_j + e_ij,
 * u_j ~ N(0, τ²), e_ij ~ N(0, σ²), x = (1, block indicators, arm, covariates); the arm effect is tested on
 * Satterthwaite df. Sources: Patterson & Thompson 1971 and Harville 1977 (REML); V_j⁻¹ = σ⁻²(I − γ_j 11'),
 * γ_j = τ²/(σ² + n_jτ²), so every term needs only per-unit sums (standards.md); profiled deviance as Bates et al.
 * 2015 (eq. 42); df = 2(c'Φc)²/(g'Ag) in (θ = τ/σ, σ) (Giesbrecht & Burns 1985; Kuznetsova et al. 2017), N − p at
 * τ² = 0; g = J·estimate/unadjusted pooled SD (WWC tools 2009 — V). Agrees with lme4 1.1-31 + lmerTest 3.1-3.
 * Each entry is one unit (labels only name units in messages: merge a unit's parts with `combineUnitMoments`).
 */
export function twoLevelFromMoments(units: readonly UnitMoments[], options?: TwoLevelOptions): TwoLevelResult {
  const o = checkOptions(options, OPTION_KEYS, FN);
  const alternative = readAlternative(o.alternative, FN);
  const confidence = readConfidence(o.confidence, FN);
  const correction = o.correction ?? 'exact';
  if (correction !== 'exact' && correction !== 'approximate') fail(`correction must be 'exact' or 'approximate' (got ${String(correction)})`);
  const P = prepare(units);
  const { N, p, armCol, k, sy, sx } = P;

  // Rank of the fixed effects, checked on X'X (λ = 0) column by column: intercept, blocks, arm, covariates.
  const m = p + 1;
  const xtx = assemble(P, 0, 1, true);
  const bad = cholesky(xtx, m, p, new Float64Array(p * p), 1e-10);
  if (bad >= 0) {
    if (bad === armCol) fail('the arm is collinear with the blocks: within every block all units are in one arm, so the arm effect cannot be separated from the blocks');
    if (bad > armCol) fail(`${P.names[bad]} is collinear with the arm, the blocks or the earlier covariates (for example constant within every block)`);
    fail(`${P.names[bad]} is collinear with the intercept and the other blocks`);
  }
  // σ² needs variation within units beyond what the covariates explain.
  const within = withinResidual(P);
  if (!(within > 1e-12 * P.wYY) || !(within > 0)) {
    fail(k > 0 ? 'no variation within units is left after the covariates, so σ² would be 0' : 'the outcome does not vary within any unit, so σ² would be 0');
  }

  const { fit, der, boundary } = maximise(P);
  const lambda = fit.lambda;
  const dfr = N - p;
  const s2 = fit.rss / dfr; // scaled σ²
  const ainv = der.ainv;
  const aArm = ainv[armCol * p + armCol];
  const estimate = fit.beta[armCol] * sy;
  const se = Math.sqrt(s2 * aArm) * sy;
  const df = boundary ? dfr : satterthwaite(ainv, der, armCol, p, lambda, s2, dfr);
  const t = estimate / se;
  const sigma2 = s2 * sy * sy;
  const tau2 = lambda * sigma2;
  let logSx = 0;
  for (let c = 0; c < k; c++) logSx += Math.log(sx[c]);
  const deviance = fit.deviance + dfr * 2 * Math.log(sy) + 2 * logSx;
  const pooledSd = Math.sqrt(P.pooledSs / (N - 2));
  const j = hedgesCorrection(N - 2, correction);
  return {
    estimate,
    se,
    df,
    t,
    p: tPValue(t, df, alternative),
    ci: tInterval(estimate, se, df, confidence, alternative),
    confidence,
    alternative,
    tau2,
    sigma2,
    icc: tau2 / (tau2 + sigma2),
    remlLogLik: -deviance / 2,
    boundary,
    n: N,
    students: { intervention: P.students[1], comparison: P.students[0] },
    units: { intervention: P.units[1], comparison: P.units[0] },
    blocks: P.blockLabels.length,
    fixedEffects: p,
    covariateCoefficients: Array.from({ length: k }, (_, c) => {
      const col = armCol + 1 + c;
      return { estimate: (fit.beta[col] * sy) / sx[c], se: (Math.sqrt(s2 * ainv[col * p + col]) * sy) / sx[c] };
    }),
    g: (j * estimate) / pooledSd,
    gCorrection: j,
    pooledSd,
  };
}

/** Residual sum of squares of the within-unit regression of y on the covariates (scaled), skipping covariates without within variation. */
function withinResidual(P: Prepared): number {
  const { k } = P;
  if (k === 0) return P.wYY;
  const M = new Float64Array((k + 1) * (k + 1));
  for (let c = 0; c < k; c++) {
    for (let d = 0; d < k; d++) M[c * (k + 1) + d] = P.wXX[c * k + d];
    M[c * (k + 1) + k] = P.wXY[c];
    M[k * (k + 1) + c] = P.wXY[c];
  }
  M[k * (k + 1) + k] = P.wYY;
  // Pivot-skipping Gaussian elimination (symmetric): a covariate with no within variation left contributes nothing.
  const n = k + 1;
  for (let j = 0; j < k; j++) {
    const d = M[j * n + j];
    if (!(d > 1e-12 * (P.wXX[j * k + j] || 1))) continue;
    for (let i = j + 1; i < n; i++) {
      const f = M[i * n + j] / d;
      if (f === 0) continue;
      for (let c = j; c < n; c++) M[i * n + c] -= f * M[j * n + c];
    }
  }
  return M[k * n + k];
}

/**
 * Satterthwaite df for the arm coefficient as lmerTest computes it: variance parameters (θ = τ/σ, σ), Φ = σ²A⁻¹,
 * f = c'Φc, gradient g = (2θσ²·(A⁻¹B₂A⁻¹)_aa, 2σ·(A⁻¹)_aa), asymptotic covariance 2H⁻¹ of the REML deviance's
 * Hessian H in (θ, σ); ν = 2f²/(g'·2H⁻¹·g) (Giesbrecht & Burns 1985; Kuznetsova et al. 2017).
 */
function satterthwaite(ainv: Float64Array, der: Derivatives, a: number, p: number, lambda: number, s2: number, dfr: number): number {
  const theta = Math.sqrt(lambda);
  const sigma = Math.sqrt(s2);
  let aba = 0;
  for (let i = 0; i < p; i++) {
    const ai = ainv[a * p + i];
    if (ai === 0) continue;
    for (let j = 0; j < p; j++) aba += ai * der.b2[i * p + j] * ainv[j * p + a];
  }
  const f = s2 * ainv[a * p + a];
  const gTheta = 2 * theta * s2 * aba;
  const gSigma = 2 * sigma * ainv[a * p + a];
  // Hessian of D(θ, σ) = (N − p) log(2πσ²) + G(θ²) + R(θ²)/σ², with R = σ²(N − p) at the optimum.
  const hTT = 2 * (der.g1 + der.r1 / s2) + 4 * lambda * (der.g2 + der.r2 / s2);
  const hTS = (-4 * theta * der.r1) / (s2 * sigma);
  const hSS = (4 * dfr) / s2;
  const det = hTT * hSS - hTS * hTS;
  if (!(det > 0)) {
    fail(`the model did not converge: the information matrix of (τ, σ) is not positive definite at τ²/σ² = ${lambda.toPrecision(6)}, so the Satterthwaite df is undefined`);
  }
  // g'H⁻¹g
  const quad = (gTheta * gTheta * hSS - 2 * gTheta * gSigma * hTS + gSigma * gSigma * hTT) / det;
  return (f * f) / quad;
}

/**
 * The two-level model from student rows: computes each unit's moments (`unitMomentsFromRows`) and fits
 * `twoLevelFromMoments`, so both entry points give identical numbers. Same model and sources as `twoLevelFromMoments`.
 */
export function twoLevelFromRows(rows: ClusteredRows, options?: TwoLevelOptions): TwoLevelResult {
  if (rows === null || typeof rows !== 'object') fail('rows must be an object with y, arm and cluster arrays');
  for (const key of ['y', 'arm', 'cluster'] as const) {
    const v = rows[key];
    if (v === null || typeof v !== 'object' || typeof v.length !== 'number') fail(`rows.${key} must be an array`);
  }
  if (rows.block !== undefined && !Array.isArray(rows.block)) fail('rows.block must be an array of labels when given');
  const covariates: unknown = rows.covariates;
  if (covariates !== undefined && (!Array.isArray(covariates) || covariates.some((c) => c === null || typeof c !== 'object' || typeof c.length !== 'number'))) {
    fail('rows.covariates must be an array of number arrays (one per covariate)');
  }
  return twoLevelFromMoments(unitMomentsFromRows(rows), options);
}
