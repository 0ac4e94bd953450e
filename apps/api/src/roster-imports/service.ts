import type { DataSource, EntityManager } from 'typeorm';
import type { CsvRowIssue, RosterImport, RosterPreview, RosterSchoolPreview, RosterSelection, SessionUser } from '@evenhand/entities';
import { DrawEntity } from '@evenhand/entities/orm';
import { recordAudit, recordAudits } from '../audit/service.js';
import type { Deps } from '../deps.js';
import { AppError } from '../errors.js';
import { findVisibleStudy } from '../studies/access.js';
import { advanceStatus } from '../studies/service.js';
import { ensurePeople, type Naming, type NamingRefusal } from '../accounts/role-invitations.js';
import type { Bundle } from './bundle.js';
import { refuseRows, stageBundle } from './parser.js';

/**
 * Rosters from a OneRoster export. A preview stages the bundle and reports what it would enrol, then
 * rolls back; a commit stages it again with the coordinator's choice of schools and classes and writes
 * everything in one transaction. Students are matched across exports by the keyed hash of their
 * sourcedId (`roster_students`): a newer export adds the students who joined a classroom and, for
 * those who left, removes them before the draw or, after it, records the leaving as attrition and
 * keeps their codes and scores.
 */

const MAX_CLASS_SIZE = 200;

interface ClassRow {
  school: string;
  sourced_id: string;
  title: string;
  grade: string;
  line: number;
  teacher_email: string | null;
  teacher_name: string | null;
  teacher_line: number | null;
  students: number;
  classroom_id: string | null;
  joined: number;
  left: number;
}

interface SchoolRow {
  sourced_id: string;
  name: string;
  identifier: string;
  site_id: string | null;
  enrolled: boolean;
  admin_email: string | null;
  admin_name: string | null;
  admin_line: number | null;
  principal_email: string | null;
  principal_name: string | null;
}

/** Where in users.csv the export names each class's teacher and each school's administrator (for row-numbered refusals). */
interface PeopleLines {
  teacher: Map<string, number>;
  administrator: Map<string, number>;
}

