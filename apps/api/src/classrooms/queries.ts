import type { EntityManager } from 'typeorm';
import type { Classroom } from '@evenhand/entities';

// The classrooms' named SQL and the rows it answers (DEVELOPERS.md, "Data access").

export interface ClassroomRow {
  id: string;
  study_id: string;
  site_id: string;
  site_name: string;
  cohort_id: string;
  cohort_name: string;
  name: string;
  grade: string;
  expected_size: number;
  teacher_id: string;
  teacher_name: string;
  teacher_email: string;
  teacher_pending: boolean;
  arm: Classroom['arm'];
}

const classroomSelect = `SELECT c.id, c.study_id, c.site_id, s.name AS site_name, c.cohort_id, h.name AS cohort_name, c.name, c.grade,
    c.expected_size, c.teacher_id, u.name AS teacher_name, u.email AS teacher_email, (u.password_hash IS NULL OR NOT EXISTS (SELECT 1 FROM role_grants tg WHERE tg.user_id = c.teacher_id AND tg.role = 'teacher' AND tg.site_id = c.site_id)) AS teacher_pending, c.arm
  FROM classrooms c JOIN sites s ON s.id = c.site_id JOIN cohorts h ON h.id = c.cohort_id JOIN users u ON u.id = c.teacher_id`;

/**
 * A study's classrooms a reader may see, by site, cohort and name: all of them for district-wide staff, else those the
 * reader teaches (named and holding the teacher role at the school) and those of the reader's schools as principal.
 */
export function visibleClassroomRows(
  manager: EntityManager,
  studyId: string,
  reader: { districtWide: boolean; userId: string; principalSites: string[]; teacherSites: string[] },
): Promise<ClassroomRow[]> {
  return manager.query(
    `${classroomSelect} WHERE c.study_id = $1 AND ($2 OR (c.teacher_id = $3 AND c.site_id = ANY($5)) OR c.site_id = ANY($4))
     ORDER BY s.name, h.name, c.name`,
    [studyId, reader.districtWide, reader.userId, reader.principalSites, reader.teacherSites],
  );
}

/** One classroom with its site, cohort and teacher, or none. */
export async function classroomRow(manager: EntityManager, id: string): Promise<ClassroomRow | undefined> {
  const rows: ClassroomRow[] = await manager.query(`${classroomSelect} WHERE c.id = $1`, [id]);
  return rows[0];
}

/** Whether the study has a cohort of this name, letter case aside. */
export async function cohortNameTaken(manager: EntityManager, studyId: string, name: string): Promise<boolean> {
  const rows: unknown[] = await manager.query(`SELECT 1 FROM cohorts WHERE study_id = $1 AND lower(name) = lower($2)`, [studyId, name]);
  return rows.length > 0;
}

/** Whether the study has a classroom of this name at the site, letter case aside. */
export async function classroomNameTaken(manager: EntityManager, studyId: string, siteId: string, name: string): Promise<boolean> {
  const rows: unknown[] = await manager.query(`SELECT 1 FROM classrooms WHERE study_id = $1 AND site_id = $2 AND lower(name) = lower($3)`, [studyId, siteId, name]);
  return rows.length > 0;
}

/** The sites enrolled in a study with their codes. */
export function enrolledSiteCodes(manager: EntityManager, studyId: string): Promise<{ id: string; code: string }[]> {
  return manager.query(`SELECT s.id, s.code FROM sites s JOIN study_sites ss ON ss.site_id = s.id WHERE ss.study_id = $1`, [studyId]);
}
