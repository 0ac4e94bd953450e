import type { MigrationInterface, QueryRunner } from 'typeorm';

/** A comparison may register the two-level model (students nested in the assigned units) as its primary test. */
export class TwoLevelPrimaryTest1796208000000 implements MigrationInterface {
  name = 'TwoLevelPrimaryTest1796208000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE comparisons DROP CONSTRAINT comparisons_primary_test_check`);
    await q.query(`ALTER TABLE comparisons ADD CONSTRAINT comparisons_primary_test_check CHECK (primary_test IN ('welch','student','two-level'))`);
  }

  // Keeps every row: comparisons that registered the two-level model stay (NOT VALID), new ones are refused.
  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE comparisons DROP CONSTRAINT comparisons_primary_test_check`);
    await q.query(`ALTER TABLE comparisons ADD CONSTRAINT comparisons_primary_test_check CHECK (primary_test IN ('welch','student')) NOT VALID`);
  }
}