/** The staged schools and classes against the study as it is, and the lines that name their people. */
async function describe(manager: EntityManager, studyId: string, drawCommitted: boolean): Promise<{ preview: RosterPreview; lines: PeopleLines }> {
  // Each class's students as the export lists them and as earlier imports left them, as tables with statistics:
  // the comparison of the two then plans as hash joins at any size.
  await manager.query(
    `CREATE TEMP TABLE roster_members_all ON COMMIT DROP AS
     SELECT DISTINCT e.class, u.link AS user_link FROM roster_enrolments e JOIN roster_users u ON u.key = e.user_key AND u.role = 'student' WHERE e.role = 'student'`,
  );
  await manager.query(
    `CREATE TEMP TABLE roster_current ON COMMIT DROP AS
     SELECT c.roster_sourced_id AS class, rs.link_hash FROM roster_students rs JOIN classrooms c ON c.id = rs.classroom_id
      WHERE rs.study_id = $1 AND rs.left_at IS NULL`,
    [studyId],
  );
  await manager.query(`ANALYZE roster_members_all`);
  await manager.query(`ANALYZE roster_current`);
  // The teacher of a class: its primary teacher, else the first listed.
  const classes: ClassRow[] = await manager.query(
    `WITH teachers AS (
       SELECT DISTINCT ON (e.class) e.class, u.email, u.name, u.line
         FROM roster_enrolments e JOIN roster_users u ON u.key = e.user_key AND u.role = 'teacher'
        WHERE e.role = 'teacher' ORDER BY e.class, e.is_primary DESC, e.line),
     counts AS (
       SELECT m.class, count(*)::int AS students, count(*) FILTER (WHERE x.class IS NULL)::int AS joining
         FROM roster_members_all m LEFT JOIN roster_current x ON x.class = m.class AND x.link_hash = m.user_link GROUP BY m.class),
     leaving AS (
       SELECT x.class, count(*)::int AS n FROM roster_current x LEFT JOIN roster_members_all m ON m.class = x.class AND m.user_link = x.link_hash
        WHERE m.class IS NULL GROUP BY x.class)
     SELECT c.school, c.sourced_id, c.title, c.grade, c.line, t.email AS teacher_email, t.name AS teacher_name, t.line AS teacher_line,
            coalesce(n.students, 0) AS students, cr.id AS classroom_id,
            CASE WHEN cr.id IS NULL THEN 0 ELSE coalesce(n.joining, 0) END AS joined, coalesce(l.n, 0) AS left
       FROM roster_classes c
       LEFT JOIN teachers t ON t.class = c.sourced_id
       LEFT JOIN counts n ON n.class = c.sourced_id
       LEFT JOIN leaving l ON l.class = c.sourced_id
       LEFT JOIN classrooms cr ON cr.study_id = $1 AND cr.roster_sourced_id = c.sourced_id
      ORDER BY c.title, c.sourced_id`,
    [studyId],
  );
  // A school's administrator: the first listed of those whose orgSourcedIds name it.
  const schools: SchoolRow[] = await manager.query(
    `WITH administrators AS (
       SELECT DISTINCT ON (org) org, u.email, u.name, u.line
         FROM roster_users u CROSS JOIN LATERAL unnest(string_to_array(replace(u.orgs, ' ', ''), ',')) AS org
        WHERE u.role = 'administrator' AND u.email IS NOT NULL ORDER BY org, u.line)
     SELECT o.sourced_id, o.name, coalesce(o.identifier, '') AS identifier, s.id AS site_id,
            (ss.site_id IS NOT NULL) AS enrolled, a.email AS admin_email, a.name AS admin_name, a.line AS admin_line, p.email AS principal_email, p.name AS principal_name
       FROM roster_orgs o
       LEFT JOIN LATERAL (SELECT s.* FROM sites s WHERE s.roster_sourced_id = o.sourced_id OR (o.identifier <> '' AND upper(s.code) = upper(o.identifier))
                           ORDER BY (s.roster_sourced_id = o.sourced_id) DESC NULLS LAST LIMIT 1) s ON true
       LEFT JOIN study_sites ss ON ss.study_id = $1 AND ss.site_id = s.id
       LEFT JOIN users p ON p.id = s.principal_id
       LEFT JOIN administrators a ON a.org = o.sourced_id
      WHERE o.type = 'school' AND EXISTS (SELECT 1 FROM roster_classes c WHERE c.school = o.sourced_id)
      ORDER BY o.name`,
    [studyId],
  );
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
  const [{ students }] = await manager.query(`SELECT count(DISTINCT user_link)::int AS students FROM roster_members_all`);
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
    await stageBundle(runner.manager, bundle, deps.config.rosterLinkSecret);
    const drawCommitted = await runner.manager.existsBy(DrawEntity, { studyId });
    return (await describe(runner.manager, studyId, drawCommitted)).preview;
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
    await stageBundle(manager, bundle, deps.config.rosterLinkSecret);
    const drawCommitted = await manager.existsBy(DrawEntity, { studyId });
    const { preview, lines } = await describe(manager, studyId, drawCommitted);

    // The choice must name the bundle's own schools and classes, each class with its school.
    const issues: { path: string; message: string }[] = [];
    const schools = new Map(preview.schools.map((s) => [s.sourcedId, s]));
    const classes = new Map(preview.schools.flatMap((s) => s.classes.map((c) => [c.sourcedId, { ...c, school: s.sourcedId }] as const)));
    for (const id of selection.schools) if (!schools.has(id)) issues.push({ path: 'schools', message: `School ${id} is not in the bundle` });
    for (const id of selection.classes) {
      const c = classes.get(id);
      if (!c) issues.push({ path: 'classes', message: `Class ${id} is not in the bundle` });
      else if (!selection.schools.includes(c.school)) issues.push({ path: 'classes', message: `Class “${c.title}” belongs to a school that was not chosen` });
      else if (c.blocked) issues.push({ path: 'classes', message: `Class “${c.title}” cannot take part: ${c.blocked}` });
    }
    for (const id of Object.keys(selection.principals ?? {})) {
      const school = schools.get(id);
      if (!school || !selection.schools.includes(id)) issues.push({ path: 'principals', message: `School ${id} is not among the chosen schools` });
      else if (school.principalFromExport) issues.push({ path: 'principals', message: `The export names the principal of ${school.name}` });
    }
    if (issues.length) throw AppError.validation('The choice of schools and classes does not fit the bundle', issues);
    const chosen = selection.classes.map((id) => classes.get(id)!);

    // One student, one classroom: a student in two chosen classes is refused, with both lines.
    await manager.query(`CREATE TEMP TABLE roster_chosen (sourced_id text PRIMARY KEY, classroom_id uuid) ON COMMIT DROP`);
    await manager.query(`INSERT INTO roster_chosen (sourced_id) SELECT unnest($1::text[])`, [selection.classes]);
    const twice: { line: number; first: number }[] = await manager.query(
      `WITH chosen AS (
         SELECT e.line, e.user_key FROM roster_enrolments e JOIN roster_chosen k ON k.sourced_id = e.class JOIN roster_users u ON u.key = e.user_key AND u.role = 'student'
          WHERE e.role = 'student')
       SELECT line, first FROM chosen JOIN (SELECT user_key, min(line) AS first FROM chosen GROUP BY 1 HAVING count(*) > 1) d USING (user_key)
        WHERE line <> first ORDER BY line LIMIT 500`,
    );
    if (twice.length) {
      throw refuseRows(twice.map((r) => rowError(r.line, 'enrollments.csv: userSourcedId', `The student is also in another chosen class (line ${r.first}); a student belongs to one classroom of a study`)), twice.length);
    }

    // Schools, set-wise: an earlier import's site, or the site whose code is the org's identifier, or a new site.
    const chosenSchools = selection.schools.map((id) => schools.get(id)!);
    const siteOf = new Map(chosenSchools.flatMap((x) => (x.siteId ? [[x.sourcedId, x.siteId] as const] : [])));
    const fresh = chosenSchools.filter((x) => !x.siteId);
    if (fresh.length) {
      const codes = await freeSiteCodes(manager, fresh.map((x) => x.identifier || x.name));
      const made: { id: string; roster_sourced_id: string }[] = await manager.query(
        `INSERT INTO sites (name, code, roster_sourced_id) SELECT * FROM unnest($1::text[], $2::text[], $3::text[]) RETURNING id, roster_sourced_id`,
        [fresh.map((x) => x.name), codes, fresh.map((x) => x.sourcedId)],
      );
      for (const m of made) siteOf.set(m.roster_sourced_id, m.id);
    }
    const matched = chosenSchools.filter((x) => x.siteId);
    await manager.query(
      `UPDATE sites s SET roster_sourced_id = m.sourced_id FROM unnest($1::uuid[], $2::text[]) AS m(id, sourced_id) WHERE s.id = m.id AND s.roster_sourced_id IS NULL`,
      [matched.map((x) => x.siteId), matched.map((x) => x.sourcedId)],
    );
    const enrolling = chosenSchools.filter((x) => !x.enrolled);
    if (enrolling.length) {
      await manager.query(`INSERT INTO study_sites (study_id, site_id) SELECT $1, unnest($2::uuid[])`, [studyId, enrolling.map((x) => siteOf.get(x.sourcedId))]);
      await advanceStatus(manager, studyId, 'enrolling', actor.id);
      await recordAudits(
        manager,
        enrolling.map((x) => ({ actorId: actor.id, studyId, action: 'site.enrolled', entityType: 'site', entityId: siteOf.get(x.sourcedId), after: { name: x.name, rosterSourcedId: x.sourcedId } })),
      );
    }

    // People, named all at once through the users service: the export's administrator (or else the one the
    // coordinator names) as the principal of a site that has none, and each chosen class's teacher at its school.
    const leaderless = new Set(
      ((await manager.query(`SELECT id FROM sites WHERE id = ANY($1) AND principal_id IS NULL`, [[...siteOf.values()]])) as { id: string }[]).map((r) => r.id),
    );
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
    await manager.query(`UPDATE sites s SET principal_id = p.user_id FROM unnest($1::uuid[], $2::uuid[]) AS p(site_id, user_id) WHERE s.id = p.site_id`, [
      principals.map((p) => p.siteId),
      principals.map((p) => p.userId),
    ]);
    const teacherIds = new Map([...teacherNaming].map(([key, i]) => [key, people[i].userId]));

    // Cohorts by grade ("Grade 4"), reused across imports.
    const cohorts: { grade: string; id: string }[] = await manager.query(
      `WITH wanted AS (SELECT grade, 'Grade ' || grade AS name FROM unnest($2::text[]) AS g(grade)),
            made AS (INSERT INTO cohorts (study_id, name)
                     SELECT DISTINCT ON (lower(w.name)) $1, w.name FROM wanted w
                      WHERE NOT EXISTS (SELECT 1 FROM cohorts c WHERE c.study_id = $1 AND lower(c.name) = lower(w.name))
                     RETURNING id, name)
       SELECT w.grade, coalesce(c.id, m.id) AS id FROM wanted w
         LEFT JOIN cohorts c ON c.study_id = $1 AND lower(c.name) = lower(w.name)
         LEFT JOIN made m ON lower(m.name) = lower(w.name)`,
      [studyId, [...new Set(chosen.map((c) => c.grade))]],
    );
    const cohortIds = new Map(cohorts.map((c) => [c.grade, c.id]));

    // Classrooms, set-wise: update the earlier import's, create the new (before the draw only).
    const targets = chosen.map((c) => ({
      sourced_id: c.sourcedId,
      site_id: siteOf.get(c.school)!,
      cohort_id: cohortIds.get(c.grade)!,
      teacher_id: teacherIds.get(teacherAt(c))!,
      name: c.title,
      grade: c.grade,
      expected_size: c.students,
    }));
    await manager.query(
      `CREATE TEMP TABLE roster_targets ON COMMIT DROP AS
       SELECT * FROM jsonb_to_recordset($1::jsonb) AS t(sourced_id text, site_id uuid, cohort_id uuid, teacher_id uuid, name text, grade text, expected_size int)`,
      [JSON.stringify(targets)],
    );
    const clashes: { line: number; title: string }[] = await manager.query(
      `SELECT rc.line, t.name AS title
         FROM (SELECT *, row_number() OVER (PARTITION BY site_id, lower(name) ORDER BY sourced_id) AS nth FROM roster_targets) t
         JOIN roster_classes rc ON rc.sourced_id = t.sourced_id
        WHERE t.nth > 1
           OR EXISTS (SELECT 1 FROM classrooms c WHERE c.study_id = $1 AND c.site_id = t.site_id AND lower(c.name) = lower(t.name)
                       AND c.roster_sourced_id IS DISTINCT FROM t.sourced_id)
        ORDER BY rc.line`,
      [studyId],
    );
    if (clashes.length) {
      throw refuseRows(clashes.map((c) => rowError(c.line, 'classes.csv: title', `The school already has a classroom named “${c.title}”; classroom names are unique within a school`)), clashes.length);
    }
    const updated: { id: string }[] = await manager.query(
      `WITH before AS (SELECT c.* FROM classrooms c JOIN roster_targets t ON t.sourced_id = c.roster_sourced_id WHERE c.study_id = $1),
            changed AS (
              UPDATE classrooms c SET name = t.name, grade = t.grade, expected_size = t.expected_size, teacher_id = t.teacher_id
                FROM roster_targets t
               WHERE c.study_id = $1 AND c.roster_sourced_id = t.sourced_id
                 AND (c.name, c.grade, c.expected_size, c.teacher_id) IS DISTINCT FROM (t.name, t.grade, t.expected_size, t.teacher_id)
              RETURNING c.id, c.name, c.grade, c.expected_size, c.teacher_id)
       INSERT INTO audit_events (actor_id, study_id, action, entity_type, entity_id, before, after)
       SELECT $2, $1, 'classroom.updated', 'classroom', x.id,
              jsonb_build_object('name', b.name, 'grade', b.grade, 'expectedSize', b.expected_size, 'teacherId', b.teacher_id),
              jsonb_build_object('name', x.name, 'grade', x.grade, 'expectedSize', x.expected_size, 'teacherId', x.teacher_id, 'source', 'roster')
         FROM changed x JOIN before b ON b.id = x.id
       RETURNING entity_id AS id`,
      [studyId, actor.id],
    );
    const created: { id: string }[] = await manager.query(
      `WITH made AS (
         INSERT INTO classrooms (study_id, site_id, cohort_id, teacher_id, name, grade, expected_size, arm, roster_sourced_id)
         SELECT $1, t.site_id, t.cohort_id, t.teacher_id, t.name, t.grade, t.expected_size, NULL, t.sourced_id FROM roster_targets t
          WHERE NOT EXISTS (SELECT 1 FROM classrooms c WHERE c.study_id = $1 AND c.roster_sourced_id = t.sourced_id)
         RETURNING id, site_id, cohort_id, teacher_id, name, grade, expected_size, roster_sourced_id)
       INSERT INTO audit_events (actor_id, study_id, action, entity_type, entity_id, after)
       SELECT $2, $1, 'classroom.created', 'classroom', m.id,
              jsonb_build_object('siteId', m.site_id, 'cohortId', m.cohort_id, 'teacherId', m.teacher_id, 'name', m.name, 'grade', m.grade,
                                 'expectedSize', m.expected_size, 'rosterSourcedId', m.roster_sourced_id)
         FROM made m
       RETURNING entity_id AS id`,
      [studyId, actor.id],
    );
    await manager.query(`UPDATE roster_chosen k SET classroom_id = c.id FROM classrooms c WHERE c.study_id = $1 AND c.roster_sourced_id = k.sourced_id`, [studyId]);

    const students = await applyStudents(manager, studyId, actor.id, drawCommitted);
    const summary = {
      sitesEnrolled: enrolling.length,
      classroomsCreated: created.length,
      classroomsUpdated: updated.length,
      studentsJoined: students.joined,
      studentsRemoved: students.removed,
      studentsLeft: students.left,
      invitationsSent: people.filter((p) => p.invited).length,
      classrooms: students.classrooms,
    };
    const [row] = await manager.query(
      `INSERT INTO roster_imports (study_id, imported_by, summary) VALUES ($1, $2, $3) RETURNING id, imported_at`,
      [studyId, actor.id, JSON.stringify(summary)],
    );
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
  const taken = new Set(
    ((await manager.query(`SELECT upper(code) AS code FROM sites WHERE upper(code) LIKE ANY($1)`, [[...new Set(bases)].map((b) => `${b}%`)])) as { code: string }[]).map((r) => r.code),
  );
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
  await manager.query(
    `CREATE TEMP TABLE roster_members ON COMMIT DROP AS
     SELECT m.user_link AS link, k.classroom_id FROM roster_members_all m JOIN roster_chosen k ON k.sourced_id = m.class`,
  );
  await manager.query(`ANALYZE roster_members`);
  // Lock the chosen classrooms' codes against score writers (the same lock the score-key triggers take).
  await manager.query(`SELECT 1 FROM classrooms WHERE id IN (SELECT classroom_id FROM roster_chosen) ORDER BY id FOR NO KEY UPDATE`);
  await manager.query(
    `CREATE TEMP TABLE roster_changes (student_code text, classroom_id uuid, change text) ON COMMIT DROP`,
  );
  // Leaving: listed before in a chosen classroom (or moved out of it after the draw), not listed there now.
  await manager.query(
    `INSERT INTO roster_changes
     SELECT rs.student_code, rs.classroom_id, CASE WHEN $2 OR EXISTS (SELECT 1 FROM scores x JOIN score_sheets sh ON sh.id = x.sheet_id
                                                                       WHERE sh.classroom_id = rs.classroom_id AND x.student_code = rs.student_code)
                                                  THEN 'left' ELSE 'removed' END
       FROM roster_students rs LEFT JOIN roster_members m ON m.link = rs.link_hash
      WHERE rs.study_id = $1 AND rs.left_at IS NULL
        AND (m.link IS NULL OR m.classroom_id <> rs.classroom_id)
        AND (m.link IS NOT NULL OR rs.classroom_id IN (SELECT classroom_id FROM roster_chosen))
        AND ($2 OR m.link IS NULL)`,
    [studyId, drawCommitted],
  );
  // Before the draw a student listed in another chosen classroom moves there, with the code (recorded as moving out and joining).
  if (!drawCommitted) {
    const moved: unknown[] = await manager.query(
      `INSERT INTO roster_changes
       SELECT rs.student_code, x.classroom_id, x.change FROM roster_students rs JOIN roster_members m ON m.link = rs.link_hash
        CROSS JOIN LATERAL (VALUES (rs.classroom_id, 'moved'), (m.classroom_id, 'joined')) AS x(classroom_id, change)
        WHERE rs.study_id = $1 AND rs.left_at IS NULL AND rs.classroom_id <> m.classroom_id
       RETURNING 1`,
      [studyId],
    );
    if (moved.length) {
      await manager.query(
        `UPDATE roster_students rs SET classroom_id = m.classroom_id FROM roster_members m
          WHERE rs.study_id = $1 AND rs.link_hash = m.link AND rs.left_at IS NULL AND rs.classroom_id <> m.classroom_id`,
        [studyId],
      );
      try {
        await manager.query(
          `UPDATE students st SET classroom_id = rs.classroom_id FROM roster_students rs
            WHERE st.study_id = $1 AND rs.study_id = $1 AND st.student_code = rs.student_code AND st.classroom_id <> rs.classroom_id`,
          [studyId],
        );
      } catch (err) {
        if ((err as { driverError?: { code?: string } }).driverError?.code === '23503') {
          throw AppError.conflict('The export moves a student who already has scores in their classroom; scores stay with the classroom they were given in');
        }
        throw err;
      }
    }
  }
  await manager.query(
    `UPDATE roster_students rs SET left_at = now() FROM roster_changes x WHERE rs.study_id = $1 AND rs.student_code = x.student_code AND x.change = 'left'`,
    [studyId],
  );
  await manager.query(
    `WITH gone AS (DELETE FROM roster_students rs USING roster_changes x
                    WHERE rs.study_id = $1 AND rs.student_code = x.student_code AND x.change = 'removed' RETURNING rs.student_code)
     DELETE FROM students st USING gone WHERE st.study_id = $1 AND st.student_code = gone.student_code`,
    [studyId],
  );
  // Back in the same classroom after having left: the same code, no longer marked as left.
  await manager.query(
    `WITH back AS (
       UPDATE roster_students rs SET left_at = NULL FROM roster_members m
        WHERE rs.study_id = $1 AND rs.link_hash = m.link AND rs.left_at IS NOT NULL AND rs.classroom_id = m.classroom_id
       RETURNING rs.student_code, rs.classroom_id)
     INSERT INTO roster_changes SELECT student_code, classroom_id, 'joined' FROM back`,
    [studyId],
  );
  // New students: the next free codes, in the registry of their classroom.
  const [{ base }] = await manager.query(
    `SELECT coalesce(max(substr(student_code, 2)::int), 0) AS base FROM students WHERE study_id = $1 AND student_code ~ '^R[0-9]{7}$'`,
    [studyId],
  );
  await manager.query(
    `WITH fresh AS (
       SELECT m.link, m.classroom_id, 'R' || lpad(($2::int + row_number() OVER (ORDER BY m.classroom_id, m.link))::text, 7, '0') AS code
         FROM roster_members m WHERE NOT EXISTS (SELECT 1 FROM roster_students rs WHERE rs.study_id = $1 AND rs.link_hash = m.link)),
     registered AS (INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, code, classroom_id FROM fresh RETURNING student_code),
     linked AS (INSERT INTO roster_students (study_id, link_hash, student_code, classroom_id) SELECT $1, link, code, classroom_id FROM fresh RETURNING student_code, classroom_id)
     INSERT INTO roster_changes SELECT student_code, classroom_id, 'joined' FROM linked`,
    [studyId, base],
  );
  const classrooms: { classroomId: string; name: string; joined: number; left: number }[] = await manager.query(
    `SELECT c.id AS "classroomId", c.name, count(*) FILTER (WHERE x.change = 'joined')::int AS joined, count(*) FILTER (WHERE x.change <> 'joined')::int AS left
       FROM roster_changes x JOIN classrooms c ON c.id = x.classroom_id GROUP BY c.id, c.name ORDER BY c.name, c.id`,
  );
  // Built as text, as score writes do: a 50 000-student import makes one entry with every code.
  await manager.query(
    `INSERT INTO audit_events (actor_id, study_id, action, entity_type, entity_id, after)
     SELECT $2, $1, 'roster.students_changed', 'classroom', classroom_id,
            format('{"joined":[%s],"movedOut":[%s],"removed":[%s],"left":[%s],"attrition":%s}',
                   coalesce(string_agg(to_json(student_code)::text, ',' ORDER BY student_code) FILTER (WHERE change = 'joined'), ''),
                   coalesce(string_agg(to_json(student_code)::text, ',' ORDER BY student_code) FILTER (WHERE change = 'moved'), ''),
                   coalesce(string_agg(to_json(student_code)::text, ',' ORDER BY student_code) FILTER (WHERE change = 'removed'), ''),
                   coalesce(string_agg(to_json(student_code)::text, ',' ORDER BY student_code) FILTER (WHERE change = 'left'), ''),
                   to_json(bool_or(change = 'left')))::jsonb
       FROM roster_changes GROUP BY classroom_id`,
    [studyId, actorId],
  );
  const [counts] = await manager.query(
    `SELECT count(*) FILTER (WHERE change = 'joined')::int AS joined, count(*) FILTER (WHERE change = 'removed')::int AS removed,
            count(*) FILTER (WHERE change = 'left')::int AS left FROM roster_changes`,
  );
  return { ...(counts as { joined: number; removed: number; left: number }), classrooms };
}

export async function listRosterImports(db: DataSource, actor: SessionUser, studyId: string): Promise<{ items: RosterImport[]; total: number }> {
  await findVisibleStudy(db.manager, actor, studyId);
  const rows: { id: string; imported_at: Date; email: string | null; summary: Omit<RosterImport, 'id' | 'studyId' | 'importedAt' | 'importedBy'> }[] = await db.query(
    `SELECT r.id, r.imported_at, u.email, r.summary FROM roster_imports r LEFT JOIN users u ON u.id = r.imported_by
      WHERE r.study_id = $1 ORDER BY r.imported_at DESC LIMIT 50`,
    [studyId],
  );
  const items = rows.map((r) => ({ id: r.id, studyId, importedAt: r.imported_at.toISOString(), importedBy: r.email, ...r.summary }));
  return { items, total: items.length };
}
