import type { DataSource, EntityManager } from 'typeorm';
import { benjaminiHochberg } from '@evenhand/stats';
import { decidingTest, smallCellViewerRoles, type Comparison, type ComparisonSchedule, type CreateComparison, type PlanContent, type PrincipalRun, type QueueRun, type Run, type RunResults, type SessionUser } from '@evenhand/entities';
import { recordAudit } from '../audit/service.js';
import { changeFeed } from '../db/change-feed.js';
import type { Deps } from '../deps.js';
import { createLockDigests } from '../digests/service.js';
import { AppError } from '../errors.js';
import type { Logger } from '../logger.js';
import { currentPlan } from '../plans/service.js';
import { findVisibleStudy, hasRole, sitesOf } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';
import { accountFor, needsPretest } from './accounting.js';
import { AnalysisError, analyse } from './engine.js';
import { bundleRowsSql, canonicalSummariesSql, gather, sheetStatesFor } from './gather.js';
import { principalView } from './principal-view.js';
import { checkSchedule, nextSlot, windowOf } from './schedule.js';

interface ComparisonRow {
  id: string;
  study_id: string;
  measure_id: string;
  measure_name: string;
  measure_kind: 'achievement' | 'behaviour';
  higher_is_better: boolean;
  measure_scale: 'score' | 'yes-no';
  wave_id: string;
  wave_name: string;
  label: string;
  unit_of_analysis: Comparison['unitOfAnalysis'];
  primary_test: Comparison['primaryTest'];
  covariate: Comparison['covariate'];
  prespecified: boolean;
  is_primary: boolean;
  schedule_cron: string | null;
  schedule_timezone: string;
  schedule_set_at: Date | null;
  opens_on: string;
  closes_on: string;
}

interface RunRow {
  id: string;
  comparison_id: string;
  study_id: string;
  kind: Run['kind'];
  state: Run['state'];
  reason: string | null;
  plan_version: number | null;
  engine_version: string | null;
  data_sha256: string | null;
  input_sheet_ids: string[];
  /** The arm of each classroom the run read (classroom id → arm), stored when it finished. */
  classroom_arms: Record<string, string> | null;
  results: RunResults | null;
  error: string | null;
  queued_at: Date;
  finished_at: Date | null;
  locked_at: Date | null;
  scheduled_for: Date | null;
  started_at: Date | null;
}

const comparisonSelect = `
  SELECT k.*, m.name AS measure_name, m.kind AS measure_kind, m.scale AS measure_scale, m.higher_is_better, w.name AS wave_name,
         w.opens_on::text AS opens_on, w.closes_on::text AS closes_on
    FROM comparisons k JOIN measures m ON m.id = k.measure_id JOIN waves w ON w.id = k.wave_id`;

function toRun(r: RunRow, multiplicity: Run['multiplicity'] = null): Run {
  return {
    id: r.id,
    comparisonId: r.comparison_id,
    studyId: r.study_id,
    kind: r.kind,
    state: r.state,
    reason: r.reason,
    planVersion: r.plan_version,
    engineVersion: r.engine_version,
    dataSha256: r.data_sha256,
    results: r.results,
    error: r.error,
    queuedAt: new Date(r.queued_at).toISOString(),
    finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
    lockedAt: r.locked_at ? new Date(r.locked_at).toISOString() : null,
    scheduledFor: r.scheduled_for ? new Date(r.scheduled_for).toISOString() : null,
    multiplicity,
  };
}

/** The sealed plan's comparisons: one per measure at the plan's primary wave, the primary measure first. */
async function ensurePrespecified(manager: EntityManager, studyId: string): Promise<void> {
  const plan = await currentPlan(manager, studyId);
  if (!plan) return;
  const p = plan.content;
  await manager.query(
    `INSERT INTO comparisons (study_id, measure_id, wave_id, label, unit_of_analysis, primary_test, covariate, prespecified, is_primary, created_by)
     SELECT $1, m.id, $2, m.name || ' at ' || w.name, $3, $4, $5, true, m.id = $6, $7
       FROM measures m JOIN waves w ON w.id = $2 WHERE m.study_id = $1
     ON CONFLICT (study_id, measure_id, wave_id) WHERE prespecified DO NOTHING`,
    [studyId, p.primaryWaveId, p.unitOfAnalysis, p.primaryTest, p.covariate, p.primaryMeasureId, plan.createdBy],
  );
}

