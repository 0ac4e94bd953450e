import cronParser from 'cron-parser';
import type { DataSource } from 'typeorm';
import { recordAudit } from '../audit/service.js';
import { AppError } from '../errors.js';
import type { JobQueue } from '../jobs/queue.js';
import type { Logger } from '../logger.js';
import { insertScheduledRunSql, scheduledComparisonsSql, type ScheduledRow } from './queries.js';

/**
 * Scheduled monitoring runs. pg-boss 10 keys a schedule by its queue name, so instead of one pg-boss schedule per
 * comparison there is one tick a minute (MONITORING_TICK_CRON); the tick reads every comparison's own cron from the
 * comparisons table (the only source of truth, so a created, changed or removed cron needs no re-registration) and
 * queues the runs that are due. The unique (comparison, slot) index makes two processes ticking at once queue one run.
 */
export const MONITORING_TICK_CRON = '* * * * *';

/** A slot whose tick was missed (every process down) is still run this long after it; later it is skipped. */
export const CATCH_UP_MINUTES = 60;

/** Refuses a cron expression cron-parser cannot read, with the field's path for the form. */
export function checkSchedule(cron: string | null, timeZone: string): void {
  if (cron === null) return;
  try {
    cronParser.parseExpression(cron, { tz: timeZone });
  } catch (err) {
    throw AppError.validation('The schedule is not a cron expression we can read', [{ path: 'scheduleCron', message: `Not a valid cron expression: ${(err as Error).message}` }]);
  }
}

/** The latest time at or before `now` that the cron names. */
export function latestSlot(cron: string, timeZone: string, now: Date): Date {
  // prev() is strictly before its start, so start one second after `now`, cut to the second (cron has no seconds field).
  const start = new Date(Math.floor(now.getTime() / 1000) * 1000 + 1000);
  return cronParser.parseExpression(cron, { tz: timeZone, currentDate: start }).prev().toDate();
}

const formats = new Map<string, Intl.DateTimeFormat>();

function wallClock(at: Date, timeZone: string) {
  let f = formats.get(timeZone);
  if (!f) {
    f = new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' });
    formats.set(timeZone, f);
  }
  return Object.fromEntries(f.formatToParts(at).map((p) => [p.type, p.value]));
}

/** The calendar date of an instant in a time zone, as YYYY-MM-DD (waves open and close on such dates). */
export function localDate(at: Date, timeZone: string): string {
  const parts = wallClock(at, timeZone);
  return `${parts.year}-${parts.month}-${parts.day}`;
}

/** An instant shortly before a local date begins in a time zone (an hour early, so a daylight-saving change cannot skip it). */
function shortlyBefore(isoDate: string, timeZone: string): number {
  const utcMidnight = Date.parse(`${isoDate}T00:00:00Z`);
  const p = wallClock(new Date(utcMidnight), timeZone);
  const offset = Date.UTC(Number(p.year), Number(p.month) - 1, Number(p.day), Number(p.hour), Number(p.minute)) - utcMidnight;
  return utcMidnight - offset - 3_600_000;
}

export interface ScheduleWindow {
  cron: string;
  timeZone: string;
  /** The wave's first and last day (YYYY-MM-DD), read in the schedule's time zone. */
  opensOn: string;
  closesOn: string;
  /** Slots before this never fire. */
  setAt: Date;
}

/** The first slot after `now` (and not before the schedule was set) that falls on a day the wave is open; null if none is left. */
export function nextSlot(w: ScheduleWindow, now: Date): Date | null {
  const start = new Date(Math.max(now.getTime(), w.setAt.getTime() - 1000, shortlyBefore(w.opensOn, w.timeZone)));
  const interval = cronParser.parseExpression(w.cron, { tz: w.timeZone, currentDate: start });
  // Bounded: at most the hour's margin of minutes falls before the wave's first local day.
  for (let i = 0; i < 200; i++) {
    const at = interval.next().toDate();
    const day = localDate(at, w.timeZone);
    if (day > w.closesOn) return null;
    if (day >= w.opensOn) return at;
  }
  return null;
}

/** Whether a tick at `now` should queue the slot `slot`: not before the schedule existed, not too stale, inside the wave. */
export function isDue(w: ScheduleWindow, slot: Date, now: Date): boolean {
  if (slot.getTime() < w.setAt.getTime()) return false;
  if (now.getTime() - slot.getTime() > CATCH_UP_MINUTES * 60_000) return false;
  const day = localDate(slot, w.timeZone);
  return day >= w.opensOn && day <= w.closesOn;
}


export const windowOf = (r: Pick<ScheduledRow, 'schedule_cron' | 'schedule_timezone' | 'schedule_set_at' | 'opens_on' | 'closes_on'>): ScheduleWindow => ({
  cron: r.schedule_cron,
  timeZone: r.schedule_timezone,
  opensOn: r.opens_on,
  closesOn: r.closes_on,
  setAt: new Date(r.schedule_set_at),
});

export interface TickDeps {
  db: DataSource;
  jobs: Pick<JobQueue, 'enqueueRun'>;
  logger: Logger;
}

/**
 * The schedule's tick: queues a monitoring run for every comparison whose cron names a slot that is due and has no
 * run yet. Any number of processes may tick at the same moment; each slot gets one run.
 */
export async function runMonitoringTick(deps: TickDeps, now = new Date()): Promise<{ queued: number }> {
  const rows: ScheduledRow[] = await deps.db.query(scheduledComparisonsSql);
  let queued = 0;
  for (const row of rows) {
    if (row.plan_version === null) continue;
    const w = windowOf(row);
    let slot: Date;
    try {
      slot = latestSlot(w.cron, w.timeZone, now);
    } catch (err) {
      deps.logger.warn({ err, comparisonId: row.comparison_id }, 'a comparison’s schedule could not be read');
      continue;
    }
    if (!isDue(w, slot, now)) continue;
    try {
      queued += await deps.db.transaction(async (manager) => {
        // TypeORM answers INSERT … RETURNING with the rows; a slot already taken answers none.
        const inserted: { id: string }[] = await manager.query(insertScheduledRunSql, [row.comparison_id, row.study_id, row.plan_version, slot]);
        if (!inserted.length) return 0;
        await deps.jobs.enqueueRun(manager, inserted[0].id);
        await recordAudit(manager, {
          actorId: null,
          studyId: row.study_id,
          action: 'run.queued',
          entityType: 'run',
          entityId: inserted[0].id,
          after: { kind: 'monitoring', scheduledFor: slot.toISOString(), scheduleCron: w.cron, scheduleTimezone: w.timeZone },
        });
        return 1;
      });
    } catch (err) {
      deps.logger.error({ err, comparisonId: row.comparison_id }, 'a scheduled monitoring run could not be queued');
    }
  }
  return { queued };
}
