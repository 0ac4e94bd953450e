import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Scheduled monitoring runs: a comparison's cron is read in its own time zone, and a run made by the schedule
 * records the slot it was made for. One run per comparison and slot, however many processes tick at once.
 */
export class MonitoringSchedules1796191200000 implements MigrationInterface {
  name = 'MonitoringSchedules1796191200000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE comparisons ADD COLUMN schedule_timezone varchar(64) NOT NULL DEFAULT 'UTC'`);
    // Slots before the cron was set never fire, so a new or changed schedule does not run for the past.
    await q.query(`ALTER TABLE comparisons ADD COLUMN schedule_set_at timestamptz`);
    await q.query(`UPDATE comparisons SET schedule_set_at = now() WHERE schedule_cron IS NOT NULL`);
    await q.query(`ALTER TABLE runs ADD COLUMN scheduled_for timestamptz`);
    await q.query(`ALTER TABLE runs ADD CONSTRAINT runs_scheduled_monitoring CHECK (scheduled_for IS NULL OR kind = 'monitoring')`);
    await q.query(`CREATE UNIQUE INDEX runs_scheduled_slot ON runs (comparison_id, scheduled_for) WHERE scheduled_for IS NOT NULL`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: forgets each comparison's monitoring timezone and when it was set, and each run's scheduled slot.
    await q.query(`DROP INDEX runs_scheduled_slot`);
    await q.query(`ALTER TABLE runs DROP CONSTRAINT runs_scheduled_monitoring`);
    await q.query(`ALTER TABLE runs DROP COLUMN scheduled_for`);
    await q.query(`ALTER TABLE comparisons DROP COLUMN schedule_set_at`);
    await q.query(`ALTER TABLE comparisons DROP COLUMN schedule_timezone`);
  }
}
