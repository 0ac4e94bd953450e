import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A run keeps the arm of every classroom it read (`classroom_arms`: classroom id → arm), so its bundle and data hash
 * show what it read, never today's state. Runs that already finished get the arms in force when they started,
 * rebuilt from the recorded reassignments (the arm after the last one before the run, else before the first one
 * after it, else today's).
 */
export class RunArms1796198400000 implements MigrationInterface {
  name = 'RunArms1796198400000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE runs ADD COLUMN classroom_arms jsonb`);
    // Locked runs refuse every update; this one only records what they already read.
    await q.query(`ALTER TABLE runs DISABLE TRIGGER runs_locked`);
    await q.query(`
      UPDATE runs r SET classroom_arms = (
        SELECT coalesce(jsonb_object_agg(c.id, coalesce(
                 (SELECT x.to_arm FROM draw_reassignments x WHERE x.classroom_id = c.id AND x.at <= coalesce(r.started_at, r.finished_at) ORDER BY x.at DESC LIMIT 1),
                 (SELECT x.from_arm FROM draw_reassignments x WHERE x.classroom_id = c.id AND x.at > coalesce(r.started_at, r.finished_at) ORDER BY x.at LIMIT 1),
                 c.arm)), '{}'::jsonb)
          FROM classrooms c
         WHERE c.study_id = r.study_id AND c.arm IS NOT NULL AND c.created_at <= coalesce(r.started_at, r.finished_at))
       WHERE r.state IN ('finished', 'locked')`);
    await q.query(`ALTER TABLE runs ENABLE TRIGGER runs_locked`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: forgets the arms each run read, locked runs' included.
    await q.query(`ALTER TABLE runs DISABLE TRIGGER runs_locked`);
    await q.query(`ALTER TABLE runs DROP COLUMN classroom_arms`);
    await q.query(`ALTER TABLE runs ENABLE TRIGGER runs_locked`);
  }
}
