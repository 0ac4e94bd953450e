import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A 50 000-student roster import spent a fifth of its largest statement in PostgreSQL's row-by-row
 * foreign-key check from `roster_students` to its classroom (one lookup and key-share lock per
 * student). The rule is now checked once per statement over the transition table, as `students`
 * already is: every linked student's classroom is one of its study's classrooms (locked FOR KEY
 * SHARE, as the foreign key did, so it cannot be deleted meanwhile), and a classroom with linked
 * students cannot be deleted.
 */
export class RosterStudentKeys1796500000000 implements MigrationInterface {
  name = 'RosterStudentKeys1796500000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE roster_students DROP CONSTRAINT roster_students_study_id_classroom_id_fkey`);
    await q.query(`
      CREATE FUNCTION check_roster_student_classrooms() RETURNS trigger LANGUAGE plpgsql AS $$
      DECLARE
        bad uuid;
      BEGIN
        PERFORM 1 FROM classrooms WHERE id IN (SELECT DISTINCT classroom_id FROM new_rows) ORDER BY id FOR KEY SHARE;
        SELECT n.classroom_id INTO bad
          FROM (SELECT DISTINCT study_id, classroom_id FROM new_rows) n LEFT JOIN classrooms c ON c.id = n.classroom_id AND c.study_id = n.study_id
         WHERE c.id IS NULL LIMIT 1;
        IF bad IS NOT NULL THEN
          RAISE EXCEPTION 'a roster student is linked to classroom %, which is not a classroom of its study', bad USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(
      `CREATE TRIGGER roster_students_classroom_insert AFTER INSERT ON roster_students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_roster_student_classrooms()`,
    );
    await q.query(
      `CREATE TRIGGER roster_students_classroom_update AFTER UPDATE ON roster_students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION check_roster_student_classrooms()`,
    );
    await q.query(`
      CREATE FUNCTION keep_classroom_roster_students() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF EXISTS (SELECT 1 FROM old_rows o JOIN roster_students rs ON rs.classroom_id = o.id) THEN
          RAISE EXCEPTION 'a classroom with roster students cannot be deleted' USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(
      `CREATE TRIGGER classrooms_roster_students_delete AFTER DELETE ON classrooms REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_classroom_roster_students()`,
    );
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TRIGGER classrooms_roster_students_delete ON classrooms`);
    await q.query(`DROP FUNCTION keep_classroom_roster_students()`);
    await q.query(`DROP TRIGGER roster_students_classroom_insert ON roster_students`);
    await q.query(`DROP TRIGGER roster_students_classroom_update ON roster_students`);
    await q.query(`DROP FUNCTION check_roster_student_classrooms()`);
    await q.query(`ALTER TABLE roster_students ADD FOREIGN KEY (study_id, classroom_id) REFERENCES classrooms(study_id, id)`);
  }
}
