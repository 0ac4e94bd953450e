import { In, IsNull, type DataSource, type EntityManager } from 'typeorm';
import type { CsvRowIssue, RosterImport, RosterPreview, RosterSchoolPreview, RosterSelection, SessionUser } from '@evenhand/entities';
import { DrawEntity, SiteEntity } from '@evenhand/entities/orm';
import { recordAudit, recordAudits } from '../audit/service.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { findVisibleStudy } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';
import { ensurePeople, type Naming, type NamingRefusal } from '../accounts/role-invitations.js';
import type { Bundle } from './bundle.js';
import { refuseRows, stageBundle, type StagedBundle } from './parser.js';
import {
  auditStudentChanges,
  changeCounts,
  changesByClassroom,
  classesPreview,
  classroomNameClashes,
  cohortsForGrades,
  createClassrooms,
  enrolSites,
  exportStudentCount,
  insertRosterImport,
  insertSites,
  linkChosenClassrooms,
  linkSites,
  markLeft,
  moveStudents,
  prepareStudentChanges,
  recordLeaving,
  recordMoves,
  registerNewStudents,
  removeStudents,
  restoreReturning,
  rosterImports,
  schoolsPreview,
  setPrincipals,
  stageChosen,
  stageMembers,
  stageTargets,
  studentsChosenTwice,
  takenSiteCodes,
  updateClassrooms,
  type ClassroomTarget,
} from './queries.js';

/**
 * Rosters from a OneRoster export. A preview stages the bundle and reports what it would enrol, then
 * rolls back; a commit stages it again with the coordinator's choice of schools and classes and writes
 * everything in one transaction. Students are matched across exports by the keyed hash of their
 * sourcedId (`students.roster_link`): a newer export adds the students who joined a classroom and, for
 * those who left, removes them before the draw or, after it, records the leaving as attrition and
 * keeps their codes and scores.
 */

const MAX_CLASS_SIZE = 200;

/** Where in users.csv the export names each class's teacher and each school's administrator (for row-numbered refusals). */
interface PeopleLines {
  teacher: Map<string, number>;
  administrator: Map<string, number>;
}

/** The staged schools and classes against the study as it is, and the lines that name their people. */
async function describe(manager: EntityManager, studyId: string, staged: StagedBundle, drawCommitted: boolean): Promise<{ preview: RosterPreview; lines: PeopleLines }> {
  await stageMembers(manager, studyId, staged.studentsMayRepeatInAClass);
  const classes = await classesPreview(manager, studyId);
  const schools = await schoolsPreview(manager, studyId);
  const bySchool = new Map<string, RosterSchoolPreview['classes']>();
  for (const c of classes) {
    const blocked = !c.teacher_email
      ? 'The export names no teacher with an e-mail address for this class'
      : c.students === 0
        ? 'The export lists no students in this class'
        : c.students > MAX_CLASS_SIZE
          ? `More than ${MAX_CLASS_SIZE} students`
          : drawCommitted && !c.classroom_id
            ? 'The draw is committed: new classrooms can no longer join'
            : null;
    const list = bySchool.get(c.school) ?? [];
    list.push({
      sourcedId: c.sourced_id,
      title: c.title,
      grade: c.grade,
      teacher: c.teacher_email ? { email: c.teacher_email, name: c.teacher_name ?? c.teacher_email } : null,
      students: c.students,
      classroomId: c.classroom_id,
      joined: c.joined,
      left: c.left,
      blocked,
    });
    bySchool.set(c.school, list);
  }
  const items: RosterSchoolPreview[] = schools.map((s) => ({
    sourcedId: s.sourced_id,
    name: s.name,
    identifier: s.identifier,
    siteId: s.site_id,
    enrolled: s.enrolled,
    principal: s.admin_email
      ? { email: s.admin_email, name: s.admin_name ?? s.admin_email }
      : s.principal_email
        ? { email: s.principal_email, name: s.principal_name! }
        : null,
    principalFromExport: !!s.admin_email,
    classes: bySchool.get(s.sourced_id) ?? [],
  }));
  const students = await exportStudentCount(manager);
  return {
    preview: { drawCommitted, schools: items, totals: { schools: items.length, classes: classes.length, students } },
    lines: {
      teacher: new Map(classes.flatMap((c) => (c.teacher_line ? [[c.sourced_id, c.teacher_line] as const] : []))),
      administrator: new Map(schools.flatMap((x) => (x.admin_line ? [[x.sourced_id, x.admin_line] as const] : []))),
    },
  };
}

