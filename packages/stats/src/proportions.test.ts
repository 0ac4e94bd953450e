import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { expectClose } from '../test/fixtures.js';
import { clusterRobustFromRows } from './cluster-robust.js';
import { improvementIndex } from './effect-size.js';
import { mdes } from './power.js';
import { baselineEquivalence } from './standards.js';
import {
  baselineEquivalenceYesNo,
  chiSquareTest,
  coxIndexFromCounts,
  fisherExactTest,
  oddsRatio,
  proportionDifference,
  proportionDifferenceClustered,
  proportionDifferenceDesignEffect,
  proportionMdes,
  proportionPower,
  proportionWithInterval,
  twoProportionZTest,
  type YesNoCounts,
} from './proportions.js';

/** Written only by scripts/make-proportion-fixtures.py (SciPy 1.10, statsmodels 0.13, mpmath); sources named per value. */
const fixture = JSON.parse(readFileSync(new URL('../test/fixtures/proportions.json', import.meta.url), 'utf8'));

interface TableCase {
  id: string;
  description: string;
  intervention: YesNoCounts;
  comparison: YesNoCounts;
  wilson: Record<string, [{ ci: [number, number] }, { ci: [number, number] }]>;
  newcombe: Record<string, { difference: number; ci: [number, number] }>;
  oddsRatio: { oddsRatio: number; logOddsRatio: number; seLog: number; ci: [number, number]; zeroCellAdjusted: boolean };
  cox: { refuse: CoxRef | null; addHalf: CoxRef };
  zTest: Record<'two-sided' | 'greater' | 'less', { z: number; p: number }> | null;
  chiSquare: { yates: ChiRef; pearson: ChiRef } | null;
  fisher: Record<'two-sided' | 'less' | 'greater', { p: number; scipy: number }>;
  designEffect: {
    averageClusterSize: number;
    icc: number;
    designEffect: number;
    seUnadjusted: number;
    se: number;
    z: number;
    p: number;
    ci: [number, number];
  } | null;
}
interface CoxRef {
  coxIndex: number;
  coxIndexCorrected: number;
  se: number;
  seCorrected: number;
  improvementIndex: number;
  improvementIndexCorrected: number;
  proportion1: number;
  proportion2: number;
}
interface ChiRef {
  statistic: number;
  p: number;
  expected: [[number, number], [number, number]];
}

const tables = fixture.tables as TableCase[];
const STAT = 1e-10;
const P_REL = 1e-8;
const P_ABS = 1e-15;

