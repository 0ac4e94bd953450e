import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { expectClose } from '../test/fixtures.js';
import { hedgesCorrection, hedgesG } from './effect-size.js';
import { StatsInputError } from './errors.js';
import { ols } from './regression.js';
import { studentT } from './ttest.js';
import { twoLevelFromMoments, twoLevelFromRows, type TwoLevelResult } from './two-level.js';
import { combineUnitMoments, unitMomentsFromRows, type ClusteredRows } from './unit-moments.js';

/** One invented data set with lme4's fit and the 50-digit solution (see scripts/make-two-level-fixtures.R). */
interface TwoLevelCase {
  id: string;
  description: string;
  y: number[];
  arm: number[];
  unit: number[];
  block?: string[];
  covariateNames: string[];
  covariates: number[][];
  lme4: {
    estimate: number;
    se: number;
    df: number;
    t: number;
    p: number;
    pGreater: number;
    ci95: [number, number];
    ci90: [number, number];
    tau2: number;
    sigma2: number;
    remlLogLik: number;
    singular: boolean;
    fixedEffects: number;
    n: number;
    covariateCoefficients: { name: string; estimate: number; se: number }[];
  };
  highPrecision: {
    boundary: boolean;
    localOptimumAtZero: boolean;
    estimate: number;
    se: number;
    df: number;
    t: number;
    p: number;
    ci95: [number, number];
    tau2: number;
    sigma2: number;
    remlLogLik: number;
    covariateCoefficients: { name: string; estimate: number; se: number }[];
  };
}

const fixture: { versions: Record<string, string>; cases: TwoLevelCase[] } = JSON.parse(
  readFileSync(new URL('../test/fixtures/two-level.json', import.meta.url), 'utf8'),
);

function rowsOf(c: TwoLevelCase): ClusteredRows {
  return { y: c.y, arm: c.arm, cluster: c.unit.map(String), ...(c.block ? { block: c.block } : {}), covariates: c.covariates };
}

/** Invented rows from a Park–Miller generator (deterministic): units alternate arms, optional blocks and pretest. */
function invented(opts: { units: number; size: (j: number) => number; tau: number; sigma: number; blocks?: number; seed?: number }): ClusteredRows {
  let s = opts.seed ?? 20260101;
  const normal = () => {
    let t = 0;
    for (let i = 0; i < 12; i++) {
      s = (s * 48271) % 2147483647;
      t += s / 2147483647;
    }
    return t - 6;
  };
  const y: number[] = [];
  const arm: number[] = [];
  const cluster: string[] = [];
  const block: string[] = [];
  const pretest: number[] = [];
  for (let j = 0; j < opts.units; j++) {
    const u = opts.tau * normal();
    const b = opts.blocks ? Math.floor(j / 2) % opts.blocks : 0;
    for (let i = 0; i < opts.size(j); i++) {
      const x = 10 * normal();
      pretest.push(500 + x);
      y.push(200 + 2 * (j % 2) + 0.6 * x + u + b + opts.sigma * normal());
      arm.push(j % 2);
      cluster.push(`room-${j}`);
      block.push(`school-${String(b).padStart(2, '0')}`);
    }
  }
  return { y, arm, cluster, covariates: [pretest], ...(opts.blocks ? { block } : {}) };
}

