import { decidingTest, type Comparison, type Run, type RunResults } from '@evenhand/entities';
import { toCsv } from '@/lib/csv';

type Row = [group: string, statistic: string, value: string | number | boolean | null];

/** The headline numbers of a run as a flat CSV (group, statistic, value), made in the browser. */
export function resultsCsv(run: Run, results: RunResults, comparison: Pick<Comparison, 'label' | 'prespecified'> | undefined): string {
  const p = results.primary;
  const d = decidingTest(results);
  const bound = (v: number | null | undefined) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
  const rows: Row[] = [
    ['run', 'comparison', comparison?.label ?? null],
    ['run', 'pre-specified', comparison ? comparison.prespecified : null],
    ['run', 'run id', run.id],
    ['run', 'kind', run.kind],
    ['run', 'state', run.state],
    ['run', 'reason', run.reason],
    ['run', 'plan version', run.planVersion],
    ['run', 'engine version', run.engineVersion],
    ['run', 'data sha-256', run.dataSha256],
    ['run', 'locked at', run.lockedAt],
    ['run', 'measure', results.measure.name],
    ['run', 'wave', results.wave.name],
    ['run', 'alpha', results.alpha],
    ['run', 'alternative', d.alternative],
    ['run', 'measure scale', results.yesNo ? 'yes/no' : 'score'],
  ];
  // The deciding analysis first: its p, interval and verdict are the ones every screen and e-mail shows. A yes/no
  // difference is a fraction (0.07 = 7 percentage points), as the API gives it.
  const deciding: Row[] = [
    ['deciding analysis', 'analysis', d.analysis],
    ['deciding analysis', 'difference', d.estimate],
    ['deciding analysis', 'ci low', bound(d.ci?.[0])],
    ['deciding analysis', 'ci high', bound(d.ci?.[1])],
    ['deciding analysis', 'ci level', d.confidence],
    ['deciding analysis', 'df', d.df],
    ['deciding analysis', 'p', d.p],
    ['deciding analysis', 'meets the pre-registered test', d.significant],
  ];
  const multiplicity: Row[] =
    run.kind === 'confirmatory' && run.multiplicity ? [['benjamini-hochberg', 'adjusted p', run.multiplicity.adjustedP], ['benjamini-hochberg', 'comparisons', run.multiplicity.comparisons]] : [];
  if (results.yesNo) return toCsv([['group', 'statistic', 'value'], ...rows, ...deciding, ...multiplicity, ...yesNoRows(results.yesNo)]);
  rows.push(
    ...results.descriptives.flatMap((d): Row[] => [
      [d.arm, 'students', d.students],
      [d.arm, 'classrooms', d.classrooms],
      [d.arm, 'mean', d.mean],
      [d.arm, 'sd', d.sd],
      [d.arm, 'se', d.se],
    ]),
    ...deciding,
    ['primary', 'test', p.test],
    ['primary', 'difference', p.meanDifference],
    ['primary', 'ci low', Number.isFinite(p.ci[0]) ? p.ci[0] : null],
    ['primary', 'ci high', Number.isFinite(p.ci[1]) ? p.ci[1] : null],
    ['primary', 'ci level', p.confidence],
    ['primary', 't', p.t],
    ['primary', 'df', p.df],
    ['primary', 'p', p.p],
    ['effect size', 'hedges g', results.effectSize.g],
    ['effect size', 'g ci low', results.effectSize.ci[0]],
    ['effect size', 'g ci high', results.effectSize.ci[1]],
    ['effect size', 'improvement index', results.effectSize.improvementIndex],
  );
  const m = results.twoLevel;
  if (m) {
    rows.push(
      ['two-level model', 'units intervention', m.units.intervention],
      ['two-level model', 'units comparison', m.units.comparison],
      ['two-level model', 'students', m.students],
      ['two-level model', 'blocks', m.blocks],
      ['two-level model', 'covariate', m.covariate],
      ['two-level model', 'tau2', m.tau2],
      ['two-level model', 'sigma2', m.sigma2],
      ['two-level model', 'icc', m.icc],
      ['two-level model', 'reml log-likelihood', m.remlLogLik],
      ['two-level model', 'tau2 at boundary', m.boundary],
    );
  }
  const c = results.clustering;
  if (c) {
    rows.push(['clustering', 'icc', c.icc], ['clustering', 'icc source', c.iccSource], ['clustering', 't adjusted', c.tAdjusted], ['clustering', 'df (hedges h)', c.df], ['clustering', 'p', c.p], ['clustering', 'design effect', c.designEffect]);
  }
  rows.push(...multiplicity);
  const s = results.sensitivity;
  rows.push(['sensitivity', 'student t', s.student.t], ['sensitivity', 'student p', s.student.p], ['sensitivity', 'welch t', s.welch.t], ['sensitivity', 'welch p', s.welch.p]);
  if (s.mannWhitney) rows.push(['sensitivity', 'mann-whitney u', s.mannWhitney.u], ['sensitivity', 'mann-whitney p', s.mannWhitney.p]);
  if (s.ancova) rows.push(['sensitivity', 'baseline-adjusted difference', s.ancova.adjustedDifference], ['sensitivity', 'baseline-adjusted g', s.ancova.g], ['sensitivity', 'baseline-adjusted p', s.ancova.p]);
  if (s.classroomMeans) rows.push(['sensitivity', 'classroom-means difference', s.classroomMeans.meanDifference], ['sensitivity', 'classroom-means p', s.classroomMeans.p]);
  if (s.clusterRobust) rows.push(['sensitivity', 'cluster-robust difference', s.clusterRobust.estimate], ['sensitivity', 'cluster-robust df', s.clusterRobust.df], ['sensitivity', 'cluster-robust p', s.clusterRobust.p]);
  for (const site of results.sites) {
    rows.push([`site: ${site.siteName}`, 'hedges g', site.g], [`site: ${site.siteName}`, 'g ci low', site.ci[0]], [`site: ${site.siteName}`, 'g ci high', site.ci[1]], [`site: ${site.siteName}`, 'weight', site.weight]);
  }
  if (results.pooled) {
    const x = results.pooled;
    rows.push(['pooled', 'hedges g', x.estimate], ['pooled', 'ci low', x.ci[0]], ['pooled', 'ci high', x.ci[1]], ['pooled', 'p', x.p], ['pooled', 'q', x.q], ['pooled', 'tau2', x.tau2], ['pooled', 'i2', x.i2]);
  }
  return toCsv([['group', 'statistic', 'value'], ...rows]);
}

