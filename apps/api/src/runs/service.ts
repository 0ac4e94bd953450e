import type { DataSource, EntityManager } from 'typeorm';
import { benjaminiHochberg } from '@evenhand/stats';
import { decidingTest, smallCellViewerRoles, type PrincipalRun, type QueueRun, type Run, type RunResults, type SessionUser } from '@evenhand/entities';
import { PlanVersionEntity, StudyEntity, WaveEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { changeFeed } from '../db/change-feed.js';
import type { Deps } from '../deps.js';
import { createLockDigests } from '../digests/service.js';
import { storeLockedVerdicts } from '../evidence/service.js';
import { AppError } from '../errors.js';
import type { Logger } from '../logger.js';
import { currentPlan } from '../plan/service.js';
import { findVisibleStudy, hasRole, sitesOf } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';
import { accountFor, needsPretest } from './accounting.js';
import { AnalysisError, analyse } from './engine.js';
import { gather, sheetStatesFor } from './gather.js';
import { principalView } from './principal-view.js';
import {
  bundleDrawSql,
  bundlePlanSql,
  bundleRowsSql,
  claimRunSql,
  classroomSchoolsSql,
  comparisonSql,
  failRunSql,
  finishRunSql,
  inputSheetsSql,
  insertRunSql,
  lockedRunOfComparisonSql,
  lockSheetsSql,
  markLockedSql,
  multiplicityRunsSql,
  openPrespecifiedSql,
  reassignedSinceSql,
  reassignmentsBeforeSql,
  runForUpdateSql,
  runSql,
  summaryLinesSql,
  toRun,
  type ComparisonRow,
  type RunRow,
} from './queries.js';

// Runs of a comparison: queued, executed once by a worker, read (whole or as a principal's view), locked, bundled.
// The comparisons themselves are in ./comparisons.ts.

export async function queueRun(deps: Deps, user: SessionUser, comparisonId: string, input: QueueRun): Promise<Run> {
  const run = await deps.db.transaction(async (manager) => {
    const [k]: ComparisonRow[] = await manager.query(comparisonSql, [comparisonId]);
    if (!k) throw AppError.notFound('The comparison');
    await findVisibleStudy(manager, user, k.study_id, true);
    const plan = await currentPlan(manager, k.study_id);
    if (!plan) throw AppError.conflict('Seal the plan before running comparisons');
    if (input.kind === 'confirmatory' && !k.prespecified) throw AppError.conflict('Only a pre-specified comparison can have a confirmatory run; exploratory ones run as monitoring');
    const [locked] = await manager.query(lockedRunOfComparisonSql, [comparisonId]);
    if (locked && !(input.reason && input.reason.length >= 10)) {
      throw AppError.validation('This comparison already has a locked result; say why it is analysed again', [{ path: 'reason', message: 'Give the reason for the re-analysis' }]);
    }
    const [row]: RunRow[] = await manager.query(insertRunSql, [comparisonId, k.study_id, input.kind, input.reason ?? null, plan.version, user.id]);
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
  const [claimedRows]: [RunRow[], number] = await db.query(claimRunSql, [runId]);
  const claimed = claimedRows[0];
  if (!claimed) return;
  try {
    await db.transaction('REPEATABLE READ', async (manager) => {
      const [k]: ComparisonRow[] = await manager.query(comparisonSql, [claimed.comparison_id]);
      const study = await manager.findOneByOrFail(StudyEntity, { id: k.study_id });
      const { content: plan } = await manager.findOneByOrFail(PlanVersionEntity, { studyId: k.study_id, version: claimed.plan_version! });
      const baseline = await manager.findOneBy(WaveEntity, { studyId: k.study_id, kind: 'baseline' });
      const states = sheetStatesFor(claimed.kind);
      const baselineWaveId: string | null = k.covariate === 'baseline' ? (baseline?.id ?? null) : null;
      const data = await gather(manager, {
        studyId: k.study_id,
        measureId: k.measure_id,
        waveId: k.wave_id,
        baselineWaveId,
        states,
        yesNo: k.measure_scale === 'yes-no',
      });
      // Who was analysed and who was lost, and why, in the same snapshot as the data: the run stores what it read.
      const pretest = needsPretest({ primaryTest: k.primary_test, covariate: k.covariate, scale: k.measure_scale, hasBaselineWave: Boolean(baseline) });
      const accounting = await accountFor(manager, { studyId: k.study_id, measureId: k.measure_id, waveId: k.wave_id, reads: states, pretestWaveId: pretest ? baseline!.id : null }, data.read);
      const computed = analyse(
        {
          kind: claimed.kind,
          plan,
          planVersion: claimed.plan_version,
          unitOfAssignment: study.unitOfAssignment,
          quasiExperimental: study.quasiExperimental,
          comparison: { unitOfAnalysis: k.unit_of_analysis, primaryTest: k.primary_test, covariate: k.covariate },
          measure: { id: k.measure_id, name: k.measure_name, kind: k.measure_kind, higherIsBetter: k.higher_is_better, scale: k.measure_scale },
          wave: { id: k.wave_id, name: k.wave_name },
        },
        data,
      );
      // A finished confirmatory run moves its study's adjusted figures: cached locked answers are read afresh.
      changeFeed(db).expect(`runs:${claimed.study_id}`);
      const results = { ...computed, accounting };
      // Every classroom with an arm as this run read it: the arms its bundle and the reassignment guard use. Written
      // out (IDs and arms need no escaping): an object of 80 000 keys cost a fifth of a second to build and encode.
      const arms = `{${data.read.map((c) => `"${c.classroomId}":"${c.arm}"`).join(',')}}`;
      await manager.query(finishRunSql, [runId, results, results.engineVersion, data.dataSha256, k.study_id, k.wave_id, baselineWaveId, k.measure_id, states, arms]);
    });
  } catch (err) {
    const known = err instanceof AnalysisError || (err as Error).name === 'StatsInputError';
    if (!known) logger.error({ err, runId }, 'run failed unexpectedly');
    const message = known ? (err as Error).message : 'The run failed on our side; the error has been logged';
    await db.query(failRunSql, [runId, message]);
  }
}

async function loadRun(manager: EntityManager, user: SessionUser, runId: string, forUpdate = false): Promise<RunRow> {
  const [run]: RunRow[] = await manager.query(forUpdate ? runForUpdateSql : runSql, [runId]);
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
    multiplicityRunsSql,
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
    const run = await loadRun(manager, user, runId, true);
    if (run.state === 'locked') throw AppError.conflict('This run is already locked');
    if (run.kind !== 'confirmatory') throw AppError.conflict('Only a confirmatory run can be locked; monitoring runs are interim');
    if (run.state !== 'finished') throw AppError.conflict(`Only a finished run can be locked; this one is ${run.state}`);
    const [other] = await manager.query(lockedRunOfComparisonSql, [run.comparison_id]);
    if (other) throw AppError.conflict('This comparison already has a locked result; a re-analysis stays unlocked');
    // A result computed on arms that have since changed by hand would be locked on an allocation that no longer holds.
    const [moved] = await manager.query(reassignedSinceSql, [run.study_id, run.started_at]);
    if (moved) throw AppError.conflict(`Classroom ${moved.name} was reassigned after this run read the data; run the comparison again and lock that run`);
    await manager.query(lockSheetsSql, [run.input_sheet_ids]);
    changeFeed(db).expect(`runs:${run.study_id}`);
    await manager.query(markLockedSql, [runId, user.id]);
    await recordAudit(manager, {
      actorId: user.id,
      studyId: run.study_id,
      action: 'run.locked',
      entityType: 'run',
      entityId: runId,
      after: { dataSha256: run.data_sha256, engineVersion: run.engine_version, planVersion: run.plan_version },
    });
    // The evidence verdict is stored with the lock, so the principals' digests below and every later reader show it as locked.
    await storeLockedVerdicts(manager, user, run.study_id, runId);
    await createLockDigests(manager, deps, run.study_id, runId);
    // Every pre-specified comparison locked: the study's result is reported.
    const [open] = await manager.query(openPrespecifiedSql, [run.study_id]);
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
- results: the numbers Evenhand computed, with the statistics engine's version;
- evidence: the evidence verdict as the report shows it, with every reason and the attrition boundary it was judged
  against ("cautious" or "optimistic", and why): for a locked run the verdict stored when it was locked, for a finished
  run its comparison's current verdict when that verdict reads this run, and null otherwise (an exploratory comparison,
  or an older run). It is Evenhand's preview of a rating; the evidence reviewers decide.

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
  const [k]: ComparisonRow[] = await db.query(comparisonSql, [run.comparison_id]);
  const [plan] = await db.query(bundlePlanSql, [run.study_id, run.plan_version]);
  const [draw] = await db.query(bundleDrawSql, [run.study_id]);
  // The reassignments the run saw; later ones (refused once a result is locked) did not change what it read.
  const reassignments = draw ? await db.query(reassignmentsBeforeSql, [run.study_id, run.started_at]) : [];
  const inputs: { id: string; classroom_id: string; mode: string; outcome: boolean }[] = await db.query(inputSheetsSql, [run.input_sheet_ids, k.wave_id]);
  const baselineOf = new Map(inputs.filter((s) => !s.outcome).map((s) => [s.classroom_id, s.id]));
  const outcomes = inputs.filter((s) => s.outcome);
  const rowSheets = outcomes.filter((s) => s.mode === 'rows');
  // The arms the run read, never today's: a later reassignment does not change a result's bundle.
  const arms = run.classroom_arms ?? {};
  const lines: { line: string }[] = await db.query(bundleRowsSql, [rowSheets.map((s) => s.id), rowSheets.map((s) => baselineOf.get(s.classroom_id) ?? null), arms]);
  const summaries: { line: string }[] = await db.query(summaryLinesSql, [outcomes.map((s) => s.id), arms]);
  // Each classroom's school: the two-level model's blocks (classroom assignment) or units (school assignment).
  const schools: { classroom_id: string; site_id: string }[] = await db.query(classroomSchoolsSql, [outcomes.map((s) => s.classroom_id)]);
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
