import type { DataSource, EntityManager } from 'typeorm';
import {
  classroomCsvColumns,
  classroomCsvRowSchema,
  districtWideRoles,
  type Classroom,
  type Cohort,
  type CreateClassroom,
  type CsvRowIssue,
  type SessionUser,
  type UpdateClassroom,
} from '@evenhand/entities';
import { ClassroomEntity, CohortEntity, DrawEntity, StudySiteEntity } from '@evenhand/entities/orm';
import { recordAudit } from '../audit/service.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { readSmallCsv } from '../lib/csv.js';
import { findVisibleStudy, hasRole, sitesOf } from '../studies/access.js';
import { classroomNameTaken, classroomRow, cohortNameTaken, enrolledSiteCodes, visibleClassroomRows, type ClassroomRow } from './queries.js';
import { ensurePerson, releaseRole } from '../accounts/role-invitations.js';

const toClassroom = (r: ClassroomRow): Classroom => ({
  id: r.id,
  studyId: r.study_id,
  siteId: r.site_id,
  siteName: r.site_name,
  cohortId: r.cohort_id,
  cohortName: r.cohort_name,
  name: r.name,
  grade: r.grade,
  expectedSize: r.expected_size,
  teacher: { id: r.teacher_id, name: r.teacher_name, email: r.teacher_email, invitationPending: r.teacher_pending },
  arm: r.arm,
});

