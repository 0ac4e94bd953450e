import type { DataSource } from 'typeorm';
import { baselineEquivalence, baselineEquivalenceYesNo, coxIndexFromCounts, hedgesGFromSummary, normalQuantile } from '@evenhand/stats';
import type { Accounting, SessionUser } from '@evenhand/entities';
import { currentPlan } from '../plan/service.js';
import { findVisibleStudy } from '../studies/access.js';
import { accountFor, needsPretest } from '../runs/accounting.js';
import { ensureSheets } from '../score-sheets/queries.js';
import { baselineOfAnalysed, boxPlotRows, dataQuality, lockedAccounting, studyMeasures, studyWaves } from './queries.js';

const bandAdvice = {
  satisfies: 'Equivalent at baseline (|g| ≤ 0.05).',
  'requires-adjustment': 'Equivalent only if the analysis adjusts for the baseline score (0.05 < |g| ≤ 0.25).',
  fails: 'Not equivalent at baseline (|g| > 0.25): the groups differed before the intervention.',
} as const;

const coxAdvice = {
  satisfies: 'Equivalent at baseline (|Cox index| ≤ 0.05).',
  'requires-adjustment': 'Equivalent only if the analysis adjusts for the baseline answer (0.05 < |Cox index| ≤ 0.25).',
  fails: 'Not equivalent at baseline (|Cox index| > 0.25): the groups differed before the intervention.',
} as const;

/**
 * The accounting of a measure at the outcome wave: its pre-specified comparison's locked run's, as stored (a locked
 * result never changes), else that of today's accepted sheets under the plan's rule for the pretest.
 */
export async function accountingOf(db: Pick<DataSource, 'query' | 'manager'>, scope: { studyId: string; measureId: string; waveId: string; pretest: string | null }): Promise<{ accounting: Accounting; runId: string | null }> {
  const locked = await lockedAccounting(db.manager, scope);
  if (locked?.accounting) return { accounting: locked.accounting, runId: locked.id };
  const { pretest, ...where } = scope;
  return { accounting: await accountFor(db.manager, { ...where, reads: ['accepted'], pretestWaveId: pretest }), runId: null };
}

/** The research lead's data checks: completeness, box plots, attrition against the published boundaries, baseline equivalence. */
export async function studyChecks(db: Pick<DataSource, 'query' | 'manager'>, user: SessionUser, studyId: string) {
  const study = await findVisibleStudy(db.manager, user, studyId);
  await ensureSheets(db.manager, studyId);
  const plan = await currentPlan(db.manager, studyId);
  const measures = await studyMeasures(db.manager, studyId);
  const waves = await studyWaves(db.manager, studyId);
  const baseline = waves.find((w) => w.kind === 'baseline');
  const outcomeWaveId = plan?.content.primaryWaveId ?? waves.find((w) => w.kind === 'outcome')?.id;

  const quality = await dataQuality(db.manager, studyId);
  const boxes = await boxPlotRows(db.manager, studyId);

  const perMeasure = [];
  for (const m of measures) {
    // Analysed and lost: the locked result's own accounting (what it read), else the accepted sheets as they stand.
    const { accounting, runId: accountingRunId } = outcomeWaveId
      ? await accountingOf(db, { studyId, measureId: m.id, waveId: outcomeWaveId, pretest: needsPretest({ primaryTest: plan?.content.primaryTest ?? 'welch', covariate: plan?.content.covariate ?? 'none', scale: m.scale, hasBaselineWave: Boolean(baseline) }) ? baseline!.id : null })
      : { accounting: null, runId: null };

    // Baseline equivalence on the analytic sample: students with both a baseline and an outcome score.
    let equivalence = null;
    if (baseline && outcomeWaveId) {
      const rows = await baselineOfAnalysed(db.manager, { studyId, baselineWaveId: baseline.id, outcomeWaveId, measureId: m.id });
      const bi = rows.find((r) => r.arm === 'intervention');
      const bc = rows.find((r) => r.arm === 'comparison');
      if (m.scale === 'yes-no' && bi && bc) {
        // A yes/no characteristic: the Cox index, banded as g is (the published standard for binary characteristics).
        const [ci, cc] = [{ yes: bi.yes, n: bi.n }, { yes: bc.yes, n: bc.n }];
        const e = baselineEquivalenceYesNo(ci, cc, { zeroCell: 'add-half' });
        const se = coxIndexFromCounts(ci, cc, { zeroCell: 'add-half' }).se;
        const z = normalQuantile(0.975);
        const { yes: _y1, ...intervention } = bi;
        const { yes: _y2, ...comparison } = bc;
        equivalence = {
          g: e.coxIndex,
          ci: [e.coxIndex - z * se, e.coxIndex + z * se] as [number, number],
          effectSize: 'cox-index' as const,
          band: e.band,
          advice: coxAdvice[e.band],
          intervention,
          comparison,
          adjustedInPlan: plan?.content.covariate === 'baseline',
        };
      } else if (bi && bc && bi.n >= 2 && bc.n >= 2 && bi.sd + bc.sd > 0) {
        const g = hedgesGFromSummary(bi, bc);
        const band = baselineEquivalence(g.g);
        const { yes: _y1, ...intervention } = bi;
        const { yes: _y2, ...comparison } = bc;
        equivalence = { g: g.g, ci: g.ci, effectSize: 'hedges-g' as const, band: band.band, advice: bandAdvice[band.band], intervention, comparison, adjustedInPlan: plan?.content.covariate === 'baseline' };
      }
    }
    perMeasure.push({
      measureId: m.id,
      measureName: m.name,
      range: [Number(m.min_score), Number(m.max_score)],
      quality: waves.map((w) => {
        const q = quality.find((x) => x.measure_id === m.id && x.wave_id === w.id);
        return { waveId: w.id, waveName: w.name, sheets: q?.sheets ?? 0, missing: q?.missing ?? 0, waiting: q?.waiting ?? 0, returned: q?.returned ?? 0, accepted: q?.accepted ?? 0, scores: q?.scores ?? 0, left: q?.left_count ?? 0, outOfRange: q?.out_of_range ?? 0 };
      }),
      boxPlots: boxes
        .filter((b) => b.measure_id === m.id)
        .map((b) => ({ waveId: b.wave_id, arm: b.arm, siteId: b.site_id, siteName: b.site_name, n: b.n, min: b.q[0], q1: b.q[1], median: b.q[2], q3: b.q[3], max: b.q[4] })),
      accounting,
      accountingRunId,
      baselineEquivalence: equivalence,
      // Baseline equivalence is required when assignment was not (or no longer) random, or attrition is high.
      equivalenceRequired: study.quasiExperimental || accounting?.attrition.students?.cautious.band === 'high',
    });
  }
  return { studyId, quasiExperimental: study.quasiExperimental, outcomeWaveId: outcomeWaveId ?? null, measures: perMeasure };
}