/** What the bundle would enrol; nothing is written. */
export async function previewRoster(deps: Deps, actor: SessionUser, studyId: string, bundle: Bundle): Promise<RosterPreview> {
  const runner = deps.db.createQueryRunner();
  await runner.connect();
  await runner.startTransaction();
  try {
    await findVisibleStudy(runner.manager, actor, studyId);
    const staged = await stageBundle(runner.manager, bundle, deps.config.rosterLinkSecret);
    const drawCommitted = await runner.manager.existsBy(DrawEntity, { studyId });
    return (await describe(runner.manager, studyId, staged, drawCommitted)).preview;
  } finally {
    await runner.rollbackTransaction();
    await runner.release();
  }
}

const rowError = (row: number, column: string, message: string): CsvRowIssue => ({ row, column, message });

/** Enrols the chosen schools and classes and brings their student lists to the export's; all or nothing. */
export async function commitRoster(deps: Deps, actor: SessionUser, studyId: string, bundle: Bundle, selection: RosterSelection): Promise<RosterImport> {
  const { result } = await deps.db.transaction(async (manager) => {
    await findVisibleStudy(manager, actor, studyId, true);
    const staged = await stageBundle(manager, bundle, deps.config.rosterLinkSecret);
    const drawCommitted = await manager.existsBy(DrawEntity, { studyId });
    const { preview, lines } = await describe(manager, studyId, staged, drawCommitted);

    // The choice must name the bundle's own schools and classes, each class with its school.
    const issues: { path: string; message: string }[] = [];
    const schools = new Map(preview.schools.map((s) => [s.sourcedId, s]));
    const classes = new Map(preview.schools.flatMap((s) => s.classes.map((c) => [c.sourcedId, { ...c, school: s.sourcedId }] as const)));
    for (const id of selection.schools) if (!schools.has(id)) issues.push({ path: 'schools', message: `School ${id} is not in the bundle` });
    const named = new Set<string>();
    for (const id of selection.classes) {
      const c = classes.get(id);
      if (named.has(id)) issues.push({ path: 'classes', message: `Class ${id} is chosen twice` });
      else if (!c) issues.push({ path: 'classes', message: `Class ${id} is not in the bundle` });
      else if (!selection.schools.includes(c.school)) issues.push({ path: 'classes', message: `Class “${c.title}” belongs to a school that was not chosen` });
      else if (c.blocked) issues.push({ path: 'classes', message: `Class “${c.title}” cannot take part: ${c.blocked}` });
      named.add(id);
    }
    for (const id of Object.keys(selection.principals ?? {})) {
      const school = schools.get(id);
      if (!school || !selection.schools.includes(id)) issues.push({ path: 'principals', message: `School ${id} is not among the chosen schools` });
      else if (school.principalFromExport) issues.push({ path: 'principals', message: `The export names the principal of ${school.name}` });
    }
    if (issues.length) throw AppError.validation('The choice of schools and classes does not fit the bundle', issues);
    const chosen = selection.classes.map((id) => classes.get(id)!);

    // One student, one classroom: a student in two chosen classes is refused, with both lines.
    await stageChosen(manager, selection.classes);
    const twice = await studentsChosenTwice(manager);
    if (twice.length) {
      throw refuseRows(twice.map((r) => rowError(r.line, 'enrollments.csv: userSourcedId', `The student is also in another chosen class (line ${r.first}); a student belongs to one classroom of a study`)), twice.length);
    }

    // Schools, set-wise: an earlier import's site, or the site whose code is the org's identifier, or a new site.
    const chosenSchools = selection.schools.map((id) => schools.get(id)!);
    const siteOf = new Map(chosenSchools.flatMap((x) => (x.siteId ? [[x.sourcedId, x.siteId] as const] : [])));
    const fresh = chosenSchools.filter((x) => !x.siteId);
    if (fresh.length) {
      const codes = await freeSiteCodes(manager, fresh.map((x) => x.identifier || x.name));
      const made = await insertSites(manager, fresh.map((x, i) => ({ name: x.name, code: codes[i], sourcedId: x.sourcedId })));
      for (const m of made) siteOf.set(m.roster_sourced_id, m.id);
    }
    const matched = chosenSchools.filter((x) => x.siteId);
    await linkSites(manager, matched.map((x) => ({ siteId: x.siteId!, sourcedId: x.sourcedId })));
    const enrolling = chosenSchools.filter((x) => !x.enrolled);
    if (enrolling.length) {
      await enrolSites(manager, studyId, enrolling.map((x) => siteOf.get(x.sourcedId)!));
      await advanceStatus(manager, studyId, 'enrolling', actor.id);
      await recordAudits(
        manager,
        enrolling.map((x) => ({ actorId: actor.id, studyId, action: 'site.enrolled', entityType: 'site', entityId: siteOf.get(x.sourcedId), after: { name: x.name, rosterSourcedId: x.sourcedId } })),
      );
    }

    // People, named all at once through the users service: the export's administrator (or else the one the
    // coordinator names) as the principal of a site that has none, and each chosen class's teacher at its school.
    const leaderless = new Set((await manager.findBy(SiteEntity, { id: In([...siteOf.values()]), principalId: IsNull() })).map((x) => x.id));
    const naming: (Naming & { line: number | null; school: string })[] = [];
    for (const x of chosenSchools) {
      const principal = x.principalFromExport ? x.principal : selection.principals?.[x.sourcedId];
      const siteId = siteOf.get(x.sourcedId)!;
      if (principal && leaderless.has(siteId)) {
        naming.push({ person: principal, offered: { role: 'principal', siteId }, line: x.principalFromExport ? lines.administrator.get(x.sourcedId)! : null, school: x.sourcedId });
      }
    }
    const teacherAt = (c: (typeof chosen)[number]) => `${c.teacher!.email}|${siteOf.get(c.school)}`;
    const teacherNaming = new Map<string, number>();
    for (const c of chosen) {
      if (teacherNaming.has(teacherAt(c))) continue;
      teacherNaming.set(teacherAt(c), naming.length);
      naming.push({ person: c.teacher!, offered: { role: 'teacher', siteId: siteOf.get(c.school)! }, line: lines.teacher.get(c.sourcedId)!, school: c.school });
    }
    // Someone who cannot take the role is refused: a principal the coordinator named, by the choice; anyone the
    // export names, by the users.csv line that names them.
    const refuse = (refused: NamingRefusal[]): never => {
      const fromChoice = refused.filter((r) => naming[r.index].line === null);
      if (fromChoice.length) {
        throw AppError.conflict(fromChoice[0].message, { issues: fromChoice.map((r) => ({ path: `principals.${naming[r.index].school}.email`, message: r.message })) });
      }
      throw refuseRows(refused.map((r) => rowError(naming[r.index].line!, 'users.csv: email', r.message)), refused.length);
    };
    const people = await ensurePeople(manager, deps, actor, naming, studyId, refuse);
    const principals = naming.flatMap((n, i) => (n.offered.role === 'principal' ? [{ siteId: n.offered.siteId, userId: people[i].userId }] : []));
    await setPrincipals(manager, principals);
    const teacherIds = new Map([...teacherNaming].map(([key, i]) => [key, people[i].userId]));

    // Cohorts by grade ("Grade 4"), reused across imports.
    const cohorts = await cohortsForGrades(manager, studyId, [...new Set(chosen.map((c) => c.grade))]);
    const cohortIds = new Map(cohorts.map((c) => [c.grade, c.id]));

    // Classrooms, set-wise: update the earlier import's, create the new (before the draw only).
    const targets = chosen.map((c): ClassroomTarget => ({
      sourced_id: c.sourcedId,
      site_id: siteOf.get(c.school)!,
      cohort_id: cohortIds.get(c.grade)!,
      teacher_id: teacherIds.get(teacherAt(c))!,
      name: c.title,
      grade: c.grade,
      expected_size: c.students,
    }));
    await stageTargets(manager, targets);
    const clashes = await classroomNameClashes(manager, studyId);
    if (clashes.length) {
      throw refuseRows(clashes.map((c) => rowError(c.line, 'classes.csv: title', `The school already has a classroom named “${c.title}”; classroom names are unique within a school`)), clashes.length);
    }
    const updated = await updateClassrooms(manager, studyId, actor.id);
    const created = await createClassrooms(manager, studyId, actor.id);
    await linkChosenClassrooms(manager, studyId);

    const students = await applyStudents(manager, studyId, actor.id, drawCommitted);
    const summary = {
      sitesEnrolled: enrolling.length,
      classroomsCreated: created,
      classroomsUpdated: updated,
      studentsJoined: students.joined,
      studentsRemoved: students.removed,
      studentsLeft: students.left,
      invitationsSent: people.filter((p) => p.invited).length,
      classrooms: students.classrooms,
    };
    const row = await insertRosterImport(manager, studyId, actor.id, summary);
    await recordAudit(manager, {
      actorId: actor.id,
      studyId,
      action: 'roster.imported',
      entityType: 'roster_import',
      entityId: row.id,
      after: { schools: selection.schools, classes: selection.classes.length, ...summary, classrooms: undefined },
    });
    const result: RosterImport = { id: row.id, studyId, importedAt: new Date(row.imported_at).toISOString(), importedBy: actor.email, ...summary };
    return { result };
  });
  return result;
}

