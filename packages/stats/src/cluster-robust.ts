import { StatsInputError } from './errors.js';
import { inverseFromCholesky } from './linear-algebra.js';
import { checkOptions, readAlternative, readConfidence, type Alternative } from './input.js';
import { tInterval, tPValue } from './ttest.js';
import { unitMomentsFromRows, type ClusteredRows, type UnitMoments } from './unit-moments.js';

/** Options of the CR2 analysis: the alternative for intervention − comparison and the confidence level (default 0.95). */
export interface ClusterRobustOptions {
  alternative?: Alternative;
  confidence?: number;
}

/** CR2 inference for the arm coefficient (Bell & McCaffrey 2002; df of Pustejovsky & Tipton 2018), beside the ordinary SE. */
export interface ClusterRobustResult {
  /** Least-squares coefficient of the arm (intervention − comparison), adjusted for the blocks and covariates. */
  estimate: number;
  /** CR2 cluster-robust standard error of the estimate (Bell & McCaffrey 2002). */
  se: number;
  /** Satterthwaite degrees of freedom of Pustejovsky & Tipton (2018) under the identity working model. */
  df: number;
  t: number;
  p: number;
  /** Confidence interval for the arm coefficient; one-sided alternatives give an infinite bound. */
  ci: [number, number];
  confidence: number;
  alternative: Alternative;
  /** Students analysed. */
  n: number;
  /** Units (clusters) in the intervention arm. */
  unitsIntervention: number;
  /** Units (clusters) in the comparison arm. */
  unitsComparison: number;
  /** Number of blocks (0 without blocks). */
  blocks: number;
  /** Number of coefficients p = 2 + (blocks − 1) + covariates (2 + covariates without blocks). */
  fixedEffects: number;
  /** The ordinary least-squares standard error √(RSS/(n − p) · (X'X)⁻¹), for context: it ignores the clustering. */
  olsSe: number;
  /** Residual degrees of freedom n − p of the ordinary standard error. */
  olsDf: number;
  /**
   * Units whose I − H_jj is singular (e.g. the only unit of its block): their adjustment is the generalised inverse
   * square root, which gives weight 0 to the directions the fit reproduces exactly.
   */
  singularUnits: number;
}

const OPTION_KEYS = ['alternative', 'confidence'] as const;
const FN = 'clusterRobust';
/** Eigenvalues of I − H_jj at or below this count as zero, as clubSandwich's generalised matrix power does. */
const SINGULAR_EIGENVALUE = 1e-12;
/** A column whose part not explained by earlier columns has less than this share of its sum of squares is collinear. */
const COLLINEAR = 1e-10;

/**
 * Cluster-robust (CR2) inference for the arm in a cluster-assigned study, from per-unit moments only. Each entry is one
 * cluster (labels only name units in messages; `unitMomentsFromRows` and a SQL GROUP BY give one entry per unit).
 *
 * Regression: y = β₀ + β·arm + block indicators + covariates (student-level), fitted by least squares; the estimate is β.
 * V^CR2 = M Σ_j X_j'A_j e_j e_j'A_j X_j M with M = (X'X)⁻¹, A_j = (I − X_j M X_j')^(−1/2) (Bell & McCaffrey 2002, Survey
 * Methodology 28(2):169–181; generalised inverse square root when singular, as R's clubSandwich); df = (Σ_j P_jj)² /
 * Σ_ij P_ij², P_ij = a_i'(I − H)_ij a_j, a_j = A_j X_j M c (Pustejovsky & Tipton 2018, J. Bus. Econ. Stat. 36(4):672–683,
 * working model I). Each unit's rows are X_j = T_j L_j' with T_j = [1, within-unit centred covariates], so
 * T_j'T_j = diag(n_j, SPxx_j) and every term reduces to (k + 1) × (k + 1) algebra per unit: O(units · (k + 3)² + p³).
 */
