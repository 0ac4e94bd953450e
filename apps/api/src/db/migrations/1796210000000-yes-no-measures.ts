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
    // A locked result read the measure as a score or as yes/no: that cannot change afterwards either.
    await q.query(lockedMeasureGuard('NEW.scale', 'OLD.scale'));
  }

  // Destroys data: yes/no measures become scores from 0 to 1 (their stored 0/1 answers stay).
  async down(q: QueryRunner): Promise<void> {
    await q.query(lockedMeasureGuard('', ''));
    await q.query(`ALTER TABLE measures DROP CONSTRAINT measures_yes_no_range`);
    await q.query(`ALTER TABLE measures DROP CONSTRAINT measures_scale_check`);
    await q.query(`ALTER TABLE measures DROP COLUMN scale`);
  }
}

/** The locked-result guard of `measures` (migration locked-result-guards), with extra compared columns. */
function lockedMeasureGuard(newExtra: string, oldExtra: string): string {
  const [n, o] = newExtra ? [`, ${newExtra}`, `, ${oldExtra}`] : ['', ''];
  return `
    CREATE OR REPLACE FUNCTION keep_locked_measure() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF (TG_OP = 'DELETE'
          OR (NEW.study_id, NEW.min_score, NEW.max_score, NEW.higher_is_better, NEW.kind${n})
             IS DISTINCT FROM (OLD.study_id, OLD.min_score, OLD.max_score, OLD.higher_is_better, OLD.kind${o}))
         AND EXISTS (SELECT 1 FROM runs r JOIN comparisons k ON k.id = r.comparison_id WHERE k.measure_id = OLD.id AND r.state = 'locked') THEN
        RAISE EXCEPTION 'measure % is read by a locked result and cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
      END IF;
      RETURN COALESCE(NEW, OLD);
    END $$`;
}