export async function listComparisons(db: DataSource, user: SessionUser, studyId: string): Promise<{ items: Comparison[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  await ensurePrespecified(db.manager, studyId);
  const rows: ComparisonRow[] = await db.query(`${comparisonSelect} WHERE k.study_id = $1 ORDER BY k.prespecified DESC, k.is_primary DESC, k.created_at`, [studyId]);
  const runs: RunRow[] = await db.query(
    `SELECT DISTINCT ON (comparison_id) id, comparison_id, study_id, kind, state, reason, plan_version, engine_version, data_sha256,
            input_sheet_ids, NULL AS results, error, queued_at, finished_at, locked_at, scheduled_for
       FROM runs WHERE study_id = $1 ORDER BY comparison_id, queued_at DESC`,
    [studyId],
  );
  const locked: { comparison_id: string; id: string }[] = await db.query(`SELECT comparison_id, id FROM runs WHERE study_id = $1 AND state = 'locked'`, [studyId]);
  const finished: { comparison_id: string; id: string }[] = await db.query(
    `SELECT DISTINCT ON (comparison_id) comparison_id, id FROM runs WHERE study_id = $1 AND state IN ('finished', 'locked') ORDER BY comparison_id, queued_at DESC`,
    [studyId],
  );
  const [study]: { status: string }[] = await db.query(`SELECT status FROM studies WHERE id = $1`, [studyId]);
  const now = new Date();
  return {
    items: rows.map((k) => {
      const latest = runs.find((r) => r.comparison_id === k.id);
      const { results: _omit, ...latestRun } = latest ? toRun(latest) : { results: null };
      const lockedRunId = locked.find((l) => l.comparison_id === k.id)?.id ?? null;
      return {
        id: k.id,
        studyId: k.study_id,
        measureId: k.measure_id,
        measureName: k.measure_name,
        waveId: k.wave_id,
        waveName: k.wave_name,
        label: k.label,
        unitOfAnalysis: k.unit_of_analysis,
        primaryTest: k.primary_test,
        covariate: k.covariate,
        prespecified: k.prespecified,
        isPrimary: k.is_primary,
        scheduleCron: k.schedule_cron,
        scheduleTimezone: k.schedule_timezone,
        nextMonitoringRunAt: nextMonitoringRun(k, lockedRunId === null && study.status !== 'archived', now),
        latestRun: latest ? (latestRun as Comparison['latestRun']) : null,
        latestFinishedRunId: finished.find((f) => f.comparison_id === k.id)?.id ?? null,
        lockedRunId,
      };
    }),
    total: rows.length,
  };
}

/** What the web app shows beside a schedule; the tick decides from the same rules (see schedule.ts). */
function nextMonitoringRun(k: ComparisonRow, running: boolean, now: Date): string | null {
  if (!k.schedule_cron || !k.schedule_set_at || !running) return null;
  try {
    return nextSlot(windowOf({ ...k, schedule_cron: k.schedule_cron, schedule_set_at: k.schedule_set_at }), now)?.toISOString() ?? null;
  } catch {
    return null;
  }
}

/** Comparisons added after sealing are exploratory, and marked so everywhere. */
export async function createComparison(db: DataSource, user: SessionUser, studyId: string, input: CreateComparison): Promise<Comparison> {
  const id = await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    if (!(await currentPlan(manager, studyId))) throw AppError.conflict('Seal the plan first: its comparisons are the pre-specified ones');
    const [m] = await manager.query(`SELECT name FROM measures WHERE id = $1 AND study_id = $2`, [input.measureId, studyId]);
    const [w] = await manager.query(`SELECT name, kind FROM waves WHERE id = $1 AND study_id = $2`, [input.waveId, studyId]);
    const issues = [];
    if (!m) issues.push({ path: 'measureId', message: 'Choose one of this study’s measures' });
    if (!w) issues.push({ path: 'waveId', message: 'Choose one of this study’s waves' });
    else if (w.kind === 'baseline') issues.push({ path: 'waveId', message: 'Compare outcomes after baseline' });
    if (issues.length) throw AppError.validation('The comparison refers to things outside this study', issues);
    checkSchedule(input.scheduleCron, input.scheduleTimezone);
    const [row] = await manager.query(
      `INSERT INTO comparisons (study_id, measure_id, wave_id, label, unit_of_analysis, primary_test, covariate, prespecified, schedule_cron, schedule_timezone, schedule_set_at, created_by)
       VALUES ($1, $2, $3, $4, $5, $6, $7, false, $8, $9, CASE WHEN $8::varchar IS NULL THEN NULL ELSE now() END, $10) RETURNING id`,
      [studyId, input.measureId, input.waveId, input.label ?? `${m.name} at ${w.name} (exploratory)`, input.unitOfAnalysis, input.primaryTest, input.covariate, input.scheduleCron, input.scheduleTimezone, user.id],
    );
    await recordAudit(manager, { actorId: user.id, studyId, action: 'comparison.created', entityType: 'comparison', entityId: row.id, after: input });
    return row.id as string;
  });
  return (await listComparisons(db, user, studyId)).items.find((c) => c.id === id)!;
}

