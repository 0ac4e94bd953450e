import type { DataSource } from 'typeorm';
import { defaultDigestSchedule, type DigestSchedule, type SessionUser } from '@evenhand/entities';
import { recordAudit } from '../audit/service.js';
import type { Logger } from '../logger.js';
import { findVisibleStudy } from '../studies/access.js';
import { saveScheduleSql, stuckDigestsSql, studyScheduleSql, studySchedulesSql, waveOpenOnSql, type ScheduleRow } from './queries.js';
import { createDigests, type DigestContext } from './service.js';

// The weekly schedule

const weekdayNumber: Record<string, number> = { Mon: 1, Tue: 2, Wed: 3, Thu: 4, Fri: 5, Sat: 6, Sun: 7 };

function localTime(at: Date, timeZone: string) {
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', hourCycle: 'h23', weekday: 'short' })
      .formatToParts(at)
      .map((p) => [p.type, p.value]),
  );
  return { date: `${parts.year}-${parts.month}-${parts.day}`, hour: Number(parts.hour), weekday: weekdayNumber[parts.weekday] };
}

const dayBefore = (isoDate: string) => new Date(Date.parse(`${isoDate}T00:00:00Z`) - 86_400_000).toISOString().slice(0, 10);

/**
 * The local date of this week's digest if it is due at `now`: from the chosen weekday and hour until a day later,
 * so a tick missed while the service was down is made up for, and the date in the key makes it happen once.
 */
export function dueWeeklySlot(now: Date, schedule: Pick<DigestSchedule, 'weekday' | 'hour' | 'timezone'>): string | null {
  const local = localTime(now, schedule.timezone);
  if (local.weekday === schedule.weekday && local.hour >= schedule.hour) return local.date;
  if (local.weekday === (schedule.weekday % 7) + 1 && local.hour < schedule.hour) return dayBefore(local.date);
  return null;
}

export interface TickContext extends DigestContext {
  db: DataSource;
  logger: Logger;
}

/** The scheduled tick: weekly digests for studies with an open wave, and a sweep of the outbox for stuck digests. */
export async function runDigestTick(ctx: TickContext, now = new Date()): Promise<{ weekly: number; requeued: number }> {
  const studies: ScheduleRow[] = await ctx.db.query(
    studySchedulesSql,
    [defaultDigestSchedule.weeklyEnabled, defaultDigestSchedule.weekday, defaultDigestSchedule.hour, defaultDigestSchedule.timezone],
  );
  let weekly = 0;
  for (const s of studies) {
    if (!s.weekly_enabled) continue;
    const slot = dueWeeklySlot(now, s);
    if (!slot) continue;
    try {
      weekly += await ctx.db.transaction(async (manager) => {
        const [open] = await manager.query(waveOpenOnSql, [s.study_id, slot]);
        if (!open) return 0;
        return (await createDigests(manager, ctx, { studyId: s.study_id, kind: 'weekly', key: `weekly:${s.study_id}:${slot}` })).queued;
      });
    } catch (err) {
      ctx.logger.error({ err, studyId: s.study_id }, 'weekly digests failed for a study');
    }
  }
  // A digest whose job was lost (a queue outage, a job dropped after its own retries) is picked up again here.
  const stuck: { id: string }[] = await ctx.db.query(stuckDigestsSql);
  for (const d of stuck) await ctx.jobs.enqueueDigest(ctx.db.manager, d.id);
  return { weekly, requeued: stuck.length };
}

export async function getSchedule(db: DataSource, user: SessionUser, studyId: string): Promise<DigestSchedule> {
  await findVisibleStudy(db.manager, user, studyId);
  const [row]: ScheduleRow[] = await db.query(studyScheduleSql, [studyId]);
  return row ? { weeklyEnabled: row.weekly_enabled, weekday: row.weekday, hour: row.hour, timezone: row.timezone } : { ...defaultDigestSchedule };
}

export async function saveSchedule(db: DataSource, user: SessionUser, studyId: string, input: DigestSchedule): Promise<DigestSchedule> {
  const before = await getSchedule(db, user, studyId);
  await db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    await manager.query(saveScheduleSql, [studyId, input.weeklyEnabled, input.weekday, input.hour, input.timezone, user.id]);
    await recordAudit(manager, { actorId: user.id, studyId, action: 'digest_schedule.changed', entityType: 'study', entityId: studyId, before, after: input });
  });
  return input;
}
