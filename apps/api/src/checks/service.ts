import type { DataSource } from 'typeorm';
import { baselineEquivalence, baselineEquivalenceYesNo, coxIndexFromCounts, hedgesGFromSummary, normalQuantile } from '@evenhand/stats';
import type { Accounting, Arm, SessionUser } from '@evenhand/entities';
import { currentPlan } from '../plans/service.js';
import { findVisibleStudy } from '../studies/access.js';
import { accountFor, needsPretest } from '../runs/accounting.js';
import { ensureSheets } from '../score-sheets/service.js';

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
export async function accountingOf(db: DataSource, scope: { studyId: string; measureId: string; waveId: string; pretest: string | null }): Promise<{ accounting: Accounting; runId: string | null }> {
  const [locked]: { id: string; accounting: Accounting | null }[] = await db.query(
    `SELECT r.id, r.results->'accounting' AS accounting FROM runs r JOIN comparisons k ON k.id = r.comparison_id
      WHERE k.study_id = $1 AND k.measure_id = $2 AND k.wave_id = $3 AND k.prespecified AND r.state = 'locked'`,
    [scope.studyId, scope.measureId, scope.waveId],
  );
  if (locked?.accounting) return { accounting: locked.accounting, runId: locked.id };
  const { pretest, ...where } = scope;
  return { accounting: await accountFor(db.manager, { ...where, reads: ['accepted'], pretestWaveId: pretest }), runId: null };
}

/** The research lead's data checks: completeness, box plots, attrition against the published boundaries, baseline equivalence. */
export async function studyChecks(db: DataSource, user: SessionUser, studyId: string) {
  const study = await findVisibleStudy(db.manager, user, studyId);
  await ensureSheets(db.manager, studyId);
  const plan = await currentPlan(db.manager, studyId);
  const measures: { id: string; name: string; scale: 'score' | 'yes-no'; min_score: string; max_score: string }[] = await db.query(
    `SELECT id, name, scale, min_score, max_score FROM measures WHERE study_id = $1 ORDER BY created_at`,
    [studyId],
  );
  const waves: { id: string; name: string; kind: string }[] = await db.query(`SELECT id, name, kind FROM waves WHERE study_id = $1 ORDER BY opens_on`, [studyId]);
  const baseline = waves.find((w) => w.kind === 'baseline');
  const outcomeWaveId = plan?.content.primaryWaveId ?? waves.find((w) => w.kind === 'outcome')?.id;

  const quality: { measure_id: string; wave_id: string; sheets: number; missing: number; waiting: number; returned: number; accepted: number; scores: number; left_count: number; out_of_range: number }[] = await db.query(
    `SELECT sh.measure_id, sh.wave_id, count(*)::int AS sheets,
            count(*) FILTER (WHERE sh.state = 'open' AND NOT EXISTS (SELECT 1 FROM scores x WHERE x.sheet_id = sh.id) AND sh.mode = 'rows')::int AS missing,
            count(*) FILTER (WHERE sh.state = 'submitted')::int AS waiting,
            count(*) FILTER (WHERE sh.state = 'returned')::int AS returned,
            count(*) FILTER (WHERE sh.state = 'accepted')::int AS accepted,
            (SELECT count(*) FROM scores x WHERE x.study_id = $1 AND x.measure_id = sh.measure_id AND x.wave_id = sh.wave_id AND x.score IS NOT NULL)::int AS scores,
            (SELECT count(*) FROM scores x WHERE x.study_id = $1 AND x.measure_id = sh.measure_id AND x.wave_id = sh.wave_id AND x.left_study)::int AS left_count,
            (SELECT count(*) FROM scores x JOIN measures m ON m.id = x.measure_id
              WHERE x.study_id = $1 AND x.measure_id = sh.measure_id AND x.wave_id = sh.wave_id AND (x.score < m.min_score OR x.score > m.max_score))::int AS out_of_range
       FROM score_sheets sh WHERE sh.study_id = $1 GROUP BY sh.measure_id, sh.wave_id`,
    [studyId],
  );

  const boxes: { measure_id: string; wave_id: string; arm: Arm; site_id: string | null; site_name: string | null; n: number; q: number[] }[] = await db.query(
    `SELECT x.measure_id, x.wave_id, c.arm, c.site_id, s.name AS site_name, count(*)::int AS n,
            percentile_cont(ARRAY[0, 0.25, 0.5, 0.75, 1]) WITHIN GROUP (ORDER BY x.score::float8) AS q
       FROM scores x JOIN classrooms c ON c.id = x.classroom_id JOIN sites s ON s.id = c.site_id
      WHERE x.study_id = $1 AND x.score IS NOT NULL AND c.arm IS NOT NULL
      GROUP BY GROUPING SETS ((x.measure_id, x.wave_id, c.arm), (x.measure_id, x.wave_id, c.arm, c.site_id, s.name))`,
    [studyId],
  );

  const perMeasure = [];
  for (const m of measures) {
    // Analysed and lost: the locked result's own accounting (what it read), else the accepted sheets as they stand.
    const { accounting, runId: accountingRunId } = outcomeWaveId
      ? await accountingOf(db, { studyId, measureId: m.id, waveId: outcomeWaveId, pretest: needsPretest({ primaryTest: plan?.content.primaryTest ?? 'welch', covariate: plan?.content.covariate ?? 'none', scale: m.scale, hasBaselineWave: Boolean(baseline) }) ? baseline!.id : null })
      : { accounting: null, runId: null };

    // Baseline equivalence on the analytic sample: students with both a baseline and an outcome score.
    let equivalence = null;
    if (baseline && outcomeWaveId) {
      const rows: { arm: Arm; n: number; mean: number; sd: number; yes: number }[] = await db.query(
        `SELECT c.arm, count(*)::int AS n, avg(b.score::float8) AS mean, stddev_samp(b.score::float8) AS sd, sum(b.score)::int AS yes
           FROM scores b JOIN scores o ON o.student_code = b.student_code AND o.study_id = b.study_id AND o.wave_id = $3 AND o.measure_id = b.measure_id AND o.score IS NOT NULL
           JOIN classrooms c ON c.id = b.classroom_id
          WHERE b.study_id = $1 AND b.wave_id = $2 AND b.measure_id = $4 AND b.score IS NOT NULL AND c.arm IS NOT NULL
          GROUP BY c.arm`,
        [studyId, baseline.id, outcomeWaveId, m.id],
      );
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
