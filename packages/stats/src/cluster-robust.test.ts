import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectClose } from '../test/fixtures.js';
import { clusterRobustFromMoments, clusterRobustFromRows } from './cluster-robust.js';
import { studentTCdf, studentTSf } from './distributions.js';
import { StatsInputError } from './errors.js';
import { unitMomentsFromRows, type ClusteredRows, type UnitMoments } from './unit-moments.js';

interface Expected {
  estimate: number;
  se: number;
  t: number;
  df: number;
  p: number;
  ci: [number, number];
  olsSe: number;
  olsDf: number;
  n: number;
  unitsIntervention: number;
  unitsComparison: number;
  singularUnits: number;
}

interface FixtureCase {
  id: string;
  description: string;
  note: string | null;
  confidence: number;
  rows: { y: number[]; arm: number[]; cluster: string[]; block: string[] | null; covariates: number[][] | null };
  expected: Expected;
}

interface MpCase {
  id: string;
  estimate: number;
  se: number;
  df: number;
  olsSe: number;
  t: number;
  p: number;
  singularUnits: number;
}

/** Written by scripts/make-cluster-robust-fixtures.R (R 4.2.2, clubSandwich 0.5.8, jsonlite 1.8.4). */
const fixture: { versions: Record<string, string>; cases: FixtureCase[] } = JSON.parse(
  readFileSync(new URL('../test/fixtures/cluster-robust.json', import.meta.url), 'utf8'),
);
/** Written by scripts/check-cluster-robust-mp.py (mpmath 1.2.1, 50 digits, full N × N definitions). */
const highPrecision: { cases: MpCase[] } = JSON.parse(
  readFileSync(new URL('../test/fixtures/cluster-robust-mp.json', import.meta.url), 'utf8'),
);

function rowsOf(c: FixtureCase): ClusteredRows {
  return {
    y: c.rows.y,
    arm: c.rows.arm,
    cluster: c.rows.cluster,
    ...(c.rows.block ? { block: c.rows.block } : {}),
    ...(c.rows.covariates ? { covariates: c.rows.covariates } : {}),
  };
}

const byId = (id: string) => fixture.cases.find((c) => c.id === id) as FixtureCase;

/** clubSandwich 0.5.8 inverts X'X of the uncentred design, which loses digits when scores sit near 1e6 (see below). */
const R_LOSES_DIGITS = new Set(['offset-1e6']);

describe(`CR2 against R ${fixture.versions.R.split(' ')[2]} + clubSandwich ${fixture.versions.clubSandwich} (vcovCR type CR2, coef_test / conf_int Satterthwaite)`, () => {
  it('the fixture names the package versions it was made with', () => {
    expect(fixture.versions.clubSandwich).toBe('0.5.8');
    expect(fixture.versions.R).toMatch(/^R version 4\.2/);
  });

  for (const c of fixture.cases.filter((x) => !R_LOSES_DIGITS.has(x.id))) {
    it(`when ${c.description}, then estimate, SE, df, t, p and CI equal clubSandwich's (${c.id})`, () => {
      const r = clusterRobustFromRows(rowsOf(c), { confidence: c.confidence });
      const e = c.expected;
      // Observed agreement is 1e-12 or better; clubSandwich's own float64 eigen-decompositions limit it.
      expectClose(r.estimate, e.estimate, 1e-10, 0, 'estimate');
      expectClose(r.se, e.se, 1e-10, 0, 'se');
      expectClose(r.t, e.t, 1e-10, 0, 't');
      expectClose(r.df, e.df, 1e-10, 0, 'df');
      expectClose(r.p, e.p, 1e-9, 1e-15, 'p');
      expectClose(r.ci[0], e.ci[0], 1e-9, 1e-12, 'ci lower');
      expectClose(r.ci[1], e.ci[1], 1e-9, 1e-12, 'ci upper');
      // The ordinary SE: summary(lm) in the same script.
      expectClose(r.olsSe, e.olsSe, 1e-10, 0, 'ols se');
      expect(r.olsDf).toBe(e.olsDf);
      expect(r.n).toBe(e.n);
      expect(r.unitsIntervention).toBe(e.unitsIntervention);
      expect(r.unitsComparison).toBe(e.unitsComparison);
      // lm's residual df is n − p.
      expect(r.fixedEffects).toBe(e.n - e.olsDf);
      expect(r.blocks).toBe(c.rows.block ? new Set(c.rows.block).size : 0);
      // Units whose I − H_jj has an eigenvalue ≤ 1e-12 (the script counts them from the full matrices).
      expect(r.singularUnits).toBe(e.singularUnits);
      expect(r.confidence).toBe(c.confidence);
      expect(r.alternative).toBe('two-sided');
    });
  }

  it('when a block holds a single unit, its I − H_jj is singular and clubSandwich and the engine both use the generalised inverse square root', () => {
    for (const id of ['blocks-pretest', 'blocks-no-pretest', 'blocks-single-student-unit', 'binary-outcome']) {
      expect(byId(id).expected.singularUnits, id).toBe(1);
      expect(clusterRobustFromRows(rowsOf(byId(id))).singularUnits, id).toBe(1);
    }
  });
});