describe('twoLevelFromRows against lme4 1.1-31 + lmerTest 3.1-3 (R 4.2.2, Debian; bobyqa, rhoend 1e-12)', () => {
  it('the fixture was written by the package versions named here', () => {
    expect(fixture.versions.R).toMatch(/^R version 4\.2\.2/);
    expect(fixture.versions.lme4).toBe('1.1.31');
    expect(fixture.versions.lmerTest).toBe('3.1.3');
    expect(fixture.versions.highPrecision).toMatch(/^mpmath 1\.2\.1 at 50 digits/);
  });

  for (const c of fixture.cases) {
    it(`${c.id}: ${c.description}`, () => {
      const r = twoLevelFromRows(rowsOf(c));
      const R = c.lme4;
      // Tolerances of the task: estimate and SE to 1e-6 relative; df, p, τ², σ² to 1e-5 (lmerTest's numerical derivatives).
      expectClose(r.estimate, R.estimate, 1e-6, 0, 'estimate');
      expectClose(r.se, R.se, 1e-6, 0, 'se');
      expectClose(r.t, R.t, 1e-6, 0, 't');
      expectClose(r.df, R.df, 1e-5, 0, 'Satterthwaite df');
      expectClose(r.p, R.p, 1e-5, 0, 'p');
      expectClose(r.ci[0], R.ci95[0], 1e-6, 1e-9, 'CI lower');
      expectClose(r.ci[1], R.ci95[1], 1e-6, 1e-9, 'CI upper');
      expectClose(r.sigma2, R.sigma2, 1e-5, 0, 'σ²');
      // At the boundary lme4 returns θ = 0 exactly; elsewhere τ² to 1e-5 relative.
      expectClose(r.tau2, R.tau2, 1e-5, 1e-12 * R.sigma2, 'τ²');
      expect(r.boundary).toBe(R.singular);
      // The restricted log-likelihood with its constants (lme4's logLik(REML = TRUE)); second order in lme4's θ error.
      expectClose(r.remlLogLik, R.remlLogLik, 1e-9, 0, 'REML log-likelihood');
      expect(r.n).toBe(R.n);
      expect(r.fixedEffects).toBe(R.fixedEffects);
      R.covariateCoefficients.forEach((cc, k) => {
        expectClose(r.covariateCoefficients[k].estimate, cc.estimate, 1e-6, 0, `${cc.name} estimate`);
        expectClose(r.covariateCoefficients[k].se, cc.se, 1e-6, 0, `${cc.name} se`);
      });
      expectClose(r.icc, R.tau2 / (R.tau2 + R.sigma2), 1e-5, 1e-12, 'ICC');
    });
  }

  it('one-sided p and a 90 % interval match lmerTest (pt on its Satterthwaite df; contest1D(level = 0.90))', () => {
    for (const c of fixture.cases.slice(0, 4)) {
      const greater = twoLevelFromRows(rowsOf(c), { alternative: 'greater' });
      expectClose(greater.p, c.lme4.pGreater, 1e-5, 0, `${c.id} one-sided p`);
      expect(greater.ci[1]).toBe(Infinity);
      const ninety = twoLevelFromRows(rowsOf(c), { confidence: 0.9 });
      expectClose(ninety.ci[0], c.lme4.ci90[0], 1e-6, 1e-9, `${c.id} 90 % lower`);
      expectClose(ninety.ci[1], c.lme4.ci90[1], 1e-6, 1e-9, `${c.id} 90 % upper`);
    }
  });
});