/** Teachers see their own classrooms, principals their school's; district roles all of the study's. */
export async function listClassrooms(db: DataSource, user: SessionUser, studyId: string): Promise<{ items: Classroom[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  const districtWide = hasRole(user, ...districtWideRoles);
  const rows = await visibleClassroomRows(db.manager, studyId, {
    districtWide,
    userId: user.id,
    principalSites: sitesOf(user, 'principal'),
    teacherSites: sitesOf(user, 'teacher'),
  });
  return { items: rows.map(toClassroom), total: rows.length };
}

async function classroomById(manager: EntityManager, id: string): Promise<Classroom> {
  const row = await classroomRow(manager, id);
  if (!row) throw AppError.notFound('The classroom');
  return toClassroom(row);
}

async function refuseAfterDraw(manager: EntityManager, studyId: string) {
  if (await manager.existsBy(DrawEntity, { studyId })) {
    throw AppError.conflict('The draw is committed: classrooms can no longer be added to this study');
  }
}

export async function listCohorts(db: DataSource, user: SessionUser, studyId: string): Promise<{ items: Cohort[]; total: number }> {
  await findVisibleStudy(db.manager, user, studyId);
  const rows = await db.getRepository(CohortEntity).find({ where: { studyId }, order: { name: 'ASC' } });
  return { items: rows.map(({ id, studyId: s, name }) => ({ id, studyId: s, name })), total: rows.length };
}

export async function createCohort(db: DataSource, user: SessionUser, studyId: string, name: string): Promise<Cohort> {
  return db.transaction(async (manager) => {
    await findVisibleStudy(manager, user, studyId, true);
    if (await cohortNameTaken(manager, studyId, name)) throw AppError.conflict(`This study already has a cohort named “${name}”`);
    const cohort = await manager.save(manager.create(CohortEntity, { studyId, name }));
    await recordAudit(manager, { actorId: user.id, studyId, action: 'cohort.created', entityType: 'cohort', entityId: cohort.id, after: { name } });
    return { id: cohort.id, studyId, name };
  });
}

async function insertClassroom(manager: EntityManager, deps: Pick<Deps, 'config' | 'jobs'>, actor: SessionUser, studyId: string, input: CreateClassroom) {
  const { userId } = await ensurePerson(manager, deps, actor, input.teacher, { role: 'teacher', siteId: input.siteId }, studyId);
  if (await classroomNameTaken(manager, studyId, input.siteId, input.name)) throw AppError.conflict(`This site already has a classroom named “${input.name}”`, { issues: [{ path: 'name', message: 'Already used at this site' }] });
  const saved = await manager.save(
    manager.create(ClassroomEntity, {
      studyId,
      siteId: input.siteId,
      cohortId: input.cohortId,
      teacherId: userId,
      name: input.name,
      grade: input.grade,
      expectedSize: input.expectedSize,
      arm: null,
    }),
  );
  await recordAudit(manager, { actorId: actor.id, studyId, action: 'classroom.created', entityType: 'classroom', entityId: saved.id, after: input });
  return saved.id;
}

export async function createClassroom(deps: Deps, actor: SessionUser, studyId: string, input: CreateClassroom): Promise<Classroom> {
  return deps.db.transaction(async (manager) => {
    await findVisibleStudy(manager, actor, studyId, true);
    await refuseAfterDraw(manager, studyId);
    const issues = [];
    if (!(await manager.existsBy(StudySiteEntity, { studyId, siteId: input.siteId }))) issues.push({ path: 'siteId', message: 'Enrol this site in the study first' });
    if (!(await manager.existsBy(CohortEntity, { studyId, id: input.cohortId }))) issues.push({ path: 'cohortId', message: 'Choose one of this study’s cohorts' });
    if (issues.length) throw AppError.validation('The classroom refers to a site or cohort outside this study', issues);
    return classroomById(manager, await insertClassroom(manager, deps, actor, studyId, input));
  });
}

/** Bulk add from CSV: every row is checked first; one bad row and nothing is written. */
export async function importClassrooms(deps: Deps, actor: SessionUser, studyId: string, file: Buffer): Promise<{ created: number; classrooms: Classroom[] }> {
  const rows = await readSmallCsv(file, classroomCsvColumns, 2000, 'classrooms');
  const created = await deps.db.transaction(async (manager) => {
    await findVisibleStudy(manager, actor, studyId, true);
    await refuseAfterDraw(manager, studyId);
    const enrolled = await enrolledSiteCodes(manager, studyId);
    const siteByCode = new Map(enrolled.map((s) => [s.code.toUpperCase(), s.id]));
    const problems: CsvRowIssue[] = [];
    const seen = new Map<string, number>();
    const valid = rows.flatMap(({ line, values }) => {
      const parsed = classroomCsvRowSchema.safeParse(values);
      if (!parsed.success) {
        for (const i of parsed.error.issues) problems.push({ row: line, column: String(i.path[0] ?? ''), message: i.message });
        return [];
      }
      const r = parsed.data;
      const siteId = siteByCode.get(r.site_code.toUpperCase());
      if (!siteId) problems.push({ row: line, column: 'site_code', message: `No site with code ${r.site_code} is enrolled in this study` });
      const key = `${r.site_code.toUpperCase()}|${r.classroom.toLowerCase()}`;
      if (seen.has(key)) problems.push({ row: line, column: 'classroom', message: `Same site and classroom as row ${seen.get(key)}` });
      seen.set(key, line);
      return siteId ? [{ line, siteId, ...r }] : [];
    });
    if (problems.length) throw new AppError('validation_failed', `${problems.length} problem(s) in the file; nothing was imported`, { rows: problems });

    const cohortIds = new Map<string, string>();
    for (const c of await manager.findBy(CohortEntity, { studyId })) cohortIds.set(c.name.toLowerCase(), c.id);
    for (const r of valid) {
      let cohortId = cohortIds.get(r.cohort.toLowerCase());
      if (!cohortId) {
        cohortId = (await manager.save(manager.create(CohortEntity, { studyId, name: r.cohort }))).id;
        cohortIds.set(r.cohort.toLowerCase(), cohortId);
      }
      try {
        await insertClassroom(manager, deps, actor, studyId, {
          siteId: r.siteId,
          cohortId,
          name: r.classroom,
          grade: r.grade,
          expectedSize: r.expected_size,
          teacher: { email: r.teacher_email, name: r.teacher_name },
        });
      } catch (err) {
        if (err instanceof AppError && err.code === 'conflict') {
          throw new AppError('validation_failed', '1 problem in the file; nothing was imported', { rows: [{ row: r.line, column: 'classroom', message: err.message }] });
        }
        throw err;
      }
    }
    return valid.length;
  });
  return { created, classrooms: (await listClassrooms(deps.db, actor, studyId)).items };
}

export async function updateClassroom(deps: Deps, actor: SessionUser, id: string, input: UpdateClassroom): Promise<Classroom> {
  return deps.db.transaction(async (manager) => {
    const before = await classroomById(manager, id);
    await findVisibleStudy(manager, actor, before.studyId, true);
    if (input.cohortId && !(await manager.existsBy(CohortEntity, { studyId: before.studyId, id: input.cohortId }))) {
      throw AppError.validation('Choose one of this study’s cohorts', [{ path: 'cohortId', message: 'Not a cohort of this study' }]);
    }
    const teacherId = input.teacher ? (await ensurePerson(manager, deps, actor, input.teacher, { role: 'teacher', siteId: before.siteId }, before.studyId)).userId : undefined;
    await manager.update(ClassroomEntity, id, {
      ...(input.name !== undefined ? { name: input.name } : {}),
      ...(input.grade !== undefined ? { grade: input.grade } : {}),
      ...(input.expectedSize !== undefined ? { expectedSize: input.expectedSize } : {}),
      ...(input.cohortId !== undefined ? { cohortId: input.cohortId } : {}),
      ...(teacherId ? { teacherId } : {}),
    });
    const after = await classroomById(manager, id);
    await recordAudit(manager, { actorId: actor.id, studyId: before.studyId, action: 'classroom.updated', entityType: 'classroom', entityId: id, before, after });
    // The replaced teacher keeps the school's teacher role only while another classroom there names them.
    if (after.teacher.id !== before.teacher.id) await releaseRole(manager, actor, before.teacher.id, 'teacher', before.siteId, before.studyId);
    return after;
  });
}