export function clusterRobustFromMoments(units: readonly UnitMoments[], options?: ClusterRobustOptions): ClusterRobustResult {
  const o = checkOptions(options, OPTION_KEYS, FN);
  const alternative = readAlternative(o.alternative, FN);
  const confidence = readConfidence(o.confidence, FN);
  const d = readDesign(units);
  const fit = fitLeastSquares(d);
  const cr2 = cr2ForArm(d, fit);
  const { estimate, se, df } = cr2;
  const t = estimate / se;
  return {
    estimate,
    se,
    df,
    t,
    p: tPValue(t, df, alternative),
    ci: tInterval(estimate, se, df, confidence, alternative),
    confidence,
    alternative,
    n: d.N,
    unitsIntervention: d.unitsIntervention,
    unitsComparison: d.J - d.unitsIntervention,
    blocks: d.blockLabels.length,
    fixedEffects: d.p,
    olsSe: fit.olsSe,
    olsDf: fit.olsDf,
    singularUnits: cr2.singularUnits,
  };
}

/**
 * The same CR2 inference from student rows: rows are summarised per unit (`unitMomentsFromRows`) and passed to
 * `clusterRobustFromMoments`, so both entry points give the same numbers (Bell & McCaffrey 2002; Pustejovsky & Tipton 2018).
 */
export function clusterRobustFromRows(rows: ClusteredRows, options?: ClusterRobustOptions): ClusterRobustResult {
  if (rows === null || typeof rows !== 'object') throw new StatsInputError(`${FN}: rows must be an object with y, arm and cluster`);
  return clusterRobustFromMoments(unitMomentsFromRows(rows), options);
}

/** The units, validated, centred and scaled: y and each covariate to grand mean 0 and variance 1 per student. */
interface Design {
  J: number;
  N: number;
  k: number;
  /** Sorted block labels; empty without blocks (one intercept column instead). */
  blockLabels: string[];
  /** Number of intercept/block columns (1 without blocks). */
  B: number;
  p: number;
  unitsIntervention: number;
  n: Float64Array;
  arm: Uint8Array;
  block: Int32Array;
  meanY: Float64Array;
  ssY: Float64Array;
  /** J × k unit means of the scaled covariates. */
  meanX: Float64Array;
  /** J × k within-unit cross-products of covariates and y. */
  spXY: Float64Array;
  /** J × k × k within-unit cross-products of covariates. */
  spXX: Float64Array;
  /** Scale of y: estimate and SE are multiplied by it on the way out. */
  scaleY: number;
}

