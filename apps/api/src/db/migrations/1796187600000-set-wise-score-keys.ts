import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A 100 000-row upload spent most of its time in PostgreSQL's row-by-row foreign-key checks (one
 * lookup and key-share lock per score, twice) and in indexes no query needs. The same rules are now
 * checked once per statement, set-wise, by triggers over transition tables:
 * - every score names its sheet with the sheet's own study, classroom, wave and measure;
 * - every score's student code is registered (in `students`) to the score's classroom, so a code
 *   belongs to one classroom of a study;
 * - a registered code or a sheet cannot disappear while scores use it.
 * The checks lock the classrooms involved (FOR NO KEY UPDATE, which does not block other foreign
 * keys) so two writers of one classroom's codes take turns and each sees the other's committed rows.
 * The unique key (study, wave, measure, classroom, code) follows from the primary key (sheet, code)
 * and the sheet's own unique (classroom, wave, measure), so its index goes too.
 */
export class SetWiseScoreKeys1796187600000 implements MigrationInterface {
  name = 'SetWiseScoreKeys1796187600000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE scores DROP CONSTRAINT scores_sheet_id_study_id_classroom_id_wave_id_measure_id_fkey`);
    await q.query(`ALTER TABLE scores DROP CONSTRAINT scores_study_id_student_code_classroom_id_fkey`);
    await q.query(`ALTER TABLE scores DROP CONSTRAINT scores_study_id_wave_id_measure_id_classroom_id_student_cod_key`);
    await q.query(`DROP INDEX scores_student`);
    await q.query(`ALTER TABLE students DROP CONSTRAINT students_study_id_student_code_classroom_id_key`);
    // The classroom check below also proves the study exists.
    await q.query(`ALTER TABLE students DROP CONSTRAINT students_study_id_classroom_id_fkey`);
    await q.query(`ALTER TABLE students DROP CONSTRAINT students_study_id_fkey`);

    await q.query(`
      CREATE FUNCTION check_score_keys() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        bad text;
      BEGIN
        PERFORM 1 FROM classrooms WHERE id IN (SELECT DISTINCT classroom_id FROM new_rows) ORDER BY id FOR NO KEY UPDATE;
        SELECT n.sheet_id::text INTO bad
          FROM (SELECT DISTINCT sheet_id, study_id, classroom_id, wave_id, measure_id FROM new_rows) n
          LEFT JOIN score_sheets sh ON sh.id = n.sheet_id AND sh.study_id = n.study_id AND sh.classroom_id = n.classroom_id
                                   AND sh.wave_id = n.wave_id AND sh.measure_id = n.measure_id
         WHERE sh.id IS NULL LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'scores name score sheet % with keys it does not have', bad USING ERRCODE = 'foreign_key_violation';
        END IF;
        SELECT n.student_code INTO bad
          FROM new_rows n LEFT JOIN students st ON st.study_id = n.study_id AND st.student_code = n.student_code AND st.classroom_id = n.classroom_id
         WHERE st.student_code IS NULL LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'student code % is not registered to the classroom of its score', bad USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER scores_keys_insert AFTER INSERT ON scores REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_score_keys()`);
    await q.query(`CREATE TRIGGER scores_keys_update AFTER UPDATE ON scores REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_score_keys()`);

    await q.query(`
      CREATE FUNCTION check_students_unused() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        bad text;
      BEGIN
        PERFORM 1 FROM classrooms WHERE id IN (SELECT DISTINCT classroom_id FROM old_rows) ORDER BY id FOR NO KEY UPDATE;
        SELECT o.student_code INTO bad
          FROM old_rows o
          JOIN score_sheets sh ON sh.classroom_id = o.classroom_id
          JOIN scores x ON x.sheet_id = sh.id AND x.student_code = o.student_code
         WHERE NOT EXISTS (SELECT 1 FROM students st WHERE st.study_id = o.study_id AND st.student_code = o.student_code AND st.classroom_id = o.classroom_id)
         LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'student code % still has scores in its classroom', bad USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER students_unused_update AFTER UPDATE ON students REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION check_students_unused()`);
    await q.query(`CREATE TRIGGER students_unused_delete AFTER DELETE ON students REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION check_students_unused()`);

