import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A draft sheet may hold a student whose score is still to come (teachers often type the class list
 * first), so autosave keeps everything typed. Submitting refuses a sheet with such rows, so no submitted,
 * accepted or locked sheet has one.
 */
export class DraftRowsWithoutScores1796188500000 implements MigrationInterface {
  name = 'DraftRowsWithoutScores1796188500000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE scores DROP CONSTRAINT scores_check`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: deletes the draft rows that have no score yet, which the older constraint forbids.
    await q.query(`DELETE FROM scores WHERE score IS NULL AND NOT left_study`);
    await q.query(`ALTER TABLE scores ADD CONSTRAINT scores_check CHECK (score IS NOT NULL OR left_study)`);
  }
}
