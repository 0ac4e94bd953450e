import type { DataSource, EntityManager } from 'typeorm';
import type { Comparison, ComparisonSchedule, CreateComparison, SessionUser } from '@evenhand/entities';
import { MeasureEntity, StudyEntity, WaveEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import { currentPlan } from '../plan/service.js';
import { findVisibleStudy } from '../studies/access.js';
import {
  comparisonForUpdateSql,
  insertExploratorySql,
  insertPrespecifiedSql,
  latestFinishedRunsSql,
  latestRunsSql,
  lockedRunsSql,
  setScheduleSql,
  studyComparisonsSql,
  toRun,
  type ComparisonRow,
  type RunRow,
} from './queries.js';
import { checkSchedule, nextSlot, windowOf } from './schedule.js';

// A study's comparisons: the sealed plan's pre-specified ones, exploratory ones added later, and their monitoring schedules.

/** The sealed plan's comparisons: one per measure at the plan's primary wave, the primary measure first. */
async function ensurePrespecified(manager: EntityManager, studyId: string): Promise<void> {
  const plan = await currentPlan(manager, studyId);
  if (!plan) return;
  const p = plan.content;
  await manager.query(insertPrespecifiedSql, [studyId, p.primaryWaveId, p.unitOfAnalysis, p.primaryTest, p.covariate, p.primaryMeasureId, plan.createdBy]);
}

export async function listComparisons(db: DataSource, user: SessionUser, studyId: string): Promise<{ items: Comparison[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  await ensurePrespecified(db.manager, studyId);
  const rows: ComparisonRow[] = await db.query(studyComparisonsSql, [studyId]);
  const runs: RunRow[] = await db.query(latestRunsSql, [studyId]);
  const locked: { comparison_id: string; id: string }[] = await db.query(lockedRunsSql, [studyId]);
  const finished: { comparison_id: string; id: string }[] = await db.query(latestFinishedRunsSql, [studyId]);
  const study = await db.manager.findOneByOrFail(StudyEntity, { id: studyId });
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
    const m = await manager.findOneBy(MeasureEntity, { id: input.measureId, studyId });
    const w = await manager.findOneBy(WaveEntity, { id: input.waveId, studyId });
    const issues = [];
    if (!m) issues.push({ path: 'measureId', message: 'Choose one of this study’s measures' });
    if (!w) issues.push({ path: 'waveId', message: 'Choose one of this study’s waves' });
    else if (w.kind === 'baseline') issues.push({ path: 'waveId', message: 'Compare outcomes after baseline' });
    if (issues.length) throw AppError.validation('The comparison refers to things outside this study', issues);
    checkSchedule(input.scheduleCron, input.scheduleTimezone);
    const [row] = await manager.query(insertExploratorySql, [
      studyId,
      input.measureId,
      input.waveId,
      input.label ?? `${m!.name} at ${w!.name} (exploratory)`,
      input.unitOfAnalysis,
      input.primaryTest,
      input.covariate,
      input.scheduleCron,
      input.scheduleTimezone,
      user.id,
    ]);
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
    const [k]: ComparisonRow[] = await manager.query(comparisonForUpdateSql, [comparisonId]);
    if (!k) throw AppError.notFound('The comparison');
    await findVisibleStudy(manager, user, k.study_id, true);
    checkSchedule(input.scheduleCron, input.scheduleTimezone);
    await manager.query(setScheduleSql, [comparisonId, input.scheduleCron, input.scheduleTimezone]);
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
