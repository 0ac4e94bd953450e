import type { EntityManager } from 'typeorm';
import { districtWideRoles, type Role, type SessionUser } from '@evenhand/entities';
import { StudyEntity } from '@evenhand/entities/orm';
import { AppError } from '../errors.js';

export const hasRole = (user: SessionUser, ...roles: Role[]) => user.roles.some((g) => roles.includes(g.role));

export const sitesOf = (user: SessionUser, role: Role) =>
  user.roles.filter((g) => g.role === role && g.siteId).map((g) => g.siteId as string);

/**
 * Whether the user teaches the classroom: named its teacher and holding the teacher role at its school (a role
 * offered by naming is granted only when accepted, so being named is not enough).
 */
export const teaches = (user: SessionUser, classroom: { teacher_id: string; site_id: string }) =>
  classroom.teacher_id === user.id && sitesOf(user, 'teacher').includes(classroom.site_id);

/**
 * SQL condition (on alias `s`) for the studies a user has a stake in, with its parameters:
 * everything for district-wide roles, else studies with the teacher's classrooms or the principal's site.
 */
export function studyScope(user: SessionUser): { where: string; params: Record<string, unknown> } {
  // District-wide staff see every study; teachers and principals only their own.
  if (hasRole(user, ...districtWideRoles)) return { where: 'TRUE', params: {} };
  return {
    where: `(EXISTS (SELECT 1 FROM classrooms c WHERE c.study_id = s.id AND c.teacher_id = :scopeUser AND c.site_id = ANY(:scopeTeacherSites))
             OR EXISTS (SELECT 1 FROM study_sites ss WHERE ss.study_id = s.id AND ss.site_id = ANY(:scopeSites)))`,
    params: { scopeUser: user.id, scopeTeacherSites: sitesOf(user, 'teacher'), scopeSites: sitesOf(user, 'principal') },
  };
}

/** The study if the user may see it; otherwise 404, so other districts' or schools' IDs reveal nothing. */
export async function findVisibleStudy(manager: EntityManager, user: SessionUser, studyId: string, lock = false): Promise<StudyEntity> {
  const scope = studyScope(user);
  const qb = manager
    .createQueryBuilder(StudyEntity, 's')
    .where('s.id = :studyId', { studyId })
    .andWhere(scope.where, scope.params);
  if (lock) qb.setLock('pessimistic_write');
  const study = await qb.getOne();
  if (!study) throw AppError.notFound('The study');
  return study;
}