describe('yes/no outcomes against the fixture', () => {
  for (const c of tables) {
    const [a, b] = [c.intervention, c.comparison];
    describe(`${c.id}: ${c.description}`, () => {
      it('gives each arm its proportion and Wilson interval (statsmodels proportion_confint wilson; mpmath)', () => {
        for (const [conf, refs] of Object.entries(c.wilson)) {
          [a, b].forEach((arm, i) => {
            const r = proportionWithInterval(arm, { confidence: Number(conf) });
            expect(r.proportion).toBe(arm.yes / arm.n);
            expectClose(r.ci[0], refs[i].ci[0], STAT, 1e-15, `arm ${i + 1} lower @${conf}`);
            expectClose(r.ci[1], refs[i].ci[1], STAT, 1e-15, `arm ${i + 1} upper @${conf}`);
          });
        }
      });

      it("gives the difference with Newcombe's hybrid score interval (statsmodels confint_proportions_2indep newcomb; mpmath)", () => {
        for (const [conf, ref] of Object.entries(c.newcombe)) {
          const r = proportionDifference(a, b, { confidence: Number(conf) });
          expectClose(r.difference, ref.difference, 1e-15, 1e-16, 'difference');
          expectClose(r.ci[0], ref.ci[0], STAT, 1e-14, `lower @${conf}`);
          expectClose(r.ci[1], ref.ci[1], STAT, 1e-14, `upper @${conf}`);
        }
      });

      it('gives the odds ratio with Woolf’s interval, ½ added to every cell when one is 0 (statsmodels Table2x2)', () => {
        const ref = c.oddsRatio;
        const r = oddsRatio(a, b);
        expect(r.zeroCellAdjusted).toBe(ref.zeroCellAdjusted);
        expectClose(r.oddsRatio, ref.oddsRatio, STAT, 0, 'OR');
        expectClose(r.logOddsRatio, ref.logOddsRatio, STAT, 1e-14, 'log OR');
        expectClose(r.seLog, ref.seLog, STAT, 0, 'SE log OR');
        expectClose(r.ci[0], ref.ci[0], STAT, 0, 'lower');
        expectClose(r.ci[1], ref.ci[1], STAT, 0, 'upper');
        if (ref.zeroCellAdjusted) expect(() => oddsRatio(a, b, { zeroCell: 'refuse' })).toThrow(/zero cell/);
      });

      it('gives the Cox index, with ω and the improvement index as options (formula in mpmath)', () => {
        const ref = c.cox.refuse;
        if (ref === null) {
          expect(() => coxIndexFromCounts(a, b)).toThrow(/zero cell.*add-half/);
        } else {
          const r = coxIndexFromCounts(a, b);
          expectClose(r.coxIndex, ref.coxIndex, STAT, 1e-14, 'cox');
          expectClose(r.se, ref.se, STAT, 0, 'se');
          expectClose(r.improvementIndex, ref.improvementIndex, STAT, 1e-12, 'improvement index');
          const w = coxIndexFromCounts(a, b, { smallSampleCorrection: true });
          expectClose(w.coxIndex, ref.coxIndexCorrected, STAT, 1e-14, 'ω·cox');
          expectClose(w.se, ref.seCorrected, STAT, 0, 'ω·se');
          expectClose(w.improvementIndex, ref.improvementIndexCorrected, STAT, 1e-12, 'ω improvement index');
        }
        const h = coxIndexFromCounts(a, b, { zeroCell: 'add-half' });
        const refH = c.cox.addHalf;
        // 'add-half' changes only tables with a zero cell.
        expect(h.zeroCellAdjusted).toBe(ref === null);
        expectClose(h.coxIndex, ref === null ? refH.coxIndex : ref.coxIndex, STAT, 1e-14, 'cox (add-half)');
        expectClose(h.proportion1, ref === null ? refH.proportion1 : a.yes / a.n, 1e-15, 0, 'p1 used');
      });

      it('gives the pooled two-proportion z test (statsmodels proportions_ztest)', () => {
        if (c.zTest === null) {
          expect(() => twoProportionZTest(a, b)).toThrow(/same answer/);
          return;
        }
        for (const alt of ['two-sided', 'greater', 'less'] as const) {
          const r = twoProportionZTest(a, b, { alternative: alt });
          expectClose(r.z, c.zTest[alt].z, STAT, 1e-14, `z ${alt}`);
          expectClose(r.p, c.zTest[alt].p, P_REL, P_ABS, `p ${alt}`);
        }
      });

      it("gives Pearson's χ² with and without Yates's correction (SciPy chi2_contingency)", () => {
        if (c.chiSquare === null) {
          expect(() => chiSquareTest(a, b)).toThrow(/expected count is 0/);
          expect(() => chiSquareTest(a, b, { correction: false })).toThrow(/expected count is 0/);
          return;
        }
        for (const [key, correction] of [
          ['yates', true],
          ['pearson', false],
        ] as const) {
          const ref = c.chiSquare[key];
          const r = chiSquareTest(a, b, { correction });
          expectClose(r.statistic, ref.statistic, STAT, 1e-14, `${key} statistic`);
          expectClose(r.p, ref.p, P_REL, P_ABS, `${key} p`);
          for (let i = 0; i < 2; i++) for (let j = 0; j < 2; j++) expectClose(r.expected[i][j], ref.expected[i][j], 1e-14, 0, 'expected');
        }
        // Without correction χ² = z² (pooled z test), an identity of the two tests.
        expectClose(chiSquareTest(a, b, { correction: false }).statistic, twoProportionZTest(a, b).z ** 2, 1e-12, 1e-14, 'χ² = z²');
      });

      it("gives Fisher's exact p by SciPy's rule, two-sided and one-sided (exact rational arithmetic; SciPy fisher_exact)", () => {
        for (const alt of ['two-sided', 'less', 'greater'] as const) {
          const r = fisherExactTest(a, b, { alternative: alt });
          expectClose(r.p, c.fisher[alt].p, P_REL, P_ABS, `p ${alt}`);
          expectClose(r.p, c.fisher[alt].scipy, P_REL, P_ABS, `p ${alt} vs SciPy`);
        }
      });

      it('gives the design-effect sensitivity check (formula in mpmath)', () => {
        const ref = c.designEffect;
        if (ref === null) {
          expect(() => proportionDifferenceDesignEffect(a, b, { averageClusterSize: 24.5, icc: 0.12 })).toThrow(/SE is 0/);
          return;
        }
        const r = proportionDifferenceDesignEffect(a, b, { averageClusterSize: ref.averageClusterSize, icc: ref.icc });
        expectClose(r.designEffect, ref.designEffect, 1e-15, 0, 'design effect');
        expectClose(r.seUnadjusted, ref.seUnadjusted, STAT, 0, 'se unadjusted');
        expectClose(r.se, ref.se, STAT, 0, 'se');
        expectClose(r.z, ref.z, STAT, 1e-14, 'z');
        expectClose(r.p, ref.p, P_REL, P_ABS, 'p');
        expectClose(r.ci[0], ref.ci[0], STAT, 1e-14, 'lower');
        expectClose(r.ci[1], ref.ci[1], STAT, 1e-14, 'upper');
      });
    });
  }
});

