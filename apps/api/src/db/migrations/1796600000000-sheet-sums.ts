import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A run's classroom pass summed every outcome score and joined it to the student's pretest: at 80 000 classrooms of
 * 25 that pass alone was several times a scan of the scores. A sheet's exact sums (its scored rows, their sum and sum
 * of squares, its leavers, and the same sums over the students who also have a score on the classroom's baseline
 * sheet) are now stored once, when the sheet is submitted or accepted, beside its digest. Any write to a sheet's
 * scores forgets the sums of that sheet and of every sheet paired with it, in the same statement; a run computes the
 * sums itself for any sheet without valid ones.
 */
export class SheetSums1796600000000 implements MigrationInterface {
  name = 'SheetSums1796600000000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE TABLE sheet_sums (
        sheet_id uuid PRIMARY KEY REFERENCES score_sheets(id) ON DELETE CASCADE,
        -- The classroom's baseline sheet the pairs were taken from; null when there was none.
        pretest_sheet_id uuid REFERENCES score_sheets(id) ON DELETE CASCADE,
        n int NOT NULL, sy numeric, syy numeric, left_n int NOT NULL,
        np int NOT NULL, py numeric, px numeric, pyy numeric, pxx numeric, pxy numeric
      )`);
    await q.query(`CREATE INDEX sheet_sums_pretest ON sheet_sums (pretest_sheet_id)`);
    await q.query(`
      CREATE OR REPLACE FUNCTION forget_sheet_digests() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP IN ('INSERT', 'UPDATE') THEN
          UPDATE score_sheets SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND id IN (SELECT DISTINCT sheet_id FROM new_rows);
          DELETE FROM sheet_sums WHERE sheet_id IN (SELECT DISTINCT sheet_id FROM new_rows) OR pretest_sheet_id IN (SELECT DISTINCT sheet_id FROM new_rows);
        END IF;
        IF TG_OP IN ('UPDATE', 'DELETE') THEN
          UPDATE score_sheets SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND id IN (SELECT DISTINCT sheet_id FROM old_rows);
          DELETE FROM sheet_sums WHERE sheet_id IN (SELECT DISTINCT sheet_id FROM old_rows) OR pretest_sheet_id IN (SELECT DISTINCT sheet_id FROM old_rows);
        END IF;
        RETURN NULL;
      END $$`);
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`
      CREATE OR REPLACE FUNCTION forget_sheet_digests() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP IN ('INSERT', 'UPDATE') THEN
          UPDATE score_sheets SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND id IN (SELECT DISTINCT sheet_id FROM new_rows);
        END IF;
        IF TG_OP IN ('UPDATE', 'DELETE') THEN
          UPDATE score_sheets SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND id IN (SELECT DISTINCT sheet_id FROM old_rows);
        END IF;
        RETURN NULL;
      END $$`);
    // Destroys data: forgets the stored sums (a run recomputes missing ones).
    await q.query(`DROP TABLE sheet_sums`);
  }
}
