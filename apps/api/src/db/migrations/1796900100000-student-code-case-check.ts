import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Student codes are stored trimmed and upper-case (migration student-code-case); only codes a locked result read kept
 * another spelling. The unique index on (study, upper-case code) that made each of those one student with any new code
 * was written by every registration, a third of a 50 000-student import's registry writes, to guard a handful of old
 * rows. Now only those old rows are indexed (unique among themselves), and a statement trigger refuses a new or
 * changed code that one of them already spells in another case; it returns at once when there are none, as in every
 * study registered since. New codes cannot take another spelling (students_code_normalised), so no two writers race here.
 */
export class StudentCodeCaseCheck1796900100000 implements MigrationInterface {
  name = 'StudentCodeCaseCheck1796900100000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE UNIQUE INDEX students_code_kept_spelling ON students (study_id, upper(student_code)) WHERE student_code <> upper(btrim(student_code))`);
    await q.query(`DROP INDEX students_study_code_upper`);
    await q.query(`
      CREATE FUNCTION check_student_code_case() RETURNS trigger LANGUAGE plpgsql
      -- The planner reckons most codes differ from their upper case (it cannot know that only old ones do) and would
      -- read the whole registry for the first; inside this function it reads the index of kept spellings instead.
      SET enable_seqscan = off AS $$
      DECLARE
        bad text;
      BEGIN
        IF NOT EXISTS (SELECT 1 FROM students WHERE student_code <> upper(btrim(student_code))) THEN
          RETURN NULL;
        END IF;
        SELECT n.student_code INTO bad
          FROM new_rows n JOIN students st ON st.study_id = n.study_id AND upper(st.student_code) = upper(n.student_code) AND st.student_code <> n.student_code
         WHERE st.student_code <> upper(btrim(st.student_code)) LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'student code % is already registered in its study with another letter case', bad USING ERRCODE = 'unique_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER students_code_case_insert AFTER INSERT ON students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_student_code_case()`);
    await q.query(`CREATE TRIGGER students_code_case_update AFTER UPDATE ON students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_student_code_case()`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TRIGGER students_code_case_update ON students`);
    await q.query(`DROP TRIGGER students_code_case_insert ON students`);
    await q.query(`DROP FUNCTION check_student_code_case()`);
    await q.query(`CREATE UNIQUE INDEX students_study_code_upper ON students (study_id, upper(student_code))`);
    await q.query(`DROP INDEX students_code_kept_spelling`);
  }
}