function readDesign(units: readonly UnitMoments[]): Design {
  if (!Array.isArray(units)) throw new StatsInputError(`${FN}: units must be an array of unit moments`);
  const J = units.length;
  if (J === 0) throw new StatsInputError(`${FN}: no units`);
  const first = units[0];
  if (first === null || typeof first !== 'object' || !Array.isArray(first.meanX)) {
    throw new StatsInputError(`${FN}: unit 1 is not a unit-moments object (meanX must be an array)`);
  }
  const k = first.meanX.length;
  const hasBlocks = first.block !== undefined;
  const blockIds = new Map<string, number>();
  // One pass over the unit objects copies them into flat arrays; the rest works on those.
  const n = new Float64Array(J);
  const arm = new Uint8Array(J);
  const block = new Int32Array(J);
  const meanY = new Float64Array(J);
  const ssY = new Float64Array(J);
  const meanX = new Float64Array(J * k);
  const spXY = new Float64Array(J * k);
  const spXX = new Float64Array(J * k * k);
  let N = 0;
  let unitsIntervention = 0;
  // Messages are built only on failure: this loop runs once per unit of a district.
  const where = (j: number) => {
    const u = units[j];
    return `unit ${j + 1}${u && typeof u.unit === 'string' ? ` (${u.unit})` : ''}`;
  };
  const finite = (value: unknown, j: number, label: string, a?: number, b?: number) => {
    if (typeof value === 'number' && Number.isFinite(value)) return;
    const index = a === undefined ? '' : b === undefined ? `[${a}]` : `[${a}][${b}]`;
    throw new StatsInputError(`${FN}: ${where(j)}: ${label}${index} is not a finite number (got ${String(value)})`);
  };
  for (let j = 0; j < J; j++) {
    const u = units[j];
    if (u === null || typeof u !== 'object') throw new StatsInputError(`${FN}: ${where(j)} is not a unit-moments object`);
    if (typeof u.unit !== 'string') throw new StatsInputError(`${FN}: ${where(j)} has no string label`);
    if (u.arm !== 0 && u.arm !== 1) throw new StatsInputError(`${FN}: ${where(j)} has arm ${String(u.arm)}; the arm must be 0 or 1`);
    if (!Number.isInteger(u.n) || u.n < 1) throw new StatsInputError(`${FN}: ${where(j)} has size ${String(u.n)}; it must be a whole number >= 1`);
    if ((u.block !== undefined) !== hasBlocks) throw new StatsInputError(`${FN}: give a block for every unit or for none (${where(j)} differs)`);
    if (hasBlocks && typeof u.block !== 'string') throw new StatsInputError(`${FN}: ${where(j)} has a non-string block`);
    finite(u.meanY, j, 'meanY');
    finite(u.ssY, j, 'ssY');
    if (u.ssY < 0) throw new StatsInputError(`${FN}: ${where(j)} has a negative ssY`);
    if (!Array.isArray(u.meanX) || u.meanX.length !== k || !Array.isArray(u.spXY) || u.spXY.length !== k || !Array.isArray(u.spXX) || u.spXX.length !== k) {
      throw new StatsInputError(`${FN}: ${where(j)} must have ${k} covariate mean(s), ${k} spXY and a ${k} × ${k} spXX like the first unit`);
    }
    for (let a = 0; a < k; a++) {
      finite((meanX[j * k + a] = u.meanX[a]), j, 'meanX', a);
      finite((spXY[j * k + a] = u.spXY[a]), j, 'spXY', a);
      const row = u.spXX[a];
      if (!Array.isArray(row) || row.length !== k) throw new StatsInputError(`${FN}: ${where(j)}: spXX must be a ${k} × ${k} matrix`);
      for (let b = 0; b < k; b++) finite((spXX[(j * k + a) * k + b] = row[b]), j, 'spXX', a, b);
    }
    n[j] = u.n;
    arm[j] = u.arm;
    meanY[j] = u.meanY;
    ssY[j] = u.ssY;
    N += u.n;
    unitsIntervention += u.arm;
    if (hasBlocks) {
      let id = blockIds.get(u.block as string);
      if (id === undefined) blockIds.set(u.block as string, (id = blockIds.size));
      block[j] = id;
    }
  }
  const unitsComparison = J - unitsIntervention;
  if (unitsIntervention < 2 || unitsComparison < 2) {
    throw new StatsInputError(
      `${FN}: needs at least two units in each arm (intervention ${unitsIntervention}, comparison ${unitsComparison})`,
    );
  }
  // Blocks are numbered in sorted label order, so the result never depends on the order of the units.
  const blockLabels = [...blockIds.keys()].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0));
  const sortedIndex = new Int32Array(blockLabels.length);
  blockLabels.forEach((label, i) => (sortedIndex[blockIds.get(label) as number] = i));
  for (let j = 0; j < J && hasBlocks; j++) block[j] = sortedIndex[block[j]];
  const B = hasBlocks ? blockLabels.length : 1;
  const p = B + 1 + k;
  if (N <= p) throw new StatsInputError(`${FN}: needs more students (${N}) than coefficients (${p})`);

  // Centre and scale y and the covariates (grand mean 0, total sum of squares N), so scores far from zero keep their digits.
  let grandY = 0;
  const grandX = new Float64Array(k);
  for (let j = 0; j < J; j++) {
    grandY += n[j] * meanY[j];
    for (let a = 0; a < k; a++) grandX[a] += n[j] * meanX[j * k + a];
  }
  grandY /= N;
  for (let a = 0; a < k; a++) grandX[a] /= N;
  let totalY = 0;
  const totalX = new Float64Array(k);
  for (let j = 0; j < J; j++) {
    const dy = meanY[j] - grandY;
    totalY += ssY[j] + n[j] * dy * dy;
    for (let a = 0; a < k; a++) {
      const dx = meanX[j * k + a] - grandX[a];
      totalX[a] += spXX[(j * k + a) * k + a] + n[j] * dx * dx;
    }
  }
  if (!(totalY > 0) || !Number.isFinite(totalY)) {
    throw new StatsInputError(`${FN}: y has no variation${Number.isFinite(totalY) ? '' : ' that can be squared without overflow'}`);
  }
  const scaleY = Math.sqrt(totalY / N);
  const scaleX = new Float64Array(k);
  for (let a = 0; a < k; a++) {
    if (!(totalX[a] > 0) || !Number.isFinite(totalX[a])) throw new StatsInputError(`${FN}: covariate ${a + 1} has no variation`);
    scaleX[a] = Math.sqrt(totalX[a] / N);
  }
  for (let j = 0; j < J; j++) {
    meanY[j] = (meanY[j] - grandY) / scaleY;
    ssY[j] = ssY[j] / scaleY / scaleY;
    for (let a = 0; a < k; a++) {
      meanX[j * k + a] = (meanX[j * k + a] - grandX[a]) / scaleX[a];
      spXY[j * k + a] = spXY[j * k + a] / scaleX[a] / scaleY;
      for (let b = 0; b < k; b++) spXX[(j * k + a) * k + b] = spXX[(j * k + a) * k + b] / scaleX[a] / scaleX[b];
    }
  }
  return { J, N, k, blockLabels, B, p, unitsIntervention, n, arm, block, meanY, ssY, meanX, spXY, spXX, scaleY };
}

