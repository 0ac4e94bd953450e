import type { RunResults } from '@evenhand/entities';
import { coxIndexFromCounts, fisherExactTest, oddsRatio, proportionDifference, proportionWithInterval, twoProportionZTest } from '@evenhand/stats';
import { demoResults } from '@/test-fixtures/run-results';

/**
 * A yes/no run of the demo study's results with students assigned one by one, its figures computed by the engine on the
 * counts (checked against SciPy, statsmodels and R in packages/stats), as the API would store them.
 */
export function yesNoResults(i: { yes: number; n: number }, c: { yes: number; n: number }): RunResults {
  const r = demoResults();
  const d = proportionDifference(i, c);
  const z = twoProportionZTest(i, c);
  const zeroCell = [i, c].some((a) => a.yes === 0 || a.yes === a.n);
  const cox = zeroCell ? null : coxIndexFromCounts(i, c);
  const or = zeroCell ? null : oddsRatio(i, c);
  r.measure = { ...r.measure, name: 'Read at grade level by spring', scale: 'yes-no' };
  r.clustering = null;
  r.deciding = { analysis: 'difference-in-proportions', estimate: d.difference, p: z.p, df: null, ci: d.ci, confidence: 0.95, alternative: 'two-sided', significant: z.p < 0.05 };
  r.yesNo = {
    yesIsGood: true,
    confidence: 0.95,
    arms: (['intervention', 'comparison'] as const).map((arm, k) => {
      const a = k === 0 ? i : c;
      const w = proportionWithInterval(a);
      return { arm, yes: a.yes, no: a.n - a.yes, n: a.n, proportion: w.proportion, ci: w.ci };
    }),
    difference: { estimate: d.difference, ci: d.ci },
    oddsRatio: or ? { estimate: or.oddsRatio, ci: or.ci } : null,
    coxIndex: cox ? { value: cox.coxIndex, se: cox.se, improvementIndex: cox.improvementIndex, substantivelyImportant: Math.abs(cox.coxIndex) >= 0.25 } : null,
    zTest: { z: z.z, p: z.p },
    chiSquare: null,
    chiSquareYates: null,
    fisher: { p: fisherExactTest(i, c).p },
    linearProbability: null,
    designEffect: null,
    notComputed: zeroCell
      ? [
          { statistic: 'odds ratio', why: 'Undefined: every intervention student answered yes, so the odds of yes in that arm are infinite.' },
          { statistic: 'Cox index and improvement index', why: 'Undefined: every intervention student answered yes, and the log odds of 0 % or 100 % are infinite.' },
        ]
      : [],
  };
  r.diagnostics.notes = ['A yes/no answer is 0 or 1, so its normality is not tested.'];
  return r;
}