/**
 * Sets, changes or removes a comparison's automatic monitoring runs. The tick reads the comparisons table each minute,
 * so the new cron takes effect from its next slot; slots before now never fire.
 */
export async function setSchedule(db: DataSource, user: SessionUser, comparisonId: string, input: ComparisonSchedule): Promise<Comparison> {
  const studyId = await db.transaction(async (manager) => {
    const [k]: ComparisonRow[] = await manager.query(`${comparisonSelect} WHERE k.id = $1 FOR UPDATE OF k`, [comparisonId]);
    if (!k) throw AppError.notFound('The comparison');
    await findVisibleStudy(manager, user, k.study_id, true);
    checkSchedule(input.scheduleCron, input.scheduleTimezone);
    await manager.query(
      `UPDATE comparisons SET schedule_cron = $2, schedule_timezone = $3, schedule_set_at = CASE WHEN $2::varchar IS NULL THEN NULL ELSE now() END WHERE id = $1`,
      [comparisonId, input.scheduleCron, input.scheduleTimezone],
    );
    await recordAudit(manager, {
      actorId: user.id,
      studyId: k.study_id,
      action: input.scheduleCron ? 'comparison.schedule_set' : 'comparison.schedule_removed',
      entityType: 'comparison',
      entityId: comparisonId,
      before: { scheduleCron: k.schedule_cron, scheduleTimezone: k.schedule_timezone },
      after: input,
    });
    return k.study_id;
  });
  return (await listComparisons(db, user, studyId)).items.find((c) => c.id === comparisonId)!;
}

export async function queueRun(deps: Deps, user: SessionUser, comparisonId: string, input: QueueRun): Promise<Run> {
  const run = await deps.db.transaction(async (manager) => {
    const [k]: ComparisonRow[] = await manager.query(`${comparisonSelect} WHERE k.id = $1`, [comparisonId]);
    if (!k) throw AppError.notFound('The comparison');
    await findVisibleStudy(manager, user, k.study_id, true);
    const plan = await currentPlan(manager, k.study_id);
    if (!plan) throw AppError.conflict('Seal the plan before running comparisons');
    if (input.kind === 'confirmatory' && !k.prespecified) throw AppError.conflict('Only a pre-specified comparison can have a confirmatory run; exploratory ones run as monitoring');
    const [locked] = await manager.query(`SELECT 1 FROM runs WHERE comparison_id = $1 AND state = 'locked'`, [comparisonId]);
    if (locked && !(input.reason && input.reason.length >= 10)) {
      throw AppError.validation('This comparison already has a locked result; say why it is analysed again', [{ path: 'reason', message: 'Give the reason for the re-analysis' }]);
    }
    const [row]: RunRow[] = await manager.query(
      `INSERT INTO runs (comparison_id, study_id, kind, reason, plan_version, queued_by) VALUES ($1, $2, $3, $4, $5, $6) RETURNING *`,
      [comparisonId, k.study_id, input.kind, input.reason ?? null, plan.version, user.id],
    );
    await deps.jobs.enqueueRun(manager, row.id);
    await recordAudit(manager, { actorId: user.id, studyId: k.study_id, action: 'run.queued', entityType: 'run', entityId: row.id, after: input });
    // The first confirmatory run starts the analysis of the study.
    if (input.kind === 'confirmatory') await advanceStatus(manager, k.study_id, 'analysing', user.id);
    return row;
  });
  return toRun(run);
}