describe('twoLevelFromRows against the 50-digit solution (mpmath 1.2.1, scripts/two-level-high-precision.py)', () => {
  // lme4 stops its optimiser at |Δθ| ≈ 1e-7 relative, so its df and τ² differ from the exact optimum by up to 2e-7
  // (for example df 17.99999808 where the exact value is 18 in balanced-no-covariate). The 50-digit solution of the
  // same REML problem is the reference for the last digits: the engine must match it to 1e-9 relative.
  for (const c of fixture.cases) {
    it(`${c.id}`, () => {
      const r = twoLevelFromRows(rowsOf(c));
      const H = c.highPrecision;
      for (const key of ['estimate', 'se', 'df', 't', 'p', 'sigma2', 'remlLogLik'] as const) {
        expectClose(r[key], H[key], 1e-9, 0, key);
      }
      expectClose(r.tau2, H.tau2, 1e-9, 1e-14 * H.sigma2, 'τ²');
      expectClose(r.ci[0], H.ci95[0], 1e-9, 1e-12, 'CI lower');
      expectClose(r.ci[1], H.ci95[1], 1e-9, 1e-12, 'CI upper');
      expect(r.boundary).toBe(H.boundary);
      H.covariateCoefficients.forEach((cc, k) => {
        expectClose(r.covariateCoefficients[k].estimate, cc.estimate, 1e-9, 0, `${cc.name} estimate`);
        expectClose(r.covariateCoefficients[k].se, cc.se, 1e-9, 0, `${cc.name} se`);
      });
    });
  }

  it('when τ² = 0 is only a local optimum (large-icc), the engine finds the higher interior maximum, as lme4 does', () => {
    const c = fixture.cases.find((x) => x.id === 'large-icc') as TwoLevelCase;
    expect(c.highPrecision.localOptimumAtZero).toBe(true);
    const r = twoLevelFromRows(rowsOf(c));
    expect(r.boundary).toBe(false);
    expect(r.icc).toBeGreaterThan(0.95);
  });

  it('when τ² sits at 0, the df is the residual-only term N − p (lmerTest\'s answer there; standards.md)', () => {
    for (const id of ['boundary-pretest', 'boundary-no-covariate']) {
      const c = fixture.cases.find((x) => x.id === id) as TwoLevelCase;
      const r = twoLevelFromRows(rowsOf(c));
      expect(r.boundary).toBe(true);
      expect(r.tau2).toBe(0);
      expect(r.df).toBe(r.n - r.fixedEffects);
    }
  });
});