interface LeastSquares {
  /** (X'X)⁻¹, p × p row-major, in the scaled parametrisation (block indicators, arm, covariates). */
  M: Float64Array;
  beta: Float64Array;
  olsSe: number;
  olsDf: number;
}

/**
 * Unit j's row of the design is z_j = (block indicator, arm, covariate means) plus the within-unit covariate deviations:
 * X'X = Σ n_j z_j z_j' + SPxx_j (covariate block), X'y = Σ n_j z_j ȳ_j + SPxy_j. The columns are one indicator per block
 * instead of an intercept and all but one: the same column space, so the arm coefficient and H are the same.
 */
function fitLeastSquares(d: Design): LeastSquares {
  const { J, k, B, p, n, meanY, ssY, spXY, spXX } = d;
  const xtx = new Float64Array(p * p);
  const xty = new Float64Array(p);
  const sup = new Int32Array(2 + k);
  const zv = new Float64Array(2 + k);
  for (let j = 0; j < J; j++) {
    const ns = support(d, j, sup, zv);
    const nj = n[j];
    for (let a = 0; a < ns; a++) {
      const ia = sup[a];
      xty[ia] += nj * zv[a] * meanY[j];
      for (let b = 0; b < ns; b++) xtx[ia * p + sup[b]] += nj * zv[a] * zv[b];
    }
    for (let a = 0; a < k; a++) {
      xty[B + 1 + a] += spXY[j * k + a];
      for (let b = 0; b < k; b++) xtx[(B + 1 + a) * p + B + 1 + b] += spXX[(j * k + a) * k + b];
    }
  }
  const M = inverseOfGram(xtx, p, (c) =>
    c < B
      ? `block ${d.blockLabels[c] ?? ''} has no students`
      : c === B
        ? 'the arm is collinear with the blocks: every block has units of one arm only'
        : `covariate ${c - B} is collinear with the ${d.blockLabels.length > 0 ? 'blocks, ' : ''}arm${c - B > 1 ? ' and earlier covariates' : ''}`,
  );
  const beta = new Float64Array(p);
  for (let a = 0; a < p; a++) {
    let s = 0;
    for (let b = 0; b < p; b++) s += M[a * p + b] * xty[b];
    beta[a] = s;
  }
  // RSS per unit: n_j (ȳ_j − z_j'β)² + within part SSy − 2β_x'SPxy + β_x'SPxx β_x.
  let rss = 0;
  let total = 0;
  for (let j = 0; j < J; j++) {
    const ns = support(d, j, sup, zv);
    let fitted = 0;
    for (let a = 0; a < ns; a++) fitted += zv[a] * beta[sup[a]];
    const dm = meanY[j] - fitted;
    let within = ssY[j];
    for (let a = 0; a < k; a++) {
      const ba = beta[B + 1 + a];
      within -= 2 * ba * spXY[j * k + a];
      for (let b = 0; b < k; b++) within += ba * spXX[(j * k + a) * k + b] * beta[B + 1 + b];
    }
    rss += n[j] * dm * dm + Math.max(0, within);
    total += ssY[j] + n[j] * meanY[j] * meanY[j];
  }
  if (!(rss > 1e-12 * total)) {
    throw new StatsInputError(`${FN}: no residual variation: the arm${d.blockLabels.length ? ', blocks' : ''}${k ? ' and covariates' : ''} fit y exactly`);
  }
  const olsDf = d.N - p;
  const olsSe = Math.sqrt((rss / olsDf) * M[B * p + B]) * d.scaleY;
  return { M, beta, olsSe, olsDf };
}

