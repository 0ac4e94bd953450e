import type { EntityManager } from 'typeorm';

/**
 * A sheet's digest: the SHA-256 of its scored rows as "student_code,score" lines (the score as PostgreSQL prints
 * numeric), in byte order of student code, joined with "\n"; a sheet without scored rows hashes the empty text.
 * $1: sheet IDs; one row (id, digest) per sheet.
 */
export const sheetDigestsSql = `
  SELECT ids.id, sha256(convert_to(coalesce(string_agg(x.student_code || ',' || x.score::text, E'\\n' ORDER BY x.student_code COLLATE "C"), ''), 'UTF8')) AS digest
    FROM unnest($1::uuid[]) AS ids(id) LEFT JOIN scores x ON x.sheet_id = ids.id AND x.score IS NOT NULL
   GROUP BY ids.id`;

/** Stores the digests of sheets whose rows stop changing (submitted, accepted), so runs need not hash them again. */
export async function storeSheetDigests(manager: EntityManager, sheetIds: string[]): Promise<void> {
  await manager.query(`UPDATE score_sheets sh SET rows_sha256 = d.digest FROM (${sheetDigestsSql}) d WHERE sh.id = d.id AND sh.rows_sha256 IS NULL`, [sheetIds]);
}