/**
 * Executes a queued run once: the state moves queued → running only for the first worker that gets it,
 * so a job delivered twice (or to two workers) computes once.
 */
export async function executeRun(db: DataSource, logger: Logger, runId: string): Promise<void> {
  // TypeORM answers an UPDATE … RETURNING with [rows, affected].
  const [claimedRows]: [RunRow[], number] = await db.query(`UPDATE runs SET state = 'running', started_at = now() WHERE id = $1 AND state = 'queued' RETURNING *`, [runId]);
  const claimed = claimedRows[0];
  if (!claimed) return;
  try {
    const results = await db.transaction('REPEATABLE READ', async (manager) => {
      const [k]: ComparisonRow[] = await manager.query(`${comparisonSelect} WHERE k.id = $1`, [claimed.comparison_id]);
      const [study] = await manager.query(`SELECT unit_of_assignment, quasi_experimental FROM studies WHERE id = $1`, [k.study_id]);
      const [planRow] = await manager.query(`SELECT content FROM plan_versions WHERE study_id = $1 AND version = $2`, [k.study_id, claimed.plan_version]);
      const plan = planRow.content as PlanContent;
      const [baseline] = await manager.query(`SELECT id FROM waves WHERE study_id = $1 AND kind = 'baseline' LIMIT 1`, [k.study_id]);
      const states = sheetStatesFor(claimed.kind);
      const data = await gather(manager, {
        studyId: k.study_id,
        measureId: k.measure_id,
        waveId: k.wave_id,
        baselineWaveId: k.covariate === 'baseline' ? (baseline?.id ?? null) : null,
        states,
      });
      // Who was analysed and who was lost, and why, in the same snapshot as the data: the run stores what it read.
      const pretest = needsPretest({ primaryTest: k.primary_test, covariate: k.covariate, scale: k.measure_scale, hasBaselineWave: Boolean(baseline) });
      const accounting = await accountFor(manager, { studyId: k.study_id, measureId: k.measure_id, waveId: k.wave_id, reads: states, pretestWaveId: pretest ? baseline.id : null });
      const computed = analyse(
        {
          kind: claimed.kind,
          plan,
          planVersion: claimed.plan_version,
          unitOfAssignment: study.unit_of_assignment,
          quasiExperimental: study.quasi_experimental,
          comparison: { unitOfAnalysis: k.unit_of_analysis, primaryTest: k.primary_test, covariate: k.covariate },
          measure: { id: k.measure_id, name: k.measure_name, kind: k.measure_kind, higherIsBetter: k.higher_is_better, scale: k.measure_scale },
          wave: { id: k.wave_id, name: k.wave_name },
        },
        data,
      );
      return { computed: { ...computed, accounting }, data };
    });
    // A finished confirmatory run moves its study's adjusted figures: cached locked answers are read afresh.
    changeFeed(db).expect(`runs:${claimed.study_id}`);
    await db.query(
      `UPDATE runs SET state = 'finished', finished_at = now(), results = $2, engine_version = $3, data_sha256 = $4, input_sheet_ids = $5, classroom_arms = $6 WHERE id = $1`,
      [runId, results.computed, results.computed.engineVersion, results.data.dataSha256, results.data.sheetIds, Object.fromEntries(results.data.classrooms.map((c) => [c.classroomId, c.arm]))],
    );
  } catch (err) {
    const known = err instanceof AnalysisError || (err as Error).name === 'StatsInputError';
    if (!known) logger.error({ err, runId }, 'run failed unexpectedly');
    const message = known ? (err as Error).message : 'The run failed on our side; the error has been logged';
    await db.query(`UPDATE runs SET state = 'failed', finished_at = now(), error = $2 WHERE id = $1`, [runId, message]);
  }
}

async function loadRun(manager: EntityManager, user: SessionUser, runId: string): Promise<RunRow> {
  const [run]: RunRow[] = await manager.query(`SELECT * FROM runs WHERE id = $1`, [runId]);
  if (!run) throw AppError.notFound('The run');
  await findVisibleStudy(manager, user, run.study_id);
  return run;
}

