import type { EntityManager } from 'typeorm';

/**
 * A sheet's digest: the SHA-256 of its scored rows as "student_code,score" lines (the score as PostgreSQL prints
 * numeric), in byte order of student code, joined with "\n"; a sheet without scored rows hashes the empty text.
 * $1: sheet IDs; one row (id, digest) per sheet. Each sheet's rows are read by the primary key whatever the
 * planner's statistics say: as one join over thousands of sheets just after a bulk load, stale statistics once
 * chose a plan that ran for many minutes.
 */
export const sheetDigestsSql = `
  SELECT ids.id, sha256(convert_to(coalesce(
           (SELECT string_agg(x.student_code || ',' || x.score::text, E'\\n' ORDER BY x.student_code COLLATE "C")
              FROM scores x WHERE x.sheet_id = ids.id AND x.score IS NOT NULL), ''), 'UTF8')) AS digest
    FROM unnest($1::uuid[]) AS ids(id)`;

/** Stores the digests of sheets whose rows stop changing (submitted, accepted), so runs need not hash them again. */
export async function storeSheetDigests(manager: EntityManager, sheetIds: string[]): Promise<void> {
  await manager.query(`UPDATE score_sheets sh SET rows_sha256 = d.digest FROM (${sheetDigestsSql}) d WHERE sh.id = d.id AND sh.rows_sha256 IS NULL`, [sheetIds]);
}