describe('degenerate yes/no tables', () => {
  it('when an arm has no yes, then the Wilson interval starts at exactly 0, and all yes ends at exactly 1 (Wilson 1927)', () => {
    expect(proportionWithInterval({ yes: 0, n: 12 }).ci[0]).toBe(0);
    expect(proportionWithInterval({ yes: 12, n: 12 }).ci[1]).toBe(1);
    const r = proportionWithInterval({ yes: 0, n: 1 });
    expect(r.ci[1]).toBeGreaterThan(0.5);
    expect(r.ci[1]).toBeLessThan(1);
  });

  it("when a row or column sums to 0, then Fisher's p is 1, as SciPy returns", () => {
    for (const alt of ['two-sided', 'less', 'greater'] as const) {
      expect(fisherExactTest({ yes: 0, n: 5 }, { yes: 0, n: 7 }, { alternative: alt }).p).toBe(1);
      expect(fisherExactTest({ yes: 5, n: 5 }, { yes: 7, n: 7 }, { alternative: alt }).p).toBe(1);
    }
  });

  it("when the observed table is beyond double range (a district of a million students per arm), then Fisher's p is 0, as SciPy returns", () => {
    // scipy.stats.fisher_exact([[450000, 550000], [380000, 620000]]) and ([[90000, 110000], [76000, 124000]]) give
    // pvalue=0.0 (SciPy 1.10, Debian python3-scipy). The tails end in negligible weights, not a crawl through subnormals.
    expect(fisherExactTest({ yes: 450_000, n: 1_000_000 }, { yes: 380_000, n: 1_000_000 }).p).toBe(0);
    expect(fisherExactTest({ yes: 90_000, n: 200_000 }, { yes: 76_000, n: 200_000 }).p).toBe(0);
    // One arm's greater tail at the same size is also 0, and the other direction is 1 to double precision.
    expect(fisherExactTest({ yes: 450_000, n: 1_000_000 }, { yes: 380_000, n: 1_000_000 }, { alternative: 'greater' }).p).toBe(0);
    expect(fisherExactTest({ yes: 450_000, n: 1_000_000 }, { yes: 380_000, n: 1_000_000 }, { alternative: 'less' }).p).toBeCloseTo(1, 12);
  });

  it('refuses counts that are not whole numbers from 0 to n, and unknown options', () => {
    expect(() => proportionWithInterval({ yes: 3, n: 0 })).toThrow(/n must be a whole number >= 1/);
    expect(() => proportionWithInterval({ yes: 4, n: 3 })).toThrow(/yes must be a whole number from 0 to n = 3/);
    expect(() => proportionWithInterval({ yes: 1.5, n: 3 })).toThrow(/yes must be/);
    expect(() => proportionWithInterval({ yes: Number.NaN, n: 3 })).toThrow(/yes must be/);
    expect(() => proportionDifference({ yes: 1, n: 3 }, null as unknown as YesNoCounts)).toThrow(/comparison must be \{ yes, n \}/);
    expect(() => chiSquareTest({ yes: 1, n: 3 }, { yes: 2, n: 3 }, { yates: true } as never)).toThrow(/unknown option "yates"/);
    expect(() => oddsRatio({ yes: 1, n: 3 }, { yes: 2, n: 3 }, { zeroCell: 'drop' as never })).toThrow(/zeroCell must be/);
  });

  it('never returns NaN for any table up to 6 students per arm', () => {
    for (let n1 = 1; n1 <= 6; n1++)
      for (let n2 = 1; n2 <= 6; n2++)
        for (let y1 = 0; y1 <= n1; y1++)
          for (let y2 = 0; y2 <= n2; y2++) {
            const a = { yes: y1, n: n1 };
            const b = { yes: y2, n: n2 };
            const values: number[] = [
              ...proportionDifference(a, b).ci,
              ...oddsRatio(a, b).ci,
              coxIndexFromCounts(a, b, { zeroCell: 'add-half', smallSampleCorrection: n1 >= 2 && n2 >= 2 }).coxIndex,
              fisherExactTest(a, b).p,
            ];
            for (const v of values) expect(Number.isNaN(v)).toBe(false);
            const p = fisherExactTest(a, b).p;
            expect(p).toBeGreaterThan(0);
            expect(p).toBeLessThanOrEqual(1);
          }
  });
});

