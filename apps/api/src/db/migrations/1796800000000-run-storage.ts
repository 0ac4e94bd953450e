import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * How a run's large values are stored. The arm of every classroom a run read (`classroom_arms`) is kept as json, the
 * text as written, instead of jsonb: at 80 000 classrooms, building the jsonb (every key parsed and sorted) took
 * PostgreSQL 0.15 s of every run, and only two rare guards ask whether a classroom is in it. The run's results, arms and
 * input sheets are compressed with lz4 instead of pglz, which took up to a quarter second more to pack the arms.
 * Values already stored keep their content; only their storage changes.
 */
export class RunStorage1796800000000 implements MigrationInterface {
  name = 'RunStorage1796800000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE runs ALTER COLUMN classroom_arms TYPE json USING classroom_arms::json`);
    await q.query(`ALTER TABLE runs ALTER COLUMN results SET COMPRESSION lz4, ALTER COLUMN classroom_arms SET COMPRESSION lz4, ALTER COLUMN input_sheet_ids SET COMPRESSION lz4`);
    await q.query(keepLockedArms(`(r.classroom_arms ->> NEW.classroom_id::text) IS NOT NULL`));
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(keepLockedArms(`r.classroom_arms ? NEW.classroom_id::text`));
    await q.query(`ALTER TABLE runs ALTER COLUMN results SET COMPRESSION default, ALTER COLUMN classroom_arms SET COMPRESSION default, ALTER COLUMN input_sheet_ids SET COMPRESSION default`);
    await q.query(`ALTER TABLE runs ALTER COLUMN classroom_arms TYPE jsonb USING classroom_arms::jsonb`);
  }
}

/** The guard of locked-result-guards, reading the arms with `read` (a condition on `r`, the locked run, and NEW, the reassignment). */
const keepLockedArms = (read: string) => `
      CREATE OR REPLACE FUNCTION keep_locked_arms() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        hit uuid;
      BEGIN
        SELECT r.id INTO hit FROM runs r JOIN draws d ON d.study_id = r.study_id
         WHERE d.id = NEW.draw_id AND r.state = 'locked' AND ${read} LIMIT 1;
        IF hit IS NOT NULL THEN
          RAISE EXCEPTION 'classroom % is read by locked run %; its arm cannot change', NEW.classroom_id, hit USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NEW;
      END $$`;