describe('twoLevelFromMoments: identities with other analyses', () => {
  it('the rows entry computes per-unit moments and gives exactly the numbers of the moments entry', () => {
    const c = fixture.cases.find((x) => x.id === 'blocks-two-covariates') as TwoLevelCase;
    const rows = rowsOf(c);
    expect(twoLevelFromRows(rows)).toStrictEqual(twoLevelFromMoments(unitMomentsFromRows(rows)));
  });

  it('when τ² = 0, the model is least squares: estimate, SE and df equal ols with the arm and pretest (N − 3 df)', () => {
    const c = fixture.cases.find((x) => x.id === 'boundary-pretest') as TwoLevelCase;
    const r = twoLevelFromRows(rowsOf(c));
    const fit = ols(c.y, c.y.map((_, i) => [c.arm[i], c.covariates[0][i]]));
    expectClose(r.estimate, fit.coefficients[1], 1e-12, 0, 'estimate');
    expectClose(r.se, fit.se[1], 1e-12, 0, 'se');
    expect(r.df).toBe(fit.df);
    expectClose(r.sigma2, fit.sigma * fit.sigma, 1e-12, 0, 'σ²');
  });

  it('balanced units without covariates: the model\'s t is Student\'s t on the unit means with J − 2 df (exact identity when τ² > 0)', () => {
    const c = fixture.cases.find((x) => x.id === 'balanced-no-covariate') as TwoLevelCase;
    const r = twoLevelFromRows(rowsOf(c));
    const means = unitMomentsFromRows(rowsOf(c));
    const t = studentT(
      means.filter((u) => u.arm === 1).map((u) => u.meanY),
      means.filter((u) => u.arm === 0).map((u) => u.meanY),
    );
    expect(r.boundary).toBe(false);
    expectClose(r.estimate, t.meanDifference, 1e-12, 0, 'estimate');
    expectClose(r.se, t.se, 1e-10, 0, 'se');
    expectClose(r.df, 18, 1e-10, 0, 'df');
    expectClose(r.p, t.p, 1e-9, 0, 'p');
  });

  it('g is the adjusted difference over the unadjusted pooled within-arm SD of the students, with J(N − 2) (WWC tools 2009 — V)', () => {
    const c = fixture.cases.find((x) => x.id === 'blocks-pretest') as TwoLevelCase;
    const r = twoLevelFromRows(rowsOf(c));
    const plain = hedgesG(
      c.y.filter((_, i) => c.arm[i] === 1),
      c.y.filter((_, i) => c.arm[i] === 0),
    );
    expectClose(r.pooledSd, plain.pooledSd, 1e-12, 0, 'pooled SD');
    expectClose(r.g, (plain.j * r.estimate) / plain.pooledSd, 1e-12, 0, 'g');
    const approx = twoLevelFromRows(rowsOf(c), { correction: 'approximate' });
    expectClose(approx.gCorrection, 1 - 3 / (4 * r.n - 9), 1e-15, 0, 'ω = 1 − 3/(4N − 9)');
    expect(approx.gCorrection).toBe(hedgesCorrection(r.n - 2, 'approximate'));
  });

  it('reports students and units per arm and the number of blocks', () => {
    const c = fixture.cases.find((x) => x.id === 'unbalanced-unequal-arms') as TwoLevelCase;
    const r = twoLevelFromRows(rowsOf(c));
    expect(r.units).toEqual({ intervention: 6, comparison: 11 });
    expect(r.students.intervention + r.students.comparison).toBe(c.y.length);
    expect(r.students.intervention).toBe(c.arm.filter((a) => a === 1).length);
    expect(r.blocks).toBe(0);
    const b = fixture.cases.find((x) => x.id === 'blocks-unequal-no-covariate') as TwoLevelCase;
    expect(twoLevelFromRows(rowsOf(b)).blocks).toBe(5);
  });

  it('shifting scores by 1e6 and rescaling them leaves t, df and p unchanged and scales the effect', () => {
    const rows = invented({ units: 24, size: (j) => 4 + (j % 7) * 3, tau: 3, sigma: 7, blocks: 4 });
    const base = twoLevelFromRows(rows);
    const shifted = twoLevelFromRows({ ...rows, y: Array.from(rows.y, (v) => 1e6 + 1000 * v), covariates: [Array.from(rows.covariates![0], (v) => 1e6 + v / 100)] });
    expectClose(shifted.estimate, 1000 * base.estimate, 1e-9, 0, 'estimate');
    expectClose(shifted.t, base.t, 1e-9, 0, 't');
    expectClose(shifted.df, base.df, 1e-9, 0, 'df');
    expectClose(shifted.p, base.p, 1e-8, 0, 'p');
    expectClose(shifted.icc, base.icc, 1e-9, 0, 'ICC');
    expectClose(shifted.sigma2, 1e6 * base.sigma2, 1e-9, 0, 'σ²');
    expectClose(shifted.g, base.g, 1e-9, 0, 'g');
  });

  it('the block labelled first in code-unit order is the reference, and relabelling blocks changes nothing', () => {
    const rows = invented({ units: 24, size: () => 6, tau: 2, sigma: 5, blocks: 3 });
    const renamed = { ...rows, block: rows.block!.map((b) => ({ 'school-00': 'zeta', 'school-01': 'alpha', 'school-02': 'Mid' })[b] as string) };
    const a = twoLevelFromRows(rows);
    const b = twoLevelFromRows(renamed);
    for (const key of ['estimate', 'se', 'df', 'p', 'tau2', 'sigma2', 'remlLogLik'] as const) expectClose(b[key], a[key], 1e-10, 0, key);
  });
});