/** Indices and values of unit j's unit-level row z_j (block or intercept, arm when 1, covariate means); returns its length. */
function support(d: Design, j: number, sup: Int32Array, zv: Float64Array): number {
  const { k, B } = d;
  let ns = 0;
  sup[ns] = d.block[j];
  zv[ns++] = 1;
  if (d.arm[j] === 1) {
    sup[ns] = B;
    zv[ns++] = 1;
  }
  for (let a = 0; a < k; a++) {
    sup[ns] = B + 1 + a;
    zv[ns++] = d.meanX[j * k + a];
  }
  return ns;
}

/**
 * Inverse of a symmetric positive definite p × p matrix by Cholesky after scaling to unit diagonal; `collinear(c)` names
 * column c when its pivot shows it (nearly) a combination of earlier columns.
 */
function inverseOfGram(G: Float64Array, p: number, collinear: (c: number) => string): Float64Array {
  const scale = new Float64Array(p);
  for (let i = 0; i < p; i++) {
    const g = G[i * p + i];
    if (!(g > 0)) throw new StatsInputError(`${FN}: ${collinear(i)}`);
    scale[i] = 1 / Math.sqrt(g);
  }
  const L = new Float64Array(p * p);
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let s = G[i * p + j] * scale[i] * scale[j];
      for (let m = 0; m < j; m++) s -= L[i * p + m] * L[j * p + m];
      if (i === j) {
        if (!(s > COLLINEAR)) throw new StatsInputError(`${FN}: ${collinear(i)}`);
        L[i * p + i] = Math.sqrt(s);
      } else {
        L[i * p + j] = s / L[j * p + j];
      }
    }
  }
  // G⁻¹ = S L⁻ᵀ L⁻¹ S.
  const inv = inverseFromCholesky(L, p);
  for (let a = 0; a < p; a++) {
    for (let b = 0; b < p; b++) inv[a * p + b] = inv[a * p + b] * scale[a] * scale[b];
  }
  return inv;
}