/** Site codes from the orgs' identifiers (or names), each made unique among the district's sites and each other. */
async function freeSiteCodes(manager: EntityManager, from: string[]): Promise<string[]> {
  const bases = from.map((x) => x.toUpperCase().replace(/[^A-Z0-9]/g, '').slice(0, 16) || 'SCHOOL');
  const taken = await takenSiteCodes(manager, [...new Set(bases)]);
  return bases.map((base) => {
    let n = 0;
    while (taken.has(n ? `${base}${n}` : base)) n++;
    const code = n ? `${base}${n}` : base;
    taken.add(code);
    return code;
  });
}

/**
 * Brings the chosen classrooms' students to the export's, set-wise. New students get the next free
 * codes R0000001, R0000002…; a student the export moved to another chosen classroom moves before the
 * draw; one no longer listed is removed before the draw (when no sheet has scores for them) or, after
 * the draw, keeps the code and is marked as having left (attrition). One audit entry lists, per
 * classroom, the codes that joined and left.
 */
async function applyStudents(manager: EntityManager, studyId: string, actorId: string, drawCommitted: boolean) {
  await prepareStudentChanges(manager);
  await recordLeaving(manager, studyId, drawCommitted);
  // Before the draw a student listed in another chosen classroom moves there, with the code (recorded as moving out and joining).
  if (!drawCommitted && (await recordMoves(manager, studyId))) {
    try {
      await moveStudents(manager, studyId);
    } catch (err) {
      if ((err as { driverError?: { code?: string } }).driverError?.code === '23503') {
        throw AppError.conflict('The export moves a student who already has scores in their classroom; scores stay with the classroom they were given in');
      }
      throw err;
    }
  }
  await markLeft(manager, studyId);
  await removeStudents(manager, studyId);
  await restoreReturning(manager, studyId);
  await registerNewStudents(manager, studyId);
  const classrooms = await changesByClassroom(manager);
  await auditStudentChanges(manager, studyId, actorId);
  return { ...(await changeCounts(manager)), classrooms };
}

export async function listRosterImports(db: DataSource, actor: SessionUser, studyId: string): Promise<{ items: RosterImport[]; total: number }> {
  await findVisibleStudy(db.manager, actor, studyId);
  const rows = await rosterImports(db.manager, studyId);
  const items = rows.map((r) => ({ id: r.id, studyId, importedAt: r.imported_at.toISOString(), importedBy: r.email, ...r.summary }));
  return { items, total: items.length };
}