/**
 * Benjamini–Hochberg across the study's confirmatory comparisons, using each one's locked (else latest finished) run
 * and the p of its deciding analysis.
 */
async function multiplicityFor(manager: EntityManager, run: RunRow): Promise<Run['multiplicity']> {
  if (run.kind !== 'confirmatory' || !run.results) return null;
  const latest: { id: string; primary: RunResults['primary']; clustering: RunResults['clustering']; deciding: RunResults['deciding'] | null }[] = await manager.query(
    `SELECT DISTINCT ON (r.comparison_id) r.id, r.results->'primary' AS primary, r.results->'clustering' AS clustering, r.results->'deciding' AS deciding
       FROM runs r JOIN comparisons k ON k.id = r.comparison_id
      WHERE r.study_id = $1 AND r.kind = 'confirmatory' AND r.state IN ('finished', 'locked') AND k.prespecified
      ORDER BY r.comparison_id, (r.state = 'locked') DESC, r.finished_at DESC`,
    [run.study_id],
  );
  const rows = latest.map((r) => ({ id: r.id, p: decidingTest({ primary: r.primary, clustering: r.clustering, deciding: r.deciding ?? undefined }).p }));
  if (!rows.some((r) => r.id === run.id)) rows.push({ id: run.id, p: decidingTest(run.results).p });
  const bh = benjaminiHochberg(rows.map((r) => r.p), run.results.alpha);
  const i = rows.findIndex((r) => r.id === run.id);
  return { adjustedP: bh.adjusted[i], rejected: bh.rejected[i], comparisons: rows.length };
}

/** The whole run for those who see small cells; a principal gets a locked run's principal view (./principal-view.ts). */
export async function getRun(db: DataSource, user: SessionUser, runId: string): Promise<Run | PrincipalRun> {
  const run = await loadRun(db.manager, user, runId);
  const full = toRun(run, await multiplicityFor(db.manager, run));
  if (hasRole(user, ...smallCellViewerRoles)) return full;
  if (run.state !== 'locked') throw AppError.notFound('The run');
  return principalView(full, sitesOf(user, 'principal'));
}

/**
 * Freezes a finished confirmatory run and every score sheet it read; the database refuses any later change.
 * The principals' digests go into the outbox in the same transaction, so a lock is never announced twice or not at all.
 */
export async function lockRun(deps: Pick<Deps, 'db' | 'config' | 'jobs'>, user: SessionUser, runId: string): Promise<Run | PrincipalRun> {
  const { db } = deps;
  await db.transaction(async (manager) => {
    await manager.query(`SELECT 1 FROM runs WHERE id = $1 FOR UPDATE`, [runId]);
    const run = await loadRun(manager, user, runId);
    if (run.state === 'locked') throw AppError.conflict('This run is already locked');
    if (run.kind !== 'confirmatory') throw AppError.conflict('Only a confirmatory run can be locked; monitoring runs are interim');
    if (run.state !== 'finished') throw AppError.conflict(`Only a finished run can be locked; this one is ${run.state}`);
    const [other] = await manager.query(`SELECT id FROM runs WHERE comparison_id = $1 AND state = 'locked'`, [run.comparison_id]);
    if (other) throw AppError.conflict('This comparison already has a locked result; a re-analysis stays unlocked');
    // A result computed on arms that have since changed by hand would be locked on an allocation that no longer holds.
    const [moved] = await manager.query(
      `SELECT c.name FROM draw_reassignments x JOIN draws d ON d.id = x.draw_id JOIN classrooms c ON c.id = x.classroom_id WHERE d.study_id = $1 AND x.at >= $2 ORDER BY x.at LIMIT 1`,
      [run.study_id, run.started_at],
    );
    if (moved) throw AppError.conflict(`Classroom ${moved.name} was reassigned after this run read the data; run the comparison again and lock that run`);
    await manager.query(`UPDATE score_sheets SET locked = true WHERE id = ANY($1) AND NOT locked`, [run.input_sheet_ids]);
    changeFeed(db).expect(`runs:${run.study_id}`);
    await manager.query(`UPDATE runs SET state = 'locked', locked_at = now(), locked_by = $2 WHERE id = $1`, [runId, user.id]);
    await recordAudit(manager, {
      actorId: user.id,
      studyId: run.study_id,
      action: 'run.locked',
      entityType: 'run',
      entityId: runId,
      after: { dataSha256: run.data_sha256, engineVersion: run.engine_version, planVersion: run.plan_version },
    });
    await createLockDigests(manager, deps, run.study_id, runId);
    // Every pre-specified comparison locked: the study's result is reported.
    const [open] = await manager.query(
      `SELECT 1 FROM comparisons k WHERE k.study_id = $1 AND k.prespecified AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.comparison_id = k.id AND r.state = 'locked') LIMIT 1`,
      [run.study_id],
    );
    if (!open) await advanceStatus(manager, run.study_id, 'reported', user.id);
  });
  return getRun(db, user, runId);
}

