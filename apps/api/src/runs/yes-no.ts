import {
  DEFAULT_ICC_ACHIEVEMENT,
  DEFAULT_ICC_BEHAVIOR,
  StatsInputError,
  chiSquareTest,
  coxIndexFromCounts,
  fisherExactTest,
  iccFromSummaries,
  isSubstantivelyImportant,
  oddsRatio,
  proportionDifference,
  proportionDifferenceDesignEffect,
  proportionWithInterval,
  twoProportionZTest,
  type Alternative,
  type YesNoCounts,
} from '@evenhand/stats';
import { arms, type Arm, type Deciding, type YesNoResult } from '@evenhand/entities';
import { assignedUnits, clusterRobust } from './clustered.js';
import type { ClassroomAggregate } from './gather.js';

/**
 * A classroom's yes count: its outcome sum, which SQL adds up exactly (answers are stored as 1 and 0), read back as
 * n·mean; rounding removes the float's last digit.
 */
export const yesCount = (c: Pick<ClassroomAggregate, 'n' | 'mean'>) => Math.round(c.n * (c.mean ?? 0));

function armCounts(classrooms: ClassroomAggregate[], arm: Arm): YesNoCounts {
  const mine = classrooms.filter((c) => c.arm === arm && c.n > 0);
  return { yes: mine.reduce((t, c) => t + yesCount(c), 0), n: mine.reduce((t, c) => t + c.n, 0) };
}

/** A test that is undefined for these counts (every student gave the same answer) is left out, not failed. */
function unlessUndefined<T>(f: () => T): T | null {
  try {
    return f();
  } catch (e) {
    if (e instanceof StatsInputError) return null;
    throw e;
  }
}

export interface YesNoContext {
  alpha: number;
  alternative: Alternative;
  yesIsGood: boolean;
  measureKind: 'achievement' | 'behaviour';
  /** What was assigned: the regression's clusters are the classrooms or schools; 'student' for none. */
  unitOfAssignment: 'student' | 'classroom' | 'school';
}

/**
 * A yes/no comparison from the counts per arm, with the engine's functions (`@evenhand/stats` proportions): Wilson
 * intervals, Newcombe's difference, Woolf's odds ratio, the Cox index, the z, χ² and Fisher tests. Students assigned one
 * by one: the z test decides, with Newcombe's interval. Classrooms or schools assigned: the linear probability
 * regression on the assigned units' moments with CR2 errors and Satterthwaite df decides (the same code as the
 * scores' cluster-robust check), and the design-effect correction is a sensitivity check.
 */