    // A registered code's classroom must be one of its study's classrooms.
    await q.query(`
      CREATE FUNCTION check_student_classrooms() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        bad text;
      BEGIN
        SELECT n.student_code INTO bad
          FROM new_rows n LEFT JOIN classrooms c ON c.id = n.classroom_id AND c.study_id = n.study_id
         WHERE c.id IS NULL LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'student code % is registered to a classroom outside its study', bad USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER students_classroom_insert AFTER INSERT ON students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_student_classrooms()`);
    await q.query(`CREATE TRIGGER students_classroom_update AFTER UPDATE ON students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_student_classrooms()`);

    // The referenced side of the sheet key: a sheet keeps its keys, and goes only without scores.
    await q.query(`
      CREATE FUNCTION keep_sheet_keys() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP = 'DELETE' THEN
          IF EXISTS (SELECT 1 FROM scores WHERE sheet_id = OLD.id) THEN
            RAISE EXCEPTION 'score sheet % still has scores', OLD.id USING ERRCODE = 'foreign_key_violation';
          END IF;
          RETURN OLD;
        END IF;
        IF (NEW.id, NEW.study_id, NEW.classroom_id, NEW.wave_id, NEW.measure_id) IS DISTINCT FROM (OLD.id, OLD.study_id, OLD.classroom_id, OLD.wave_id, OLD.measure_id) THEN
          RAISE EXCEPTION 'a score sheet''s study, classroom, wave and measure cannot change' USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NEW;
      END $$`);
    await q.query(`CREATE TRIGGER score_sheets_keys BEFORE UPDATE OR DELETE ON score_sheets FOR EACH ROW EXECUTE FUNCTION keep_sheet_keys()`);
    // A classroom goes only without registered codes (students no longer has a row-level key to it).
    await q.query(`
      CREATE FUNCTION keep_classroom_students() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF EXISTS (SELECT 1 FROM old_rows o JOIN students st ON st.study_id = o.study_id AND st.classroom_id = o.id) THEN
          RAISE EXCEPTION 'a classroom with registered student codes cannot be deleted' USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER classrooms_students_delete AFTER DELETE ON classrooms REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_classroom_students()`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TRIGGER classrooms_students_delete ON classrooms`);
    await q.query(`DROP FUNCTION keep_classroom_students()`);
    await q.query(`DROP TRIGGER score_sheets_keys ON score_sheets`);
    await q.query(`DROP FUNCTION keep_sheet_keys()`);
    await q.query(`DROP TRIGGER students_classroom_insert ON students`);
    await q.query(`DROP TRIGGER students_classroom_update ON students`);
    await q.query(`DROP FUNCTION check_student_classrooms()`);
    await q.query(`DROP TRIGGER students_unused_update ON students`);
    await q.query(`DROP TRIGGER students_unused_delete ON students`);
    await q.query(`DROP FUNCTION check_students_unused()`);
    await q.query(`DROP TRIGGER scores_keys_insert ON scores`);
    await q.query(`DROP TRIGGER scores_keys_update ON scores`);
    await q.query(`DROP FUNCTION check_score_keys()`);
    await q.query(`ALTER TABLE students ADD FOREIGN KEY (study_id) REFERENCES studies(id)`);
    await q.query(`ALTER TABLE students ADD FOREIGN KEY (study_id, classroom_id) REFERENCES classrooms(study_id, id)`);
    await q.query(`ALTER TABLE students ADD UNIQUE (study_id, student_code, classroom_id)`);
    await q.query(`CREATE INDEX scores_student ON scores (study_id, student_code, classroom_id)`);
    await q.query(`ALTER TABLE scores ADD UNIQUE (study_id, wave_id, measure_id, classroom_id, student_code)`);
    await q.query(`ALTER TABLE scores ADD FOREIGN KEY (study_id, student_code, classroom_id) REFERENCES students(study_id, student_code, classroom_id)`);
    await q.query(`ALTER TABLE scores ADD FOREIGN KEY (sheet_id, study_id, classroom_id, wave_id, measure_id) REFERENCES score_sheets(id, study_id, classroom_id, wave_id, measure_id)`);
  }
}