describe('CR2 against a 50-digit computation from the full N × N definitions (mpmath; scripts/check-cluster-robust-mp.py)', () => {
  for (const m of highPrecision.cases) {
    it(`${m.id}: estimate, SE, df and p equal the high-precision values`, () => {
      const r = clusterRobustFromRows(rowsOf(byId(m.id)));
      // Scores near 1e6 are stored to 1.2e-10 and their unit means to ~1e-9, so the estimate is held to 1e-9 of its SE.
      expectClose(r.estimate, m.estimate, 1e-10, 1e-9 * m.se, 'estimate');
      expectClose(r.se, m.se, 1e-10, 0, 'se');
      expectClose(r.df, m.df, 1e-10, 0, 'df');
      expectClose(r.p, m.p, 1e-9, 1e-15, 'p');
      expectClose(r.olsSe, m.olsSe, 1e-10, 0, 'ols se');
      expect(r.singularUnits).toBe(m.singularUnits);
    });
  }

  it('when scores and pretest are offset by 1e6, the engine keeps the centred answer and clubSandwich is the one that drifts', () => {
    // The offset data are the unbalanced-pretest data + 1e6 in y and the pretest: the answer is the same in exact
    // arithmetic. The 50-digit computation agrees with clubSandwich on the centred data (1e-12) and with the engine on
    // both; clubSandwich on the offset data is off by ~1e-5 in the SE and ~1e-4 in df (its uncentred X'X has condition
    // number 2.5e24).
    const mp = highPrecision.cases.find((m) => m.id === 'offset-1e6') as MpCase;
    const centred = byId('unbalanced-pretest').expected;
    const offsetR = byId('offset-1e6').expected;
    expectClose(mp.se, centred.se, 1e-12, 0, 'mp vs clubSandwich centred');
    expect(Math.abs(offsetR.se - mp.se) / mp.se).toBeGreaterThan(1e-6);
    const shifted = clusterRobustFromRows(rowsOf(byId('offset-1e6')));
    const plain = clusterRobustFromRows(rowsOf(byId('unbalanced-pretest')));
    expectClose(shifted.estimate, plain.estimate, 1e-9, 0, 'estimate');
    expectClose(shifted.se, plain.se, 1e-9, 0, 'se');
    expectClose(shifted.df, plain.df, 1e-9, 0, 'df');
    expectClose(shifted.olsSe, plain.olsSe, 1e-9, 0, 'ols se');
    // clubSandwich's estimate comes from lm's QR and is still right there.
    expectClose(shifted.estimate, offsetR.estimate, 1e-8, 0, 'estimate vs lm');
  });
});

// ---- An independent float64 implementation of the definitions on the full matrices (tests only) ----

