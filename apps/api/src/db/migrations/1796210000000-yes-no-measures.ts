import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A measure is a score or yes/no. A yes/no measure's answers are stored as 1 (yes) and 0 (no) in the existing score
 * column, so its range is fixed at 0–1 and `higher_is_better` says whether yes is the good answer; whole numbers only.
 */
export class YesNoMeasures1796210000000 implements MigrationInterface {
  name = 'YesNoMeasures1796210000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE measures ADD COLUMN scale varchar(10) NOT NULL DEFAULT 'score'`);
    await q.query(`ALTER TABLE measures ADD CONSTRAINT measures_scale_check CHECK (scale IN ('score', 'yes-no'))`);
    await q.query(`ALTER TABLE measures ADD CONSTRAINT measures_yes_no_range CHECK (scale <> 'yes-no' OR (min_score = 0 AND max_score = 1))`);
  }

  // Destroys data: yes/no measures become scores from 0 to 1 (their stored 0/1 answers stay).
  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE measures DROP CONSTRAINT measures_yes_no_range`);
    await q.query(`ALTER TABLE measures DROP CONSTRAINT measures_scale_check`);
    await q.query(`ALTER TABLE measures DROP COLUMN scale`);
  }
}
