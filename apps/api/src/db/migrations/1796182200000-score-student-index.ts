import type { MigrationInterface, QueryRunner } from 'typeorm';

/** Scores by student: the students registry's foreign key and its clean-up look scores up this way. */
export class ScoreStudentIndex1796182200000 implements MigrationInterface {
  name = 'ScoreStudentIndex1796182200000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE INDEX scores_student ON scores (study_id, student_code, classroom_id)`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP INDEX scores_student`);
  }
}
