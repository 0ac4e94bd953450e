import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * Rosters from a district's OneRoster export. Schools and classes keep the export's sourcedIds (they
 * name no person), so a newer export updates them. A student is known only by a keyed hash of the
 * export's user sourcedId (HMAC-SHA-256 with the district's ROSTER_LINK_SECRET, which lives outside
 * the database) beside the study's student code: the identifier itself is never stored.
 */
export class RosterImports1796204000000 implements MigrationInterface {
  name = 'RosterImports1796204000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE sites ADD COLUMN roster_sourced_id varchar(255) UNIQUE`);
    await q.query(`ALTER TABLE classrooms ADD COLUMN roster_sourced_id varchar(255)`);
    await q.query(`CREATE UNIQUE INDEX classrooms_roster ON classrooms (study_id, roster_sourced_id) WHERE roster_sourced_id IS NOT NULL`);
    await q.query(`
      CREATE TABLE roster_students (
        study_id uuid NOT NULL,
        link_hash bytea NOT NULL CHECK (octet_length(link_hash) = 32),
        student_code varchar(40) NOT NULL,
        classroom_id uuid NOT NULL,
        joined_at timestamptz NOT NULL DEFAULT now(),
        -- Set when a later export no longer lists the student in the classroom after the draw (attrition).
        left_at timestamptz,
        PRIMARY KEY (study_id, link_hash),
        UNIQUE (study_id, student_code),
        FOREIGN KEY (study_id, classroom_id) REFERENCES classrooms(study_id, id)
      )`);
    await q.query(`CREATE INDEX roster_students_classroom ON roster_students (classroom_id)`);
    await q.query(`
      CREATE TABLE roster_imports (
        id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
        study_id uuid NOT NULL REFERENCES studies(id),
        imported_by uuid REFERENCES users(id),
        imported_at timestamptz NOT NULL DEFAULT now(),
        summary jsonb NOT NULL
      )`);
    await q.query(`CREATE INDEX roster_imports_study ON roster_imports (study_id, imported_at DESC)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE roster_imports`);
    await q.query(`DROP TABLE roster_students`);
    await q.query(`DROP INDEX classrooms_roster`);
    await q.query(`ALTER TABLE classrooms DROP COLUMN roster_sourced_id`);
    await q.query(`ALTER TABLE sites DROP COLUMN roster_sourced_id`);
  }
}
