import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * One rule for student codes: trimmed and upper-case (the shared `studentCodeSchema` normalises on entry).
 * Stored codes are brought to that form; two codes that differ only by letter case in one study would merge two
 * students, so the migration refuses and names them. Codes whose scores a locked sheet holds keep their spelling
 * (a locked result's data hash is computed from them); the index on the upper-case code still makes each of them
 * one student. New rows must be in the normal form.
 */
export class StudentCodeCase1796198600000 implements MigrationInterface {
  name = 'StudentCodeCase1796198600000';

  async up(q: QueryRunner): Promise<void> {
    const clashes: { study_id: string; codes: string }[] = await q.query(
      `SELECT study_id, string_agg(student_code, ', ' ORDER BY student_code) AS codes FROM students
        GROUP BY study_id, upper(btrim(student_code)) HAVING count(*) > 1 LIMIT 20`,
    );
    if (clashes.length) {
      throw new Error(
        `Student codes that differ only by letter case would become one student; make them distinct first:\n${clashes.map((c) => `  study ${c.study_id}: ${c.codes}`).join('\n')}`,
      );
    }
    await q.query(`
      CREATE TEMP TABLE renamed ON COMMIT DROP AS
      SELECT st.study_id, st.student_code AS old_code, upper(btrim(st.student_code)) AS new_code FROM students st
       WHERE st.student_code <> upper(btrim(st.student_code))
         AND NOT EXISTS (SELECT 1 FROM scores x JOIN score_sheets sh ON sh.id = x.sheet_id AND sh.locked
                          WHERE x.study_id = st.study_id AND x.student_code = st.student_code)`);
    // A code and its scores are renamed together, which the statement-level key triggers would see half done.
    await q.query(`ALTER TABLE students DISABLE TRIGGER USER`);
    await q.query(`ALTER TABLE scores DISABLE TRIGGER USER`);
    await q.query(`UPDATE students st SET student_code = r.new_code FROM renamed r WHERE st.study_id = r.study_id AND st.student_code = r.old_code`);
    await q.query(
      `UPDATE scores x SET student_code = r.new_code FROM renamed r WHERE x.study_id = r.study_id AND x.student_code = r.old_code`,
    );
    // What the disabled digest trigger would have done: a sheet whose rows changed forgets its stored digest.
    await q.query(
      `UPDATE score_sheets sh SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND EXISTS (
         SELECT 1 FROM scores x JOIN renamed r ON r.study_id = x.study_id AND r.new_code = x.student_code WHERE x.sheet_id = sh.id)`,
    );
    await q.query(`ALTER TABLE scores ENABLE TRIGGER USER`);
    await q.query(`ALTER TABLE students ENABLE TRIGGER USER`);
    await q.query(`CREATE UNIQUE INDEX students_study_code_upper ON students (study_id, upper(student_code))`);
    // NOT VALID: the codes locked results read keep their spelling; every new or changed row is checked.
    await q.query(`ALTER TABLE students ADD CONSTRAINT students_code_normalised CHECK (student_code = upper(btrim(student_code))) NOT VALID`);
    await q.query(`ALTER TABLE scores ADD CONSTRAINT scores_code_normalised CHECK (student_code = upper(btrim(student_code))) NOT VALID`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE scores DROP CONSTRAINT scores_code_normalised`);
    await q.query(`ALTER TABLE students DROP CONSTRAINT students_code_normalised`);
    await q.query(`DROP INDEX students_study_code_upper`);
  }
}