const README = `Evenhand reproducibility bundle

This file holds everything needed to recompute a locked comparison:
- plan: the sealed plan version the run followed (alpha, sidedness, primary test, covariate, ICC rule);
- draw: the seeded random assignment (seed, algorithm, blocks, result) and any recorded reassignments;
- rows: "classroom_id,arm,student_code,outcome,pretest", one line per student with an outcome or a pretest score,
  either empty when missing, in byte order of classroom ID, then of student code. The students with an outcome are
  the ones analysed; those with both scores are the baseline-adjusted check's pairs. Student codes only, never names;
- summaries: one line per classroom that reported only a summary of the outcome,
  "summary,classroom_id,arm,n,mean,sd", in byte order. They count in the t tests and effect sizes, not in the
  rank, median, normality or baseline-adjusted checks;
- classrooms: each classroom's school (site), for the two-level model's blocks or, when schools were assigned, its units;
- accounting: who was analysed and who was lost, and why (the same as results.accounting, stored when the run read
  the data), per arm in classrooms and students: randomised (the classrooms the draw gave an arm and the student
  codes registered to them), analysed (students with an outcome score on a sheet the run read and, when "needsPretest"
  is true, a pretest score; classrooms with an analysed student) and the others by reason: "sheet-not-entered",
  "sheet-not-submitted", "awaiting-review" and "returned" (the classroom's outcome sheet was not read; all its
  students share the reason), "left-study" (marked as having left), "no-outcome-score" (registered, no outcome score
  on the sheet read), "no-pretest" (an outcome score but no pretest, which the analysis adjusts for).
  "lostClassrooms" lists each classroom not analysed with its reason; "attrition" is worked out from these counts
  (overall and differential, against both published boundaries). The analysed students per arm are the rows with an
  outcome (and a pretest when "needsPretest"), plus the summaries' n when it is false;
- results: the numbers Evenhand computed, with the statistics engine's version.

To check the data: for each classroom (its rows are consecutive), take "student_code,outcome" of the rows with an
outcome, joined with a newline ("\\n"), and compute the SHA-256 as lowercase hex: the outcome digest; the same with
"student_code,pretest" of the rows with a pretest gives the pretest digest (left empty when there is none). The
SHA-256 of the lines "classroom_id,arm,outcome digest,pretest digest", in the rows' order, followed by the summaries,
all joined with a newline, must equal dataSha256.
To check the numbers: per arm, merge the analysed rows' n, mean and sum of squared deviations with each summary's
(n, mean, (n − 1)·sd²), and recompute with the same engine version of @evenhand/stats
(for example welchTFromSummary on each arm's n, mean and SD, hedgesG, clusterAdjusted with the plan's ICC),
or with any statistics library: Welch's t with the Welch–Satterthwaite degrees of freedom, Hedges' g with the
exact small-sample correction, and the clustering correction of Hedges (2007).
When the comparison registered the two-level model (results.twoLevel): take the rows with an outcome (and, when the
comparison adjusts for the pretest, a pretest too) and fit y = intercept + arm + block indicators + pretest + a random
intercept per unit, by restricted maximum likelihood, with Satterthwaite degrees of freedom for the arm; the unit is
the classroom (or its school when schools were assigned) and the blocks are the classrooms' schools when classrooms
were assigned in two or more schools. With @evenhand/stats: twoLevelFromRows({ y, arm, cluster, block, covariates:
[pretest] }); the cluster-robust check is clusterRobustFromRows with the same fields (CR2 errors, Pustejovsky–Tipton
degrees of freedom). Any mixed-model library fitting the same model gives the same numbers.
When the measure is yes/no (results.yesNo): each outcome is 1 (yes) or 0 (no); per arm count the yes answers and the
rows with an outcome, and recompute with proportionWithInterval (Wilson), proportionDifference (Newcombe), oddsRatio,
coxIndexFromCounts, twoProportionZTest, chiSquareTest and fisherExactTest; when classrooms or schools were assigned,
the deciding difference is clusterRobustFromRows({ y, arm, cluster, block }) on the 0/1 rows, without the pretest.`;