function jacobiEigen(a: number[][]): { values: number[]; vectors: number[][] } {
  const n = a.length;
  const A = a.map((row) => row.slice());
  const V: number[][] = A.map((_, i) => A.map((__, j) => (i === j ? 1 : 0)));
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += A[i][j] ** 2;
    if (off < 1e-40) break;
    for (let p = 0; p < n - 1; p++) {
      for (let q = p + 1; q < n; q++) {
        if (A[p][q] === 0) continue;
        const theta = (A[q][q] - A[p][p]) / (2 * A[p][q]);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let r = 0; r < n; r++) {
          const [x, y] = [A[r][p], A[r][q]];
          A[r][p] = c * x - s * y;
          A[r][q] = s * x + c * y;
        }
        for (let r = 0; r < n; r++) {
          const [x, y] = [A[p][r], A[q][r]];
          A[p][r] = c * x - s * y;
          A[q][r] = s * x + c * y;
        }
        for (let r = 0; r < n; r++) {
          const [x, y] = [V[r][p], V[r][q]];
          V[r][p] = c * x - s * y;
          V[r][q] = s * x + c * y;
        }
      }
    }
  }
  return { values: A.map((row, i) => row[i]), vectors: V };
}

function invert(a: number[][]): number[][] {
  const n = a.length;
  const A = a.map((row, i) => [...row, ...row.map((_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(A[r][c]) > Math.abs(A[piv][c])) piv = r;
    [A[c], A[piv]] = [A[piv], A[c]];
    const d = A[c][c];
    for (let j = 0; j < 2 * n; j++) A[c][j] /= d;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = A[r][c];
      for (let j = 0; j < 2 * n; j++) A[r][j] -= f * A[c][j];
    }
  }
  return A.map((row) => row.slice(n));
}

const mul = (A: number[][], B: number[][]) => A.map((row) => B[0].map((_, j) => row.reduce((s, v, k) => s + v * B[k][j], 0)));
const tr = (A: number[][]) => A[0].map((_, j) => A.map((row) => row[j]));

/** V = Σ (c'MX_j'A_j e_j)², A_j by eigen-decomposition of I − X_j M X_j'; P_ij = g_i'g_j with g_j = (I − H)[:, j] A_j X_j M c. */
function denseCr2(rows: { y: number[]; arm: number[]; cluster: string[]; block?: string[]; covariates?: number[][] }) {
  const labels = rows.block ? [...new Set(rows.block)].sort() : [];
  const X = rows.y.map((_, i) => [
    1,
    rows.arm[i],
    ...labels.slice(1).map((l) => (rows.block?.[i] === l ? 1 : 0)),
    ...(rows.covariates ?? []).map((c) => c[i]),
  ]);
  const M = invert(mul(tr(X), X));
  const beta = mul(M, mul(tr(X), rows.y.map((v) => [v]))).map((r) => r[0]);
  const e = rows.y.map((v, i) => v - X[i].reduce((s, x, k) => s + x * beta[k], 0));
  const Mc = M.map((row) => [row[1]]);
  const members = new Map<string, number[]>();
  rows.cluster.forEach((u, i) => members.set(u, [...(members.get(u) ?? []), i]));
  let variance = 0;
  const G: number[][] = [];
  for (const idx of members.values()) {
    const Xj = idx.map((i) => X[i]);
    const H = mul(mul(Xj, M), tr(Xj));
    const { values, vectors } = jacobiEigen(H.map((row, a) => row.map((h, b) => (a === b ? 1 : 0) - h)));
    const f = values.map((v) => (v > 1e-12 ? 1 / Math.sqrt(v) : 0));
    const A = idx.map((_, a) => idx.map((__, b) => values.reduce((s, ___, t) => s + vectors[a][t] * f[t] * vectors[b][t], 0)));
    const aj = mul(A, mul(Xj, Mc)).map((r) => r[0]);
    variance += aj.reduce((s, v, r) => s + v * e[idx[r]], 0) ** 2;
    const Xa = mul(tr(Xj), aj.map((v) => [v]));
    const g = mul(X, mul(M, Xa)).map((r) => -r[0]);
    idx.forEach((i, r) => (g[i] += aj[r]));
    G.push(g);
  }
  let trace = 0;
  let squares = 0;
  for (let i = 0; i < G.length; i++) {
    for (let j = 0; j < G.length; j++) {
      const pij = G[i].reduce((s, v, r) => s + v * G[j][r], 0);
      if (i === j) trace += pij;
      squares += pij * pij;
    }
  }
  return { estimate: beta[1], se: Math.sqrt(variance), df: (trace * trace) / squares };
}

/** Park–Miller LCG → roughly normal values (sum of 4 uniforms), for invented data. */
function generator(seed: number) {
  let s = seed % 2147483646 || 1;
  const u = () => (s = (s * 48271) % 2147483647) / 2147483647;
  return { u, normal: () => (u() + u() + u() + u() - 2) * 1.7 };
}

function inventRows(seed: number) {
  const g = generator(seed);
  const J = 4 + Math.floor(g.u() * 9);
  const k = Math.floor(g.u() * 3);
  const blocks = g.u() < 0.5 ? 1 + Math.floor(g.u() * 3) : 0;
  const y: number[] = [];
  const arm: number[] = [];
  const cluster: string[] = [];
  const block: string[] = [];
  const covariates: number[][] = Array.from({ length: k }, () => []);
  for (let j = 0; j < J; j++) {
    const size = 1 + Math.floor(g.u() * 6);
    const a = j % 2;
    const effect = g.normal() * 2;
    const unitCovariate = g.normal();
    for (let i = 0; i < size; i++) {
      const xs = covariates.map((_, c) => (c === 1 && g.u() < 0.5 ? unitCovariate : g.normal() * 3 + unitCovariate));
      xs.forEach((x, c) => covariates[c].push(x));
      y.push(50 + a + effect + xs.reduce((s, x) => s + 0.5 * x, 0) + g.normal() * 4);
      arm.push(a);
      cluster.push(`c${j}`);
      // Blocks by pairs of units, so every block has both arms.
      block.push(`b${Math.floor(j / 2) % Math.max(blocks, 1)}`);
    }
  }
  return { y, arm, cluster, ...(blocks ? { block } : {}), ...(k ? { covariates } : {}) };
}

describe('CR2 from per-unit moments equals the definitions on the full matrices (independent float64 implementation above)', () => {
  it('for invented designs (4–12 units of 1–6 students, 0–3 blocks, 0–2 covariates, some constant within units)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 2 ** 31 - 2 }), (seed) => {
        const rows = inventRows(seed);
        const r = clusterRobustFromRows(rows);
        const d = denseCr2(rows);
        // Observed over 600 designs: estimate 4e-12, SE 4e-13, df 2e-13 relative.
        expectClose(r.estimate, d.estimate, 1e-9, 1e-12, 'estimate');
        expectClose(r.se, d.se, 1e-10, 0, 'se');
        expectClose(r.df, d.df, 1e-10, 0, 'df');
      }),
      { numRuns: 150 },
    );
  });
});

