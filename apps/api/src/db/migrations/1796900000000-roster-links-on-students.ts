import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A roster student's link (the keyed hash of the export's sourcedId, when it joined and, after the draw, when it left)
 * moves onto the student's own registry row: `students.roster_link`, `roster_joined_at`, `roster_left_at`, with a
 * unique index on (study, link) over linked rows only. `roster_students` kept a second row per student beside the
 * registry's, with its own classroom (always the code's) and two more indexes: a 50 000-student import wrote two heaps
 * and four indexes; now one heap and three. A link can no longer outlive its code, a classroom's links are its
 * registered students (the registry's triggers check their classroom and keep a classroom with students), and moving a
 * student is one update.
 *
 * Links whose code a sheet save had freed (before that was prevented) register the code again in the link's classroom;
 * a link whose code another classroom has since taken cannot be kept, so the migration refuses and names them.
 */
export class RosterLinksOnStudents1796900000000 implements MigrationInterface {
  name = 'RosterLinksOnStudents1796900000000';

  async up(q: QueryRunner): Promise<void> {
    const taken: { study_id: string; codes: string }[] = await q.query(`
      SELECT rs.study_id, string_agg(rs.student_code, ', ' ORDER BY rs.student_code) AS codes FROM roster_students rs
        JOIN students st ON st.study_id = rs.study_id AND st.student_code = rs.student_code AND st.classroom_id <> rs.classroom_id
       GROUP BY rs.study_id LIMIT 20`);
    if (taken.length) {
      throw new Error(
        `Roster codes registered to another classroom than their link's cannot keep their link; move or rename those students first:\n${taken.map((t) => `  study ${t.study_id}: ${t.codes}`).join('\n')}`,
      );
    }
    await q.query(`
      ALTER TABLE students
        ADD COLUMN roster_link bytea CHECK (octet_length(roster_link) = 32),
        ADD COLUMN roster_joined_at timestamptz,
        -- Set when a later export no longer lists the student in the classroom after the draw (attrition).
        ADD COLUMN roster_left_at timestamptz,
        ADD CONSTRAINT students_roster_dates CHECK ((roster_link IS NULL) = (roster_joined_at IS NULL) AND (roster_left_at IS NULL OR roster_link IS NOT NULL))`);
    await q.query(`CREATE UNIQUE INDEX students_roster_link ON students (study_id, roster_link) WHERE roster_link IS NOT NULL`);
    await q.query(`
      UPDATE students st SET roster_link = rs.link_hash, roster_joined_at = rs.joined_at, roster_left_at = rs.left_at
        FROM roster_students rs WHERE st.study_id = rs.study_id AND st.student_code = rs.student_code AND st.classroom_id = rs.classroom_id`);
    await q.query(`
      INSERT INTO students (study_id, student_code, classroom_id, roster_link, roster_joined_at, roster_left_at)
      SELECT rs.study_id, rs.student_code, rs.classroom_id, rs.link_hash, rs.joined_at, rs.left_at FROM roster_students rs
       WHERE NOT EXISTS (SELECT 1 FROM students st WHERE st.study_id = rs.study_id AND st.student_code = rs.student_code)`);
    await q.query(`DROP TRIGGER classrooms_roster_students_delete ON classrooms`);
    await q.query(`DROP FUNCTION keep_classroom_roster_students()`);
    await q.query(`DROP TABLE roster_students`);
    await q.query(`DROP FUNCTION check_roster_student_classrooms()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // roster_students as migrations roster-imports, roster-student-keys and roster-students-by-study left it.
    await q.query(`
      CREATE TABLE roster_students (
        study_id uuid NOT NULL,
        link_hash bytea NOT NULL CHECK (octet_length(link_hash) = 32),
        student_code varchar(40) NOT NULL,
        classroom_id uuid NOT NULL,
        joined_at timestamptz NOT NULL DEFAULT now(),
        left_at timestamptz,
        PRIMARY KEY (study_id, link_hash),
        UNIQUE (study_id, student_code)
      )`);
    await q.query(`
      INSERT INTO roster_students (study_id, link_hash, student_code, classroom_id, joined_at, left_at)
      SELECT study_id, roster_link, student_code, classroom_id, roster_joined_at, roster_left_at FROM students WHERE roster_link IS NOT NULL`);
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
        IF EXISTS (SELECT 1 FROM old_rows o JOIN roster_students rs ON rs.study_id = o.study_id AND rs.classroom_id = o.id) THEN
          RAISE EXCEPTION 'a classroom with roster students cannot be deleted' USING ERRCODE = 'foreign_key_violation';
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(
      `CREATE TRIGGER classrooms_roster_students_delete AFTER DELETE ON classrooms REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION keep_classroom_roster_students()`,
    );
    await q.query(`DROP INDEX students_roster_link`);
    await q.query(`ALTER TABLE students DROP CONSTRAINT students_roster_dates, DROP COLUMN roster_left_at, DROP COLUMN roster_joined_at, DROP COLUMN roster_link`);
  }
}
