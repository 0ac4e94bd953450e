import type { EntityManager } from 'typeorm';

// The sites' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

export interface SiteRow {
  id: string;
  name: string;
  code: string;
  principal_id: string | null;
  principal_name: string | null;
  principal_email: string | null;
  principal_pending: boolean | null;
  classrooms?: number;
  expected_students?: number;
}

const siteSelect = `SELECT s.id, s.name, s.code, s.principal_id, u.name AS principal_name, u.email AS principal_email,
  (u.password_hash IS NULL OR NOT EXISTS (SELECT 1 FROM role_grants pg WHERE pg.user_id = s.principal_id AND pg.role = 'principal' AND pg.site_id = s.id)) AS principal_pending FROM sites s LEFT JOIN users u ON u.id = s.principal_id`;

/** Every site of the district with its principal, by name. */
export function districtSiteRows(manager: EntityManager): Promise<SiteRow[]> {
  return manager.query(`${siteSelect} ORDER BY s.name`);
}

/** The sites enrolled in a study, each with its principal and the study's classrooms and expected students there. */
export function studySiteRows(manager: EntityManager, studyId: string): Promise<SiteRow[]> {
  return manager.query(
    `SELECT x.*, count(c.id)::int AS classrooms, coalesce(sum(c.expected_size), 0)::int AS expected_students
       FROM (${siteSelect} JOIN study_sites ss ON ss.site_id = s.id AND ss.study_id = $1) x
       LEFT JOIN classrooms c ON c.site_id = x.id AND c.study_id = $1
      GROUP BY x.id, x.name, x.code, x.principal_id, x.principal_name, x.principal_email, x.principal_pending
      ORDER BY x.name`,
    [studyId],
  );
}

/** One site with its principal, or none. */
export async function siteRow(manager: EntityManager, id: string): Promise<SiteRow | undefined> {
  const rows: SiteRow[] = await manager.query(`${siteSelect} WHERE s.id = $1`, [id]);
  return rows[0];
}