describe('combineUnitMoments (parallel-axis rule; Chan, Golub & LeVeque 1979)', () => {
  const rows = invented({ units: 12, size: (j) => 3 + j, tau: 2, sigma: 6, blocks: 3 });

  it('combining classrooms gives the moments computed directly from the school\'s rows', () => {
    const rooms = unitMomentsFromRows(rows);
    const school = combineUnitMoments(rooms.filter((u) => u.block === 'school-01' && u.arm === 1), 'school-01');
    const rowsOfSchool = unitMomentsFromRows({
      ...rows,
      cluster: rows.cluster.map((c, i) => (rows.block![i] === 'school-01' && rows.arm[i] === 1 ? 'school-01' : c)),
    }).find((u) => u.unit === 'school-01')!;
    expect(school.n).toBe(rowsOfSchool.n);
    expect(school.arm).toBe(1);
    expect(school.block).toBe('school-01');
    expectClose(school.meanY, rowsOfSchool.meanY, 1e-14, 0, 'mean');
    expectClose(school.ssY, rowsOfSchool.ssY, 1e-12, 0, 'SS y');
    expectClose(school.meanX[0], rowsOfSchool.meanX[0], 1e-14, 0, 'mean x');
    expectClose(school.spXY[0], rowsOfSchool.spXY[0], 1e-12, 0, 'SP xy');
    expectClose(school.spXX[0][0], rowsOfSchool.spXX[0][0], 1e-12, 0, 'SS x');
  });

  it('a model of schools fitted from combined classroom moments equals the model fitted from rows clustered by school', () => {
    const big = invented({ units: 48, size: (j) => 5 + (j % 5), tau: 3, sigma: 6, blocks: 6, seed: 77 });
    // Units 2j and 2j + 1 share a block; group classrooms into 'schools' of the same arm within each block.
    const schoolOf = (room: string, arm: number, block: string) => `${block}/${arm}/${Number(room.slice(5)) % 3}`;
    const rooms = unitMomentsFromRows(big);
    const bySchool = new Map<string, typeof rooms>();
    for (const u of rooms) {
      const key = schoolOf(u.unit, u.arm, u.block!);
      bySchool.set(key, [...(bySchool.get(key) ?? []), u]);
    }
    const combined = [...bySchool].map(([label, members]) => combineUnitMoments(members, label));
    const fromRows = twoLevelFromRows({ ...big, cluster: big.cluster.map((c, i) => schoolOf(c, big.arm[i], big.block![i])) });
    const fromMoments = twoLevelFromMoments(combined);
    for (const key of ['estimate', 'se', 'df', 'p', 'tau2', 'sigma2', 'remlLogLik'] as const) {
      expectClose(fromMoments[key], fromRows[key], 1e-10, 0, key);
    }
  });

  it('refuses units from different arms or blocks, and an empty list', () => {
    const rooms = unitMomentsFromRows(rows);
    expect(() => combineUnitMoments([rooms[0], rooms[1]], 'x')).toThrow(/different arms/);
    const sameArm = rooms.filter((u) => u.arm === 0);
    expect(() => combineUnitMoments(sameArm, 'x')).toThrow(/different blocks/);
    expect(() => combineUnitMoments([], 'x')).toThrow(StatsInputError);
  });
});

