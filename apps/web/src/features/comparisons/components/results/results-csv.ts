import type { Comparison, Run, RunResults } from '@evenhand/entities';
import { toCsv } from '@/lib/csv';

type Row = [group: string, statistic: string, value: string | number | boolean | null];

/** The headline numbers of a run as a flat CSV (group, statistic, value), made in the browser. */
export function resultsCsv(run: Run, results: RunResults, comparison: Pick<Comparison, 'label' | 'prespecified'> | undefined): string {
  const p = results.primary;
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
    ['run', 'alternative', p.alternative],
    ...results.descriptives.flatMap((d): Row[] => [
      [d.arm, 'students', d.students],
      [d.arm, 'classrooms', d.classrooms],
      [d.arm, 'mean', d.mean],
      [d.arm, 'sd', d.sd],
      [d.arm, 'se', d.se],
    ]),
    ['primary', 'test', p.test],
    ['primary', 'difference', p.meanDifference],
    ['primary', 'ci low', Number.isFinite(p.ci[0]) ? p.ci[0] : null],
    ['primary', 'ci high', Number.isFinite(p.ci[1]) ? p.ci[1] : null],
    ['primary', 'ci level', p.confidence],
    ['primary', 't', p.t],
    ['primary', 'df', p.df],
    ['primary', 'p', p.p],
    ['primary', 'meets the pre-registered test', p.significant],
    ['effect size', 'hedges g', results.effectSize.g],
    ['effect size', 'g ci low', results.effectSize.ci[0]],
    ['effect size', 'g ci high', results.effectSize.ci[1]],
    ['effect size', 'improvement index', results.effectSize.improvementIndex],
  ];
  const c = results.clustering;
  if (c) {
    rows.push(['clustering', 'icc', c.icc], ['clustering', 'icc source', c.iccSource], ['clustering', 't adjusted', c.tAdjusted], ['clustering', 'df h', c.df], ['clustering', 'p', c.p], ['clustering', 'design effect', c.designEffect]);
  }
  if (run.kind === 'confirmatory' && run.multiplicity) {
    rows.push(['benjamini-hochberg', 'adjusted p', run.multiplicity.adjustedP], ['benjamini-hochberg', 'comparisons', run.multiplicity.comparisons]);
  }
  const s = results.sensitivity;
  rows.push(['sensitivity', 'student t', s.student.t], ['sensitivity', 'student p', s.student.p], ['sensitivity', 'welch t', s.welch.t], ['sensitivity', 'welch p', s.welch.p]);
  if (s.mannWhitney) rows.push(['sensitivity', 'mann-whitney u', s.mannWhitney.u], ['sensitivity', 'mann-whitney p', s.mannWhitney.p]);
  if (s.ancova) rows.push(['sensitivity', 'baseline-adjusted difference', s.ancova.adjustedDifference], ['sensitivity', 'baseline-adjusted g', s.ancova.g], ['sensitivity', 'baseline-adjusted p', s.ancova.p]);
  if (s.classroomMeans) rows.push(['sensitivity', 'classroom-means difference', s.classroomMeans.meanDifference], ['sensitivity', 'classroom-means p', s.classroomMeans.p]);
  for (const site of results.sites) {
    rows.push([`site: ${site.siteName}`, 'hedges g', site.g], [`site: ${site.siteName}`, 'g ci low', site.ci[0]], [`site: ${site.siteName}`, 'g ci high', site.ci[1]], [`site: ${site.siteName}`, 'weight', site.weight]);
  }
  if (results.pooled) {
    const x = results.pooled;
    rows.push(['pooled', 'hedges g', x.estimate], ['pooled', 'ci low', x.ci[0]], ['pooled', 'ci high', x.ci[1]], ['pooled', 'p', x.p], ['pooled', 'q', x.q], ['pooled', 'tau2', x.tau2], ['pooled', 'i2', x.i2]);
  }
  return toCsv([['group', 'statistic', 'value'], ...rows]);
}