/**
 * A yes/no comparison's figures: per arm the yes and no counts, students and the share answering yes with its Wilson
 * interval (fractions, as the API gives them, and as percentages); the difference, odds ratio, Cox index and tests; and
 * each statistic the counts leave undefined, with why. No means, SDs or g: the answers are not scores.
 */
function yesNoRows(y: NonNullable<RunResults['yesNo']>): Row[] {
  const percent = (x: number) => Math.round(x * 1000) / 10;
  const rows: Row[] = [['yes/no', 'good answer', y.yesIsGood ? 'yes' : 'no'], ['yes/no', 'ci level', y.confidence]];
  for (const a of y.arms) {
    rows.push(
      [a.arm, 'yes', a.yes],
      [a.arm, 'no', a.no],
      [a.arm, 'students', a.n],
      [a.arm, 'proportion yes', a.proportion],
      [a.arm, 'percent yes', percent(a.proportion)],
      [a.arm, 'wilson ci low', a.ci[0]],
      [a.arm, 'wilson ci high', a.ci[1]],
    );
  }
  rows.push(
    ['difference in proportions', 'estimate', y.difference.estimate],
    ['difference in proportions', 'percentage points', percent(y.difference.estimate)],
    ['difference in proportions', 'newcombe ci low', y.difference.ci[0]],
    ['difference in proportions', 'newcombe ci high', y.difference.ci[1]],
  );
  if (y.oddsRatio) rows.push(['odds ratio', 'estimate', y.oddsRatio.estimate], ['odds ratio', 'ci low', y.oddsRatio.ci[0]], ['odds ratio', 'ci high', y.oddsRatio.ci[1]]);
  if (y.coxIndex) rows.push(['cox index', 'value', y.coxIndex.value], ['cox index', 'se', y.coxIndex.se], ['cox index', 'improvement index', y.coxIndex.improvementIndex]);
  if (y.zTest) rows.push(['tests', 'two-proportion z', y.zTest.z], ['tests', 'two-proportion z p', y.zTest.p]);
  if (y.chiSquare) rows.push(['tests', 'chi-square', y.chiSquare.statistic], ['tests', 'chi-square p', y.chiSquare.p]);
  if (y.chiSquareYates) rows.push(['tests', 'chi-square with yates p', y.chiSquareYates.p]);
  rows.push(['tests', 'fisher exact p', y.fisher.p]);
  const lp = y.linearProbability;
  if (lp) rows.push(['linear probability (cr2)', 'estimate', lp.estimate], ['linear probability (cr2)', 'se', lp.se], ['linear probability (cr2)', 'df', lp.df], ['linear probability (cr2)', 'p', lp.p]);
  if (y.designEffect) rows.push(['design-effect check', 'design effect', y.designEffect.designEffect], ['design-effect check', 'icc', y.designEffect.icc], ['design-effect check', 'p', y.designEffect.p]);
  for (const n of y.notComputed ?? []) rows.push(['not computed', n.statistic, n.why]);
  return rows;
}