describe('entry points', () => {
  it('when given rows or the per-unit moments of the same rows, then every number is identical', () => {
    for (const c of fixture.cases) {
      const fromRows = clusterRobustFromRows(rowsOf(c));
      const fromMoments = clusterRobustFromMoments(unitMomentsFromRows(rowsOf(c)));
      expect(fromMoments).toEqual(fromRows);
    }
  });

  it('when the rows come in another order, then the result is the same to rounding', () => {
    const c = byId('blocks-pretest');
    const rows = rowsOf(c);
    const order = c.rows.y.map((_, i) => i).reverse();
    const pick = <T>(a: ArrayLike<T>) => order.map((i) => a[i]);
    const shuffled: ClusteredRows = {
      y: pick(rows.y),
      arm: pick(rows.arm),
      cluster: pick(rows.cluster),
      block: pick(rows.block as string[]),
      covariates: (rows.covariates ?? []).map(pick),
    };
    const a = clusterRobustFromRows(rows);
    const b = clusterRobustFromRows(shuffled);
    for (const key of ['estimate', 'se', 'df', 'p', 'olsSe'] as const) expectClose(b[key], a[key], 1e-12, 0, key);
  });

  it('when y is rescaled (by 1e-80 to 1e80), then the estimate and SEs scale with it and df and p do not change', () => {
    const c = byId('unbalanced-pretest');
    const rows = rowsOf(c);
    const base = clusterRobustFromRows(rows);
    for (const factor of [1e-80, 1e-6, 1e4, 1e80]) {
      const r = clusterRobustFromRows({ ...rows, y: (rows.y as number[]).map((v) => v * factor) });
      expectClose(r.estimate, base.estimate * factor, 1e-10, 0, 'estimate');
      expectClose(r.se, base.se * factor, 1e-10, 0, 'se');
      expectClose(r.df, base.df, 1e-10, 0, 'df');
      expectClose(r.p, base.p, 1e-10, 0, 'p');
    }
  });

  it('when the alternative is one-sided, then p is the matching tail of t on the Satterthwaite df and the CI has one infinite bound', () => {
    const rows = rowsOf(byId('many-small-units'));
    const two = clusterRobustFromRows(rows);
    const greater = clusterRobustFromRows(rows, { alternative: 'greater', confidence: 0.9 });
    const less = clusterRobustFromRows(rows, { alternative: 'less' });
    expect(greater.p).toBe(studentTSf(two.t, two.df));
    expect(less.p).toBe(studentTCdf(two.t, two.df));
    expectClose(greater.p + less.p, 1, 1e-14, 0, 'tails sum to 1');
    expect(greater.ci[1]).toBe(Infinity);
    expect(less.ci[0]).toBe(-Infinity);
    // A one-sided 90 % bound is the lower end of the two-sided 80 % interval.
    expectClose(greater.ci[0], clusterRobustFromRows(rows, { confidence: 0.8 }).ci[0], 1e-12, 0, 'bound');
  });
});