describe('twoLevel refuses bad input with a message that says what is wrong', () => {
  const good = invented({ units: 8, size: () => 5, tau: 2, sigma: 5, blocks: 2 });
  const fitRows = (rows: ClusteredRows) => () => twoLevelFromRows(rows);

  it('fewer than two units in an arm', () => {
    const rows = invented({ units: 3, size: () => 6, tau: 1, sigma: 4 });
    expect(fitRows(rows)).toThrow(/each arm needs at least two units \(intervention 1, comparison 2\)/);
  });

  it('non-finite values, arms other than 0/1, and ragged columns', () => {
    expect(fitRows({ ...good, y: Array.from(good.y, (v, i) => (i === 3 ? NaN : v)) })).toThrow(/y has a non-finite value at row 3/);
    expect(fitRows({ ...good, covariates: [Array.from(good.covariates![0], (v, i) => (i === 7 ? Infinity : v))] })).toThrow(/covariate 1 has a non-finite value at row 7/);
    expect(fitRows({ ...good, arm: Array.from(good.arm, (a, i) => (i === 0 ? 2 : a)) })).toThrow(/arm must be 0 or 1/);
    expect(fitRows({ ...good, y: Array.from(good.y).slice(1) })).toThrow(/one value per row/);
    expect(fitRows({ ...good, covariates: [null] as never })).toThrow(/rows.covariates must be an array of number arrays/);
    expect(fitRows({ ...good, y: 'scores' as never })).toThrow(/rows.y must be an array/);
    const moments = unitMomentsFromRows(good);
    expect(() => twoLevelFromMoments(moments.map((u, j) => (j === 2 ? { ...u, meanY: NaN } : u)))).toThrow(/unit room-2: meanY is not a finite number/);
    expect(() => twoLevelFromMoments(moments.map((u, j) => (j === 2 ? { ...u, spXX: [[-Infinity]] } : u)))).toThrow(/spXX row 1 must be an array of 1 finite numbers/);
    expect(() => twoLevelFromMoments(moments.map((u, j) => (j === 1 ? { ...u, n: 2.5 } : u)))).toThrow(/n must be a whole number/);
  });

  it('no variation left within units after the covariates', () => {
    // The outcome is an exact linear function of the pretest plus a unit effect: nothing is left for σ².
    const rows = { ...good, y: Array.from(good.covariates![0], (x, i) => 3 * x + Number(good.cluster[i].slice(5))) };
    expect(fitRows(rows)).toThrow(/no variation within units is left after the covariates/);
    const constantWithin = { ...good, covariates: undefined, y: good.cluster.map((c) => Number(c.slice(5))) };
    expect(fitRows(constantWithin)).toThrow(/does not vary within any unit/);
  });

  it('a model that does not converge says why (students barely vary within units: τ²/σ² beyond 1e12)', () => {
    const rows = { ...good, covariates: undefined, y: Array.from(good.y, (v, i) => Number(good.cluster[i].slice(5)) * 10 + (i % 2) * 1e-9) };
    expect(fitRows(rows)).toThrow(/did not converge: .*\(σ² → 0\)/);
  });

  it('covariates collinear with the blocks, and an arm collinear with the blocks', () => {
    const schoolLevel = good.block!.map((b) => (b === 'school-00' ? 1 : 4));
    expect(fitRows({ ...good, covariates: [schoolLevel] })).toThrow(/covariate 1 is collinear with the arm, the blocks or the earlier covariates/);
    const armByBlock = good.block!.map((b) => (b === 'school-00' ? 1 : 0));
    expect(fitRows({ ...good, arm: armByBlock })).toThrow(/the arm is collinear with the blocks/);
  });

  it('constant outcomes, mixed blocks and unknown options', () => {
    expect(fitRows({ ...good, y: good.y.length ? Array.from(good.y, () => 7) : [] })).toThrow(/the outcome is the same for every student/);
    const moments = unitMomentsFromRows(good);
    const { block: _dropped, ...noBlock } = moments[1];
    expect(() => twoLevelFromMoments(moments.map((u, j) => (j === 1 ? noBlock : u)))).toThrow(/either every unit has a block or none has/);
    expect(() => twoLevelFromRows(good, { method: 'x' } as never)).toThrow(/unknown option "method"/);
    expect(() => twoLevelFromRows(good, { confidence: 1.5 })).toThrow(/confidence/);
  });

  it('never returns NaN for valid input (a property over invented designs)', () => {
    for (let seed = 1; seed <= 12; seed++) {
      const r: TwoLevelResult = twoLevelFromRows(invented({ units: 6 + seed, size: (j) => (j % 4 === 0 ? 1 : 2 + ((j * seed) % 6)), tau: seed % 3, sigma: 4, blocks: 1 + (seed % 3), seed: 1000 + seed }));
      for (const v of [r.estimate, r.se, r.df, r.p, r.tau2, r.sigma2, r.icc, r.remlLogLik, r.g]) expect(Number.isFinite(v)).toBe(true);
      expect(r.df).toBeGreaterThan(0);
    }
  });
});
