import type { MigrationInterface, QueryRunner } from 'typeorm';

/**
 * A submitted or accepted sheet's rows no longer change, so their SHA-256 is computed once, when the sheet is
 * submitted or accepted, instead of by every run that reads them (nightly monitoring runs read the same sheets
 * again and again). Any write to a sheet's scores forgets its stored digest in the same statement, so a stored
 * digest always matches the rows; a run computes the digest itself for any sheet that has none.
 */
export class SheetDigests1796194800000 implements MigrationInterface {
  name = 'SheetDigests1796194800000';

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE score_sheets ADD COLUMN rows_sha256 bytea`);
    await q.query(`
      CREATE FUNCTION forget_sheet_digests() RETURNS trigger LANGUAGE plpgsql AS $$
      BEGIN
        IF TG_OP IN ('INSERT', 'UPDATE') THEN
          UPDATE score_sheets SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND id IN (SELECT DISTINCT sheet_id FROM new_rows);
        END IF;
        IF TG_OP IN ('UPDATE', 'DELETE') THEN
          UPDATE score_sheets SET rows_sha256 = NULL WHERE rows_sha256 IS NOT NULL AND id IN (SELECT DISTINCT sheet_id FROM old_rows);
        END IF;
        RETURN NULL;
      END $$`);
    // Named after the lock checks (triggers fire in name order), so a write to a locked sheet is refused as such first.
    await q.query(`CREATE TRIGGER scores_sheet_digest_insert AFTER INSERT ON scores REFERENCING NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION forget_sheet_digests()`);
    await q.query(
      `CREATE TRIGGER scores_sheet_digest_update AFTER UPDATE ON scores REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows FOR EACH STATEMENT EXECUTE FUNCTION forget_sheet_digests()`,
    );
    await q.query(`CREATE TRIGGER scores_sheet_digest_delete AFTER DELETE ON scores REFERENCING OLD TABLE AS old_rows FOR EACH STATEMENT EXECUTE FUNCTION forget_sheet_digests()`);
  }

  async down(q: QueryRunner): Promise<void> {
    // Destroys data: forgets the sheets' stored digests (a run recomputes a missing one).
    for (const op of ['insert', 'update', 'delete']) await q.query(`DROP TRIGGER scores_sheet_digest_${op} ON scores`);
    await q.query(`DROP FUNCTION forget_sheet_digests()`);
    await q.query(`ALTER TABLE score_sheets DROP COLUMN rows_sha256`);
  }
}