describe('refuses input it cannot analyse', () => {
  const base = rowsOf(byId('blocks-pretest'));
  const units = unitMomentsFromRows(base);
  const refuses = (f: () => unknown, message: RegExp) => {
    expect(f).toThrow(StatsInputError);
    expect(f).toThrow(message);
  };

  it('refuses fewer than two units in an arm', () => {
    const oneIntervention = units.filter((u) => u.arm === 0 || u.unit === units.find((v) => v.arm === 1)?.unit);
    refuses(() => clusterRobustFromMoments(oneIntervention), /at least two units in each arm \(intervention 1, comparison \d+\)/);
  });

  it('refuses collinear covariates', () => {
    const pre = base.covariates?.[0] as number[];
    refuses(
      () => clusterRobustFromRows({ ...base, covariates: [pre, pre.map((x) => 2 * x + 1)] }),
      /covariate 2 is collinear with the blocks, arm and earlier covariates/,
    );
  });

  it('refuses a covariate that is constant within blocks (collinear with the blocks)', () => {
    const blockIndex = (base.block as string[]).map((b) => Number(b.slice(1)));
    refuses(() => clusterRobustFromRows({ ...base, covariates: [blockIndex] }), /covariate 1 is collinear with the blocks/);
  });

  it('refuses an arm that is constant within every block', () => {
    refuses(
      () => clusterRobustFromRows({ ...base, block: (base.arm as number[]).map((a) => `arm${a}`) }),
      /arm is collinear with the blocks/,
    );
  });

  it('refuses y without residual variation', () => {
    refuses(() => clusterRobustFromRows({ ...base, y: (base.arm as number[]).map((a) => 10 + 3 * a) }), /no residual variation/);
    refuses(() => clusterRobustFromRows({ ...base, y: (base.arm as number[]).map(() => 4) }), /y has no variation/);
  });

  it('refuses non-finite values, in rows and in moments', () => {
    const y = (base.y as number[]).slice();
    y[5] = NaN;
    refuses(() => clusterRobustFromRows({ ...base, y }), /y has a non-finite value at row 5/);
    const bad: UnitMoments[] = units.map((u, j) => (j === 3 ? { ...u, spXY: [Infinity] } : u));
    refuses(() => clusterRobustFromMoments(bad), /unit 4 \(.+\): spXY\[0\] is not a finite number/);
  });

  it('refuses malformed moments and options', () => {
    refuses(() => clusterRobustFromMoments(units.map((u, j) => (j === 2 ? { ...u, n: 0 } : u))), /size 0/);
    refuses(() => clusterRobustFromMoments(units.map((u, j) => (j === 2 ? { ...u, meanX: [] } : u))), /must have 1 covariate mean/);
    refuses(() => clusterRobustFromMoments(units.map((u, j) => (j === 1 ? { ...u, block: undefined } : u))), /a block for every unit or for none/);
    refuses(() => clusterRobustFromMoments(units, { confidence: 1.5 } as never), /confidence/);
    refuses(() => clusterRobustFromMoments(units, { tails: 2 } as never), /unknown option "tails"/);
    refuses(() => clusterRobustFromMoments('units' as never), /units must be an array/);
  });
});