/**
 * CR2 variance and Pustejovsky–Tipton df of the arm coefficient c'β (c the arm's unit vector).
 *
 * Per unit, with C = T'T = diag(n, SPxx), P = L'ML (L = [z, covariate selector]) and S = C^½ P C^½ = W Λ W', the
 * non-zero eigenvalues of H_jj are Λ and A_j = I + Q (F − I) Q' with Q = T C^{+½} W orthonormal and F = (I − Λ)^{−½}
 * (0 where I − Λ is singular). With u = W'C^½ L'Mc (so X_j M c = Q u) and g = F u:
 *   a_j = Q g,  a_j'e_j = g'W'C^{+½} T'e_j,  a_j'a_j = g'g,  X_j'a_j = L C^½ W g,
 *   P_jj = a_j'(I − H_jj)a_j = Σ u_i² over non-singular i,  P_ij = −(X_i'a_i)' M (X_j'a_j) for i ≠ j,
 * and Σ_{i≠j} P_ij² = tr((MΩ)²) − Σ_j (w_j'Mw_j)² with Ω = Σ_j w_j w_j', w_j = X_j'a_j.
 */
function cr2ForArm(d: Design, fit: LeastSquares): { estimate: number; se: number; df: number; singularUnits: number } {
  const { J, k, B, p, n, meanY, spXY, spXX } = d;
  const { M, beta } = fit;
  const K = k + 1;
  const armCol = B;
  const sup = new Int32Array(2 + k);
  const zv = new Float64Array(2 + k);
  const wv = new Float64Array(2 + k);
  const covWork = new Float64Array(k * k);
  const covVecs = new Float64Array(k * k);
  const covVals = new Float64Array(k);
  const Pm = new Float64Array(K * K);
  const Ch = new Float64Array(K * K);
  const Chi = new Float64Array(K * K);
  const tmp = new Float64Array(K * K);
  const S = new Float64Array(K * K);
  const W = new Float64Array(K * K);
  const lambda = new Float64Array(K);
  const h = new Float64Array(K);
  const y0 = new Float64Array(K);
  const g = new Float64Array(K);
  const Wg = new Float64Array(K);
  const Cm = new Float64Array(K);
  const r = new Float64Array(K);
  const Omega = new Float64Array(p * p);
  let variance = 0;
  let sumPjj = 0;
  let sumPjj2 = 0;
  let sumQ2 = 0;
  let singularUnits = 0;

  for (let j = 0; j < J; j++) {
    const ns = support(d, j, sup, zv);
    const nj = n[j];
    // Residual cross-products T'e: (n(ȳ − z'β), SPxy − SPxx β_x).
    let fitted = 0;
    for (let a = 0; a < ns; a++) fitted += zv[a] * beta[sup[a]];
    r[0] = nj * (meanY[j] - fitted);
    for (let a = 0; a < k; a++) {
      let s = spXY[j * k + a];
      for (let b = 0; b < k; b++) s -= spXX[(j * k + a) * k + b] * beta[B + 1 + b];
      r[1 + a] = s;
    }
    // P = L'ML and h = L'Mc (Mc is M's arm column).
    let p00 = 0;
    let h0 = 0;
    for (let a = 0; a < ns; a++) {
      const rowA = sup[a] * p;
      h0 += zv[a] * M[rowA + armCol];
      for (let b = 0; b < ns; b++) p00 += zv[a] * zv[b] * M[rowA + sup[b]];
    }
    Pm[0] = p00;
    h[0] = h0;
    for (let a = 0; a < k; a++) {
      const ca = B + 1 + a;
      let s = 0;
      for (let b = 0; b < ns; b++) s += zv[b] * M[sup[b] * p + ca];
      Pm[1 + a] = s;
      Pm[(1 + a) * K] = s;
      for (let b = 0; b < k; b++) Pm[(1 + a) * K + 1 + b] = M[ca * p + B + 1 + b];
      h[1 + a] = M[ca * p + armCol];
    }
    // C^½ and C^{+½}: √n for the unit-mean direction, SPxx^½ (generalised) for the within-unit directions; the blocks
    // between them stay 0.
    Ch[0] = Math.sqrt(nj);
    Chi[0] = 1 / Ch[0];
    if (k > 0) {
      for (let a = 0; a < k * k; a++) covWork[a] = spXX[j * k * k + a];
      symmetricEigen(covWork, k, covVecs, covVals);
      let top = nj;
      for (let a = 0; a < k; a++) top = Math.max(top, covVals[a]);
      const floor = 1e-14 * top;
      for (let a = 1; a < K; a++) {
        for (let b = 1; b < K; b++) {
          Ch[a * K + b] = 0;
          Chi[a * K + b] = 0;
        }
      }
      for (let e = 0; e < k; e++) {
        const v = covVals[e];
        if (!(v > floor)) continue;
        const sq = Math.sqrt(v);
        for (let a = 0; a < k; a++) {
          for (let b = 0; b < k; b++) {
            const vv = covVecs[a * k + e] * covVecs[b * k + e];
            Ch[(1 + a) * K + 1 + b] += vv * sq;
            Chi[(1 + a) * K + 1 + b] += vv / sq;
          }
        }
      }
    }
    // S = C^½ P C^½ and its eigen-decomposition.
    matMul(Ch, Pm, tmp, K);
    matMul(tmp, Ch, S, K);
    symmetricEigen(S, K, W, lambda);
    // u = W'C^½ h, g = F u; P_jj over non-singular directions.
    matVec(Ch, h, y0, K);
    let pjj = 0;
    let singular = false;
    for (let e = 0; e < K; e++) {
      let u = 0;
      for (let a = 0; a < K; a++) u += W[a * K + e] * y0[a];
      const mu = 1 - lambda[e];
      if (mu > SINGULAR_EIGENVALUE) {
        g[e] = u / Math.sqrt(mu);
        pjj += u * u;
      } else {
        g[e] = 0;
        singular = true;
      }
    }
    if (singular) singularUnits++;
    // Wg, then a_j'e_j = (C^{+½} W g)'T'e and C m = C^½ W g.
    for (let a = 0; a < K; a++) {
      let s = 0;
      for (let e = 0; e < K; e++) s += W[a * K + e] * g[e];
      Wg[a] = s;
    }
    let ae = 0;
    for (let a = 0; a < K; a++) {
      let s = 0;
      for (let b = 0; b < K; b++) s += Chi[a * K + b] * Wg[b];
      ae += s * r[a];
    }
    matVec(Ch, Wg, Cm, K);
    // w_j = X_j'a_j = z_j (C m)_0 + covariate part (C m)_x, on z_j's support (which holds every covariate column).
    for (let a = 0; a < ns; a++) wv[a] = zv[a] * Cm[0];
    for (let a = 0; a < k; a++) wv[ns - k + a] += Cm[1 + a];
    let q = 0;
    for (let a = 0; a < ns; a++) {
      const rowA = sup[a] * p;
      for (let b = 0; b < ns; b++) {
        q += wv[a] * wv[b] * M[rowA + sup[b]];
        Omega[rowA + sup[b]] += wv[a] * wv[b];
      }
    }
    variance += ae * ae;
    sumPjj += pjj;
    sumPjj2 += pjj * pjj;
    sumQ2 += q * q;
  }
  // tr((MΩ)²) = Σ_ab (MΩ)_ab (MΩ)_ba.
  const MO = new Float64Array(p * p);
  for (let a = 0; a < p; a++) {
    for (let c = 0; c < p; c++) {
      const mac = M[a * p + c];
      if (mac === 0) continue;
      for (let b = 0; b < p; b++) MO[a * p + b] += mac * Omega[c * p + b];
    }
  }
  let trace2 = 0;
  for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) trace2 += MO[a * p + b] * MO[b * p + a];
  const offDiagonal = Math.max(0, trace2 - sumQ2);
  const sumP2 = sumPjj2 + offDiagonal;
  if (!(variance > 0) || !(sumP2 > 0)) {
    throw new StatsInputError(`${FN}: no residual variation left to estimate a cluster-robust standard error from`);
  }
  return {
    estimate: beta[armCol] * d.scaleY,
    se: Math.sqrt(variance) * d.scaleY,
    df: (sumPjj * sumPjj) / sumP2,
    singularUnits,
  };
}