export function yesNoAnalysis(classrooms: ClassroomAggregate[], ctx: YesNoContext): { yesNo: YesNoResult; deciding: Deciding; notes: string[] } {
  const notes: string[] = [];
  const confidence = 1 - ctx.alpha;
  const [a, b] = arms.map((arm) => armCounts(classrooms, arm));
  const armRows = arms.map((arm, i) => {
    const c = i === 0 ? a : b;
    const w = proportionWithInterval(c, { confidence });
    return { arm, yes: c.yes, no: c.n - c.yes, n: c.n, proportion: w.proportion, ci: w.ci };
  });
  const difference = proportionDifference(a, b, { confidence });
  // Wilson, Newcombe and Fisher are defined for every table; the odds and the tests below are not, and say why.
  const notComputed: { statistic: string; why: string }[] = [];
  const allSame = armRows.filter((r) => r.yes === 0 || r.no === 0).map((r) => `every ${r.arm} student answered ${r.yes === 0 ? 'no' : 'yes'}`);
  const zeroCell = allSame.length > 0;
  const odds = zeroCell ? null : oddsRatio(a, b, { confidence, zeroCell: 'refuse' });
  const cox = zeroCell ? null : coxIndexFromCounts(a, b, { zeroCell: 'refuse' });
  if (zeroCell) {
    const which = allSame.join(' and ');
    notComputed.push(
      { statistic: 'odds ratio', why: `Undefined: ${which}, so the odds of yes in that arm are ${allSame.some((w) => w.endsWith('yes')) ? 'infinite' : '0'}.` },
      { statistic: 'Cox index and improvement index', why: `Undefined: ${which}, and the log odds of 0 % or 100 % are infinite.` },
    );
  }
  const z = unlessUndefined(() => twoProportionZTest(a, b, { alternative: ctx.alternative }));
  const chi = unlessUndefined(() => chiSquareTest(a, b, { correction: false }));
  const yates = unlessUndefined(() => chiSquareTest(a, b, { correction: true }));
  const fisher = fisherExactTest(a, b, { alternative: ctx.alternative });
  if (chi && chi.minExpected < 5) notes.push('An expected count is under 5, so the χ² approximation is doubtful (a common rule of thumb); read Fisher’s exact test.');

  let linearProbability: YesNoResult['linearProbability'] = null;
  let designEffect: YesNoResult['designEffect'] = null;
  let deciding: Deciding;
  if (ctx.unitOfAssignment !== 'student') {
    // The unadjusted difference in proportions: each assigned unit's 0/1 moments (n, yes/n, yes·(1 − yes/n)), the draw's blocks.
    const assigned = assignedUnits(classrooms, ctx.unitOfAssignment, false);
    notes.push(...assigned.notes);
    const r = clusterRobust(assigned, { confidence, alternative: ctx.alternative });
    if (typeof r === 'string') throw new YesNoAnalysisError(`The linear probability regression with cluster-robust errors could not be computed: ${r}`);
    linearProbability = r;
    deciding = { analysis: 'linear-probability', estimate: r.estimate, p: r.p, df: r.df, ci: r.ci, confidence, alternative: ctx.alternative, significant: r.p < ctx.alpha };
    const scored = classrooms.filter((c) => c.n > 0);
    const units = assigned.units;
    const averageClusterSize = units.reduce((t, u) => t + u.n, 0) / units.length;
    let icc = ctx.measureKind === 'achievement' ? DEFAULT_ICC_ACHIEVEMENT : DEFAULT_ICC_BEHAVIOR;
    let iccSource: 'observed' | 'default' = 'default';
    const observed = scored.length >= 3 && scored.every((c) => c.n >= 2) ? unlessUndefined(() => iccFromSummaries(scored.map((c) => ({ n: c.n, mean: c.mean ?? 0, m2: c.m2 ?? 0 }))).icc) : null;
    if (observed !== null && Number.isFinite(observed)) {
      icc = Math.max(0, observed);
      iccSource = 'observed';
    }
    const de = unlessUndefined(() => proportionDifferenceDesignEffect(a, b, { averageClusterSize, icc, confidence }));
    if (de) designEffect = { se: de.se, p: de.p, ci: de.ci, designEffect: de.designEffect, icc, iccSource, averageClusterSize };
  } else {
    if (!z) throw new YesNoAnalysisError('Every student gave the same answer, so the two arms cannot be compared by a z test; Fisher’s exact p is 1.');
    deciding = { analysis: 'difference-in-proportions', estimate: difference.difference, p: z.p, df: null, ci: difference.ci, confidence, alternative: ctx.alternative, significant: z.p < ctx.alpha };
    if (ctx.alternative !== 'two-sided') notes.push('Newcombe’s interval for the difference is two-sided; the one-sided test’s p is the z test’s.');
  }

  const yesNo: YesNoResult = {
    yesIsGood: ctx.yesIsGood,
    confidence,
    arms: armRows,
    difference: { estimate: difference.difference, ci: difference.ci },
    oddsRatio: odds ? { estimate: odds.oddsRatio, ci: odds.ci } : null,
    coxIndex: cox ? { value: cox.coxIndex, se: cox.se, improvementIndex: cox.improvementIndex, substantivelyImportant: isSubstantivelyImportant(cox.coxIndex) } : null,
    zTest: z ? { z: z.z, p: z.p } : null,
    chiSquare: chi ? { statistic: chi.statistic, p: chi.p, minExpected: chi.minExpected } : null,
    chiSquareYates: yates ? { statistic: yates.statistic, p: yates.p } : null,
    fisher: { p: fisher.p },
    linearProbability,
    designEffect,
    notComputed,
  };
  return { yesNo, deciding, notes };
}

/** A yes/no run that cannot be computed fails with this message. */
export class YesNoAnalysisError extends Error {}