describe('Cox index and baseline equivalence', () => {
  it('the improvement index is the one used for g (WWC v2.0 App. F)', () => {
    const r = coxIndexFromCounts({ yes: 42, n: 100 }, { yes: 35, n: 100 });
    expect(r.improvementIndex).toBe(improvementIndex(r.coxIndex));
  });

  it('bands a yes/no characteristic exactly as baselineEquivalence bands g (WWC FAQ citing Handbook v3.0)', () => {
    // 50 % vs 50 %: Cox 0, satisfies. 52 % vs 50 %: logit(0.52)/1.65 ≈ 0.0485, satisfies. 60 % vs 50 %: ≈ 0.2457,
    // requires adjustment. 65 % vs 50 %: ≈ 0.375, fails.
    const cases: [number, number, string][] = [
      [50, 50, 'satisfies'],
      [52, 50, 'satisfies'],
      [60, 50, 'requires-adjustment'],
      [65, 50, 'fails'],
      [35, 50, 'fails'],
    ];
    for (const [y1, y2, band] of cases) {
      const r = baselineEquivalenceYesNo({ yes: y1, n: 100 }, { yes: y2, n: 100 });
      expect(r.band).toBe(band);
      const cox = coxIndexFromCounts({ yes: y1, n: 100 }, { yes: y2, n: 100 }).coxIndex;
      expect(r.coxIndex).toBe(cox);
      expect(r.band).toBe(baselineEquivalence(cox).band);
    }
    expectClose(coxIndexFromCounts({ yes: 60, n: 100 }, { yes: 50, n: 100 }).coxIndex, Math.log(1.5) / 1.65, 1e-15, 0, 'Cox 60/50');
  });

  it('refuses a characteristic everyone shares unless ½ is added to every cell', () => {
    expect(() => baselineEquivalenceYesNo({ yes: 20, n: 20 }, { yes: 18, n: 20 })).toThrow(/zero cell/);
    const r = baselineEquivalenceYesNo({ yes: 20, n: 20 }, { yes: 18, n: 20 }, { zeroCell: 'add-half' });
    expect(r.zeroCellAdjusted).toBe(true);
    expectClose(r.coxIndex, Math.log((20.5 / 0.5) / (18.5 / 2.5)) / 1.65, 1e-14, 0, 'shifted Cox');
  });
});

