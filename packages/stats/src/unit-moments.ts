import { StatsInputError } from './errors.js';

/**
 * What the analyses of a cluster-assigned study need from one assigned unit (classroom or school): its size, arm,
 * block, the mean of the outcome and of each covariate that varies within units, and the within-unit centred sums
 * of squares and cross-products. The random-intercept likelihood and the cluster-robust sandwich depend on the data
 * only through these (Σy = n·ȳ, Σy² = SSy + n·ȳ², and so on), and centred sums keep their digits when scores sit
 * far from zero, so the database sends one of these per unit and never the student rows.
 */
export interface UnitMoments {
  /** The unit's label (a classroom or school ID). */
  unit: string;
  /** 1 intervention, 0 comparison; constant within the unit. */
  arm: 0 | 1;
  /** The block of a blocked draw (the school), constant within the unit; absent when there are no blocks. */
  block?: string;
  n: number;
  meanY: number;
  /** Σ (y − ȳ)² within the unit. */
  ssY: number;
  /** Unit means of each within-unit covariate (empty without covariates). */
  meanX: number[];
  /** Σ (x_k − x̄_k)(y − ȳ) within the unit, one per covariate. */
  spXY: number[];
  /** Σ (x_k − x̄_k)(x_l − x̄_l) within the unit, a k × k symmetric matrix (row-major nested arrays). */
  spXX: number[][];
}

/** Student rows of a cluster-assigned study, one entry per student in every array. */
export interface ClusteredRows {
  y: ArrayLike<number>;
  /** 1 intervention, 0 comparison. */
  arm: ArrayLike<number>;
  cluster: readonly string[];
  block?: readonly string[];
  /** One array per covariate, one value per row. */
  covariates?: readonly ArrayLike<number>[];
}

/** Groups rows into per-unit moments (two passes per unit, so the centred sums are accurate), in order of first appearance. */
export function unitMomentsFromRows(rows: ClusteredRows): UnitMoments[] {
  const { y, arm, cluster, block } = rows;
  const covariates = rows.covariates ?? [];
  const n = y.length;
  if (arm.length !== n || cluster.length !== n || (block && block.length !== n) || covariates.some((c) => c.length !== n)) {
    throw new StatsInputError('y, arm, cluster, block and every covariate must have one value per row');
  }
  const rowsOf = new Map<string, number[]>();
  for (let i = 0; i < n; i++) {
    const label = cluster[i];
    if (typeof label !== 'string') throw new StatsInputError(`cluster has a non-string label at row ${i}`);
    if (!Number.isFinite(y[i])) throw new StatsInputError(`y has a non-finite value at row ${i}`);
    if (arm[i] !== 0 && arm[i] !== 1) throw new StatsInputError(`arm must be 0 or 1 (row ${i} has ${String(arm[i])})`);
    covariates.forEach((c, k) => {
      if (!Number.isFinite(c[i])) throw new StatsInputError(`covariate ${k + 1} has a non-finite value at row ${i}`);
    });
    let list = rowsOf.get(label);
    if (!list) rowsOf.set(label, (list = []));
    list.push(i);
  }
  const p = covariates.length;
  const units: UnitMoments[] = [];
  for (const [label, members] of rowsOf) {
    const first = members[0];
    const unitArm = arm[first] as 0 | 1;
    const unitBlock = block?.[first];
    for (const i of members) {
      if (arm[i] !== unitArm) throw new StatsInputError(`unit ${label} has rows in both arms; the arm must be constant within a unit`);
      if (block && block[i] !== unitBlock) throw new StatsInputError(`unit ${label} spans two blocks; the block must be constant within a unit`);
    }
    const m = members.length;
    // Means about the unit's first value, so scores far from zero (1e6 + a few points) keep their digits.
    let dy = 0;
    for (const i of members) dy += y[i] - y[first];
    const meanY = y[first] + dy / m;
    const meanX = covariates.map((c) => c[first] + members.reduce((s, i) => s + (c[i] - c[first]), 0) / m);
    let ssY = 0;
    const spXY = new Array<number>(p).fill(0);
    const spXX = Array.from({ length: p }, () => new Array<number>(p).fill(0));
    for (const i of members) {
      const dy = y[i] - meanY;
      ssY += dy * dy;
      for (let k = 0; k < p; k++) {
        const dk = covariates[k][i] - meanX[k];
        spXY[k] += dk * dy;
        for (let l = 0; l <= k; l++) spXX[k][l] += dk * (covariates[l][i] - meanX[l]);
      }
    }
    for (let k = 0; k < p; k++) for (let l = 0; l < k; l++) spXX[l][k] = spXX[k][l];
    units.push({ unit: label, arm: unitArm, ...(unitBlock === undefined ? {} : { block: unitBlock }), n: m, meanY, ssY, meanX, spXY, spXX });
  }
  return units;
}

/**
 * Combines several units of one arm (and one block) into one, e.g. a school's classrooms into the school, by the
 * parallel-axis rule: n = Σn_j, x̄ = Σn_j x̄_j / n, SS = Σ SS_j + Σ n_j (x̄_j − x̄)(ȳ_j − ȳ) for every sum of squares and
 * products (Chan, Golub & LeVeque 1979). The means are accumulated about the first unit's means, so scores far from zero
 * keep their digits.
 */
export function combineUnitMoments(units: readonly UnitMoments[], label: string): UnitMoments {
  if (!Array.isArray(units) || units.length === 0) throw new StatsInputError('combineUnitMoments: give at least one unit');
  if (typeof label !== 'string') throw new StatsInputError('combineUnitMoments: the combined unit needs a string label');
  const first = units[0];
  const p = first.meanX.length;
  for (const u of units) {
    if (u.arm !== first.arm) throw new StatsInputError(`combineUnitMoments: units ${first.unit} and ${u.unit} are in different arms`);
    if (u.block !== first.block) throw new StatsInputError(`combineUnitMoments: units ${first.unit} and ${u.unit} are in different blocks`);
    if (u.meanX.length !== p || u.spXY.length !== p || u.spXX.length !== p) {
      throw new StatsInputError(`combineUnitMoments: unit ${u.unit} has ${u.meanX.length} covariates, unit ${first.unit} has ${p}`);
    }
    if (!(Number.isInteger(u.n) && u.n >= 1)) throw new StatsInputError(`combineUnitMoments: unit ${u.unit} has n = ${String(u.n)}`);
  }
  let n = 0;
  let dy = 0;
  const dx = new Array<number>(p).fill(0);
  for (const u of units) {
    n += u.n;
    dy += u.n * (u.meanY - first.meanY);
    for (let k = 0; k < p; k++) dx[k] += u.n * (u.meanX[k] - first.meanX[k]);
  }
  const meanY = first.meanY + dy / n;
  const meanX = first.meanX.map((m: number, k: number) => m + dx[k] / n);
  let ssY = 0;
  const spXY = new Array<number>(p).fill(0);
  const spXX = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (const u of units) {
    const ey = u.meanY - meanY;
    ssY += u.ssY + u.n * ey * ey;
    for (let k = 0; k < p; k++) {
      const ek = u.meanX[k] - meanX[k];
      spXY[k] += u.spXY[k] + u.n * ek * ey;
      for (let l = 0; l < p; l++) spXX[k][l] += u.spXX[k][l] + u.n * ek * (u.meanX[l] - meanX[l]);
    }
  }
  return { unit: label, arm: first.arm, ...(first.block === undefined ? {} : { block: first.block }), n, meanY, ssY, meanX, spXY, spXX };
}
