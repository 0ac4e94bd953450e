import type { MigrationInterface, QueryRunner } from 'typeorm';

/** Tables whose rows are append-only, immutable or read by locked results: TRUNCATE (which skips row triggers) is refused. */
const untruncatable = [
  'audit_events',
  'studies',
  'measures',
  'waves',
  'plan_versions',
  'draws',
  'draw_reassignments',
  'classrooms',
  'students',
  'score_sheets',
  'scores',
  'comparisons',
  'runs',
  'digests',
];

/**
 * Locked means locked, in the database too. Row triggers do not see TRUNCATE, so each table above gets a
 * statement-level TRUNCATE guard. A locked run also depends on rows outside the run and its sheets; these refuse
 * a change while a locked run reads them: its comparison's definition (label, measure, wave, unit of analysis,
 * test, covariate), its measure's range and direction, the waves of its sheets, the study's quasi-experimental flag,
 * a reassignment of a classroom whose arm it stored, and the students registry rows of its sheets' students.
 * (The application's database role owns none of these tables, so it can neither drop nor disable a trigger.)
 */
export class LockedResultGuards1796198500000 implements MigrationInterface {
  name = 'LockedResultGuards1796198500000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE FUNCTION refuse_truncate() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        RAISE EXCEPTION '% cannot be truncated', TG_TABLE_NAME USING ERRCODE = 'integrity_constraint_violation';
      END $$`);
    for (const table of untruncatable) {
      await q.query(`CREATE TRIGGER ${table}_no_truncate BEFORE TRUNCATE ON ${table} FOR EACH STATEMENT EXECUTE FUNCTION refuse_truncate()`);
    }

    await q.query(`
      CREATE FUNCTION keep_locked_comparison() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF (TG_OP = 'DELETE'
            OR (NEW.study_id, NEW.measure_id, NEW.wave_id, NEW.label, NEW.unit_of_analysis, NEW.primary_test, NEW.covariate, NEW.prespecified, NEW.is_primary)
               IS DISTINCT FROM (OLD.study_id, OLD.measure_id, OLD.wave_id, OLD.label, OLD.unit_of_analysis, OLD.primary_test, OLD.covariate, OLD.prespecified, OLD.is_primary))
           AND EXISTS (SELECT 1 FROM runs WHERE comparison_id = OLD.id AND state = 'locked') THEN
          RAISE EXCEPTION 'comparison % has a locked result and cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN COALESCE(NEW, OLD);
      END $$`);
    await q.query(`CREATE TRIGGER comparisons_locked BEFORE UPDATE OR DELETE ON comparisons FOR EACH ROW EXECUTE FUNCTION keep_locked_comparison()`);

    await q.query(`
      CREATE FUNCTION keep_locked_measure() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF (TG_OP = 'DELETE'
            OR (NEW.study_id, NEW.min_score, NEW.max_score, NEW.higher_is_better, NEW.kind)
               IS DISTINCT FROM (OLD.study_id, OLD.min_score, OLD.max_score, OLD.higher_is_better, OLD.kind))
           AND EXISTS (SELECT 1 FROM runs r JOIN comparisons k ON k.id = r.comparison_id WHERE k.measure_id = OLD.id AND r.state = 'locked') THEN
          RAISE EXCEPTION 'measure % is read by a locked result and cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN COALESCE(NEW, OLD);
      END $$`);
    await q.query(`CREATE TRIGGER measures_locked BEFORE UPDATE OR DELETE ON measures FOR EACH ROW EXECUTE FUNCTION keep_locked_measure()`);

    // The outcome wave and the baseline wave: both hold sheets a locked run read.
    await q.query(`
      CREATE FUNCTION keep_locked_wave() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF (TG_OP = 'DELETE' OR NEW IS DISTINCT FROM OLD)
           AND EXISTS (SELECT 1 FROM runs r JOIN score_sheets sh ON sh.id = ANY(r.input_sheet_ids) WHERE r.state = 'locked' AND r.study_id = OLD.study_id AND sh.wave_id = OLD.id) THEN
          RAISE EXCEPTION 'wave % is read by a locked result and cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN COALESCE(NEW, OLD);
      END $$`);
    await q.query(`CREATE TRIGGER waves_locked BEFORE UPDATE OR DELETE ON waves FOR EACH ROW EXECUTE FUNCTION keep_locked_wave()`);

    await q.query(`
      CREATE FUNCTION keep_locked_design() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF NEW.quasi_experimental IS DISTINCT FROM OLD.quasi_experimental
           AND EXISTS (SELECT 1 FROM runs WHERE study_id = OLD.id AND state = 'locked') THEN
          RAISE EXCEPTION 'study % has a locked result: whether it is quasi-experimental cannot change', OLD.id USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NEW;
      END $$`);
    await q.query(`CREATE TRIGGER studies_locked_design BEFORE UPDATE OF quasi_experimental ON studies FOR EACH ROW EXECUTE FUNCTION keep_locked_design()`);

    await q.query(`
      CREATE FUNCTION keep_locked_arms() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        hit uuid;
      BEGIN
        SELECT r.id INTO hit FROM runs r JOIN draws d ON d.study_id = r.study_id
         WHERE d.id = NEW.draw_id AND r.state = 'locked' AND r.classroom_arms ? NEW.classroom_id::text LIMIT 1;
        IF hit IS NOT NULL THEN
          RAISE EXCEPTION 'classroom % is read by locked run %; its arm cannot change', NEW.classroom_id, hit USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NEW;
      END $$`);
    await q.query(`CREATE TRIGGER draw_reassignments_locked BEFORE INSERT ON draw_reassignments FOR EACH ROW EXECUTE FUNCTION keep_locked_arms()`);

    // A student whose score a locked sheet holds keeps their registry row (code and classroom).
    await q.query(`
      CREATE FUNCTION keep_locked_students() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        bad text;
      BEGIN
        SELECT o.student_code INTO bad FROM old_rows o
          JOIN scores x ON x.study_id = o.study_id AND x.classroom_id = o.classroom_id AND x.student_code = o.student_code
          JOIN score_sheets sh ON sh.id = x.sheet_id AND sh.locked
         WHERE NOT EXISTS (
           SELECT 1 FROM new_rows n WHERE n.study_id = o.study_id AND n.student_code = o.student_code AND n.classroom_id = o.classroom_id)
         LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'student code % is read by a locked result and cannot change', bad USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`
      CREATE FUNCTION keep_locked_students_on_delete() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        bad text;
      BEGIN
        SELECT o.student_code INTO bad FROM old_rows o
          JOIN scores x ON x.study_id = o.study_id AND x.classroom_id = o.classroom_id AND x.student_code = o.student_code
          JOIN score_sheets sh ON sh.id = x.sheet_id AND sh.locked
         LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'student code % is read by a locked result and cannot change', bad USING ERRCODE = 'integrity_constraint_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(
      `CREATE TRIGGER students_locked_update AFTER UPDATE ON students REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_locked_students()`,
    );
    await q.query(`CREATE TRIGGER students_locked_delete AFTER DELETE ON students REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_locked_students_on_delete()`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TRIGGER students_locked_delete ON students`);
    await q.query(`DROP TRIGGER students_locked_update ON students`);
    await q.query(`DROP FUNCTION keep_locked_students_on_delete()`);
    await q.query(`DROP FUNCTION keep_locked_students()`);
    await q.query(`DROP TRIGGER draw_reassignments_locked ON draw_reassignments`);
    await q.query(`DROP FUNCTION keep_locked_arms()`);
    await q.query(`DROP TRIGGER studies_locked_design ON studies`);
    await q.query(`DROP FUNCTION keep_locked_design()`);
    await q.query(`DROP TRIGGER waves_locked ON waves`);
    await q.query(`DROP FUNCTION keep_locked_wave()`);
    await q.query(`DROP TRIGGER measures_locked ON measures`);
    await q.query(`DROP FUNCTION keep_locked_measure()`);
    await q.query(`DROP TRIGGER comparisons_locked ON comparisons`);
    await q.query(`DROP FUNCTION keep_locked_comparison()`);
    for (const table of untruncatable) await q.query(`DROP TRIGGER ${table}_no_truncate ON ${table}`);
    await q.query(`DROP FUNCTION refuse_truncate()`);
  }
}