describe('planning for a proportion', () => {
  for (const c of fixture.planning as {
    input: Record<string, unknown> & { comparisonProportion: number };
    detectableDifference: number;
    mdes: number;
    df: number;
    powerDifference: number;
    power: number;
  }[]) {
    it(`${JSON.stringify(c.input)}: MDES × √(p(1 − p)) and power (SciPy t.ppf, nct)`, () => {
      const r = proportionMdes(c.input as never);
      expect(r.df).toBe(c.df);
      expectClose(r.mdes, c.mdes, 1e-9, 0, 'mdes');
      expectClose(r.detectableDifference, c.detectableDifference, 1e-9, 0, 'detectable difference');
      const pC = c.input.comparisonProportion;
      expectClose(r.outcomeSd, Math.sqrt(pC * (1 - pC)), 1e-15, 0, 'sd');
      const pw = proportionPower({ ...(c.input as object), difference: c.powerDifference } as never);
      expectClose(pw.power, c.power, 1e-8, 1e-12, 'power');
    });
  }

  it('is the existing MDES scaled by the SD; a detectable proportion beyond 0 or 1 is null', () => {
    const r = proportionMdes({ design: 'individual', n: 40, comparisonProportion: 0.95 });
    expect(r.mdes).toBe(mdes({ design: 'individual', n: 40 }).mdes);
    expect(r.detectableProportionAbove).toBeNull();
    expect(r.detectableProportionBelow).toBeCloseTo(0.95 - r.detectableDifference, 15);
  });

  it('power at the detectable difference is the planned power', () => {
    const r = proportionMdes({ design: 'cluster', clusters: 30, clusterSize: 20, icc: 0.08, comparisonProportion: 0.4 });
    const pw = proportionPower({ design: 'cluster', clusters: 30, clusterSize: 20, icc: 0.08, comparisonProportion: 0.4, difference: r.detectableDifference });
    // The MDES uses t quantiles (central), the power the noncentral t, so they agree to about 1e-2 (Bloom 1995).
    expect(Math.abs(pw.power - 0.8)).toBeLessThan(0.01);
  });

  it('refuses a comparison proportion of 0 or 1 and a difference leaving [0, 1]', () => {
    expect(() => proportionMdes({ design: 'individual', n: 100, comparisonProportion: 0 })).toThrow(/strictly between 0 and 1/);
    expect(() => proportionPower({ design: 'individual', n: 100, comparisonProportion: 0.9, difference: 0.2 })).toThrow(/in \[0, 1\]/);
  });
});

