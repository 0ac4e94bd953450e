import type { DataSource } from 'typeorm';
import { attrition, baselineEquivalence, baselineEquivalenceYesNo, coxIndexFromCounts, hedgesGFromSummary, normalQuantile } from '@evenhand/stats';
import type { Arm, SessionUser } from '@evenhand/entities';
import { currentPlan } from '../plans/service.js';
import { findVisibleStudy } from '../studies/access.js';
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
    // Attrition: randomised = codes registered to each arm's classrooms; analysed = those with an outcome score.
    const counts: { arm: Arm; randomized: number; analyzed: number; classrooms: number; classrooms_analyzed: number }[] = outcomeWaveId
      ? await db.query(
          `SELECT c.arm, count(DISTINCT st.student_code)::int AS randomized,
                  count(DISTINCT x.student_code) FILTER (WHERE x.score IS NOT NULL)::int AS analyzed,
                  count(DISTINCT c.id)::int AS classrooms,
                  count(DISTINCT x.classroom_id) FILTER (WHERE x.score IS NOT NULL)::int AS classrooms_analyzed
             FROM classrooms c
             LEFT JOIN students st ON st.classroom_id = c.id AND st.study_id = c.study_id
             LEFT JOIN scores x ON x.student_code = st.student_code AND x.study_id = c.study_id AND x.wave_id = $2 AND x.measure_id = $3
            WHERE c.study_id = $1 AND c.arm IS NOT NULL GROUP BY c.arm`,
          [studyId, outcomeWaveId, m.id],
        )
      : [];
    const arm = (a: Arm) => counts.find((c) => c.arm === a);
    const i = arm('intervention');
    const c = arm('comparison');
    const attritionStudents = i && c && i.randomized > 0 && c.randomized > 0 ? attrition({ randomized1: i.randomized, analyzed1: i.analyzed, randomized2: c.randomized, analyzed2: c.analyzed }) : null;
    const attritionClassrooms = i && c && i.classrooms > 0 && c.classrooms > 0 ? attrition({ randomized1: i.classrooms, analyzed1: i.classrooms_analyzed, randomized2: c.classrooms, analyzed2: c.classrooms_analyzed }) : null;

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
      attrition: { students: attritionStudents, classrooms: attritionClassrooms, counts },
      baselineEquivalence: equivalence,
      // Baseline equivalence is required when assignment was not (or no longer) random, or attrition is high.
      equivalenceRequired: study.quasiExperimental || attritionStudents?.cautious.band === 'high',
    });
  }
  return { studyId, quasiExperimental: study.quasiExperimental, outcomeWaveId: outcomeWaveId ?? null, measures: perMeasure };
}