function matMul(A: Float64Array, Bm: Float64Array, out: Float64Array, K: number): void {
  for (let a = 0; a < K; a++) {
    for (let b = 0; b < K; b++) {
      let s = 0;
      for (let m = 0; m < K; m++) s += A[a * K + m] * Bm[m * K + b];
      out[a * K + b] = s;
    }
  }
}

function matVec(A: Float64Array, x: Float64Array, out: Float64Array, K: number): void {
  for (let a = 0; a < K; a++) {
    let s = 0;
    for (let b = 0; b < K; b++) s += A[a * K + b] * x[b];
    out[a] = s;
  }
}

/**
 * Cyclic Jacobi eigen-decomposition of a small symmetric K × K matrix (Golub & Van Loan 2013, Alg. 8.5.3): `a` is
 * overwritten, eigenvectors go to the columns of `vecs`, eigenvalues to `vals`. Accurate to a few ulps of ‖a‖.
 */
function symmetricEigen(a: Float64Array, K: number, vecs: Float64Array, vals: Float64Array): void {
  if (K === 1) {
    vals[0] = a[0];
    vecs[0] = 1;
    return;
  }
  if (K === 2) {
    // One rotation diagonalises a 2 × 2 matrix (the usual case: one covariate, the pretest).
    const app = a[0];
    const aqq = a[3];
    const apq = 0.5 * (a[1] + a[2]);
    let t = 0;
    if (apq !== 0) {
      const theta = (aqq - app) / (2 * apq);
      t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
    }
    const c = 1 / Math.sqrt(t * t + 1);
    const s = t * c;
    vals[0] = app - t * apq;
    vals[1] = aqq + t * apq;
    vecs[0] = c;
    vecs[1] = s;
    vecs[2] = -s;
    vecs[3] = c;
    return;
  }
  for (let i = 0; i < K * K; i++) vecs[i] = 0;
  for (let i = 0; i < K; i++) vecs[i * K + i] = 1;
  for (let i = 0; i < K; i++) {
    for (let j = 0; j < i; j++) {
      const s = 0.5 * (a[i * K + j] + a[j * K + i]);
      a[i * K + j] = s;
      a[j * K + i] = s;
    }
  }
  for (let sweep = 0; sweep < 60; sweep++) {
    let off = 0;
    let diag = 0;
    for (let i = 0; i < K; i++) {
      diag += a[i * K + i] * a[i * K + i];
      for (let j = i + 1; j < K; j++) off += a[i * K + j] * a[i * K + j];
    }
    if (off === 0 || off <= 1e-36 * diag) break;
    for (let pI = 0; pI < K - 1; pI++) {
      for (let qI = pI + 1; qI < K; qI++) {
        const apq = a[pI * K + qI];
        if (apq === 0) continue;
        const theta = (a[qI * K + qI] - a[pI * K + pI]) / (2 * apq);
        const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let r = 0; r < K; r++) {
          const arp = a[r * K + pI];
          const arq = a[r * K + qI];
          a[r * K + pI] = c * arp - s * arq;
          a[r * K + qI] = s * arp + c * arq;
        }
        for (let r = 0; r < K; r++) {
          const apr = a[pI * K + r];
          const aqr = a[qI * K + r];
          a[pI * K + r] = c * apr - s * aqr;
          a[qI * K + r] = s * apr + c * aqr;
        }
        a[pI * K + qI] = 0;
        a[qI * K + pI] = 0;
        for (let r = 0; r < K; r++) {
          const vrp = vecs[r * K + pI];
          const vrq = vecs[r * K + qI];
          vecs[r * K + pI] = c * vrp - s * vrq;
          vecs[r * K + qI] = s * vrp + c * vrq;
        }
      }
    }
  }
  for (let i = 0; i < K; i++) vals[i] = a[i * K + i];
}