export async function runBundle(db: DataSource, user: SessionUser, runId: string) {
  const run = await loadRun(db.manager, user, runId);
  if (run.state !== 'locked' && run.state !== 'finished') throw AppError.conflict('Only a finished or locked run has a bundle');
  const [k]: ComparisonRow[] = await db.query(`${comparisonSelect} WHERE k.id = $1`, [run.comparison_id]);
  const [plan] = await db.query(`SELECT version, content, sha256, created_at FROM plan_versions WHERE study_id = $1 AND version = $2`, [run.study_id, run.plan_version]);
  const [draw] = await db.query(`SELECT seed, algorithm, algorithm_version, unit, blocks, assignments, committed_at FROM draws WHERE study_id = $1`, [run.study_id]);
  // The reassignments the run saw; later ones (refused once a result is locked) did not change what it read.
  const reassignments = draw
    ? await db.query(`SELECT classroom_id, from_arm, to_arm, reason, at FROM draw_reassignments r JOIN draws d ON d.id = r.draw_id WHERE d.study_id = $1 AND r.at < $2 ORDER BY at`, [run.study_id, run.started_at])
    : [];
  const inputs: { id: string; classroom_id: string; mode: string; outcome: boolean }[] = await db.query(
    `SELECT sh.id, sh.classroom_id, sh.mode, sh.wave_id = $2 AS outcome FROM unnest($1::uuid[]) AS ids(id) JOIN score_sheets sh ON sh.id = ids.id`,
    [run.input_sheet_ids, k.wave_id],
  );
  const baselineOf = new Map(inputs.filter((s) => !s.outcome).map((s) => [s.classroom_id, s.id]));
  const outcomes = inputs.filter((s) => s.outcome);
  const rowSheets = outcomes.filter((s) => s.mode === 'rows');
  // The arms the run read, never today's: a later reassignment does not change a result's bundle.
  const arms = run.classroom_arms ?? {};
  const lines: { line: string }[] = await db.query(bundleRowsSql, [rowSheets.map((s) => s.id), rowSheets.map((s) => baselineOf.get(s.classroom_id) ?? null), arms]);
  const summaries: { line: string }[] = await db.query(`SELECT line FROM (${canonicalSummariesSql}) summaries ORDER BY line COLLATE "C"`, [outcomes.map((s) => s.id), arms]);
  // Each classroom's school: the two-level model's blocks (classroom assignment) or units (school assignment).
  const schools: { classroom_id: string; site_id: string }[] = await db.query(
    `SELECT c.id AS classroom_id, c.site_id FROM unnest($1::uuid[]) AS ids(id) JOIN classrooms c ON c.id = ids.id ORDER BY c.id::text COLLATE "C"`,
    [outcomes.map((s) => s.classroom_id)],
  );
  return {
    readme: README,
    run: { id: run.id, kind: run.kind, state: run.state, lockedAt: run.locked_at, reason: run.reason },
    comparison: { id: k.id, label: k.label, measure: k.measure_name, wave: k.wave_name, unitOfAnalysis: k.unit_of_analysis, primaryTest: k.primary_test, covariate: k.covariate, prespecified: k.prespecified },
    engineVersion: run.engine_version,
    dataSha256: run.data_sha256,
    plan,
    draw: draw ? { ...draw, reassignments } : null,
    rows: lines.map((l) => l.line),
    summaries: summaries.map((l) => l.line),
    classrooms: schools.map((c) => ({ classroomId: c.classroom_id, siteId: c.site_id })),
    // What the run stored when it read the data; null for a run made before it was stored.
    accounting: run.results?.accounting ?? null,
    results: run.results,
  };
}