describe('difference in proportions for cluster-assigned studies (CR2 linear probability model)', () => {
  // Invented classrooms: [unit, arm, block, yes, n].
  const units = [
    ['c01', 1, 'north', 9, 22],
    ['c02', 1, 'north', 14, 25],
    ['c03', 0, 'north', 7, 24],
    ['c04', 0, 'north', 10, 21],
    ['c05', 1, 'south', 18, 27],
    ['c06', 1, 'south', 11, 19],
    ['c07', 0, 'south', 8, 26],
    ['c08', 0, 'south', 12, 23],
    ['c09', 1, 'south', 20, 28],
    ['c10', 0, 'north', 0, 18],
  ] as const;
  const yesNoUnits = units.map(([unit, arm, block, yes, n]) => ({ unit, arm, block, yes, n }));
  const rows = { y: [] as number[], arm: [] as number[], cluster: [] as string[], block: [] as string[] };
  for (const [unit, arm, block, yes, n] of units) {
    for (let i = 0; i < n; i++) {
      rows.y.push(i < yes ? 1 : 0);
      rows.arm.push(arm);
      rows.cluster.push(unit);
      rows.block.push(block);
    }
  }

  it('when built from counts, then it equals the cluster-robust analysis of the 0/1 student rows', () => {
    for (const withBlocks of [false, true]) {
      const fromCounts = proportionDifferenceClustered(withBlocks ? yesNoUnits : yesNoUnits.map(({ block: _, ...u }) => u));
      const fromRows = clusterRobustFromRows(withBlocks ? rows : { y: rows.y, arm: rows.arm, cluster: rows.cluster });
      for (const key of ['estimate', 'se', 'df', 't', 'p'] as const) expectClose(fromCounts[key], fromRows[key], 1e-12, 1e-15, key);
    }
  });

  it('without blocks, the estimate is the student-weighted difference in proportions', () => {
    const r = proportionDifferenceClustered(yesNoUnits.map(({ block: _, ...u }) => u));
    const sum = (arm: number, k: 'yes' | 'n') => yesNoUnits.filter((u) => u.arm === arm).reduce((s, u) => s + u[k], 0);
    expectClose(r.estimate, sum(1, 'yes') / sum(1, 'n') - sum(0, 'yes') / sum(0, 'n'), 1e-13, 1e-15, 'difference');
  });

  it('refuses a unit whose counts are not whole numbers from 0 to n', () => {
    expect(() => proportionDifferenceClustered([...yesNoUnits, { unit: 'c11', arm: 1, block: 'north', yes: 5, n: 4 }])).toThrow(
      /unit c11\.yes must be a whole number from 0 to n = 4/,
    );
  });
});

/** Written only by scripts/make-degenerate-proportion-fixtures.R (R 4.2 prop.test, fisher.test), 15 significant digits. */
const degenerate = JSON.parse(readFileSync(new URL('../test/fixtures/proportions-degenerate.json', import.meta.url), 'utf8')) as {
  tables: {
    id: string;
    intervention: YesNoCounts;
    comparison: YesNoCounts;
    wilson: Record<string, [[number, number], [number, number]]>;
    fisher: Record<'two-sided' | 'less' | 'greater', number>;
    sampleOddsRatio: number | null;
  }[];
};

describe('an arm that answered all yes or all no, against R', () => {
  for (const c of degenerate.tables) {
    const [a, b] = [c.intervention, c.comparison];
    it(`${c.id}: Wilson (R prop.test without correction) and Fisher (R fisher.test) are defined; the odds ratio and Cox index are refused by name`, () => {
      for (const [conf, refs] of Object.entries(c.wilson)) {
        [a, b].forEach((arm, i) => {
          const r = proportionWithInterval(arm, { confidence: Number(conf) });
          expectClose(r.ci[0], refs[i][0], 1e-13, 1e-15, `${c.id} arm ${i + 1} lower @${conf}`);
          expectClose(r.ci[1], refs[i][1], 1e-13, 1e-15, `${c.id} arm ${i + 1} upper @${conf}`);
        });
        // Newcombe's interval is built from these Wilson bounds, so it is defined too, within [−1, 1].
        const d = proportionDifference(a, b, { confidence: Number(conf) });
        expect(d.ci[0]).toBeGreaterThanOrEqual(-1);
        expect(d.ci[1]).toBeLessThanOrEqual(1);
        expect(d.ci[0]).toBeLessThanOrEqual(d.difference);
        expect(d.ci[1]).toBeGreaterThanOrEqual(d.difference);
      }
      for (const alt of ['two-sided', 'less', 'greater'] as const) {
        expectClose(fisherExactTest(a, b, { alternative: alt }).p, c.fisher[alt], 1e-13, 1e-15, `${c.id} Fisher ${alt}`);
      }
      // R's sample odds ratio is 0, infinite or 0/0 for every one of these tables.
      expect(c.sampleOddsRatio).toBeNull();
      expect(() => oddsRatio(a, b, { zeroCell: 'refuse' })).toThrow(/oddsRatio: an arm has no yes or no "no" answers \(a zero cell\), so the log odds are infinite/);
      expect(() => coxIndexFromCounts(a, b)).toThrow(/coxIndexFromCounts: an arm has no yes or no "no" answers \(a zero cell\)/);
    });
  }
});
