import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * How many student codes are registered to each classroom (its randomised students, for the accounting), kept by the
 * students registry's own writes instead of counted by every run: at 80 000 classrooms, counting 2 000 000 codes cost a
 * run more than a scan of their scores. Statement triggers add and subtract the codes each write inserts, moves or
 * deletes, in classroom order (the order writers lock classrooms in), in the same transaction.
 */
export class RegisteredCounts1796600100000 implements MigrationInterface {
  name = 'RegisteredCounts1796600100000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE registered_counts (classroom_id uuid PRIMARY KEY REFERENCES classrooms(id) ON DELETE CASCADE, n int NOT NULL CHECK (n >= 0))`);
    await q.query(`INSERT INTO registered_counts (classroom_id, n) SELECT classroom_id, count(*) FROM students GROUP BY classroom_id`);
    await q.query(`
      CREATE FUNCTION count_registered() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP IN ('UPDATE', 'DELETE') THEN
          UPDATE registered_counts r SET n = r.n - d.k
            FROM (SELECT classroom_id, count(*)::int AS k FROM old_rows GROUP BY classroom_id ORDER BY classroom_id) d
           WHERE r.classroom_id = d.classroom_id;
        END IF;
        IF TG_OP IN ('INSERT', 'UPDATE') THEN
          INSERT INTO registered_counts (classroom_id, n)
          SELECT classroom_id, count(*)::int FROM new_rows GROUP BY classroom_id ORDER BY classroom_id
          ON CONFLICT (classroom_id) DO UPDATE SET n = registered_counts.n + excluded.n;
        END IF;
        RETURN NULL;
      END $$`);
    await q.query(`CREATE TRIGGER students_count_insert AFTER INSERT ON students REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION count_registered()`);
    await q.query(
      `CREATE TRIGGER students_count_update AFTER UPDATE ON students REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION count_registered()`,
    );
    await q.query(`CREATE TRIGGER students_count_delete AFTER DELETE ON students REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION count_registered()`);
  }

  async down(q: QueryRunner): Promise<void> {
    for (const op of ['insert', 'update', 'delete']) await q.query(`DROP TRIGGER students_count_${op} ON students`);
    await q.query(`DROP FUNCTION count_registered()`);
    // Destroys data only derived from the registry: the counts (a run counted the codes itself before).
    await q.query(`DROP TABLE registered_counts`);
  }
}
