import type { PoolClient } from 'pg';
import { from as copyFrom } from 'pg-copy-streams';
import type { EntityManager } from 'typeorm';
import type { RosterImport } from '@evenhand/entities';
import type { RosterFile } from './bundle.js';

// The roster import's named SQL (DEVELOPERS.md, "Data access"): the staging tables and their checks, the preview, and
// the set-wise writes of a commit. Temporary tables are dropped at the end of the import's transaction.

/** A staged class as the preview describes it. */
export interface ClassRow {
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

/** A staged school as the preview describes it. */
export interface SchoolRow {
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

/** What a chosen class's classroom should be. */
export interface ClassroomTarget {
  sourced_id: string;
  site_id: string;
  cohort_id: string;
  teacher_id: string;
  name: string;
  grade: string;
  expected_size: number;
}

export interface RosterImportRow {
  id: string;
  imported_at: Date;
  email: string | null;
  summary: Omit<RosterImport, 'id' | 'studyId' | 'importedAt' | 'importedBy'>;
}

export interface BundleProblemRow {
  file: RosterFile;
  line: number;
  col: string;
  message: string;
  total: number;
}

const STUDENT_ENROLMENTS = `
  roster_enrolments e JOIN roster_users u ON u.key_a = e.user_a AND u.key_b = e.user_b AND u.role = 'student' WHERE e.role = 'student'`;
const MEMBERS = {
  grouped: `SELECT e.class, u.link AS user_link, min(e.line) AS line FROM ${STUDENT_ENROLMENTS} GROUP BY e.class, u.link`,
  listed: `SELECT e.class, u.link AS user_link, e.line FROM ${STUDENT_ENROLMENTS}`,
};

/**
 * Each class's students as the export lists them (by keyed hash, with the first enrollments.csv line that lists the
 * student there) and as earlier imports left them in the study, as tables with statistics: comparing the two then plans
 * as hash joins at any size.
 */
export async function stageMembers(manager: EntityManager, studyId: string, studentsMayRepeatInAClass: boolean): Promise<void> {
  // A student listed twice in a class is one member of it, from the first line: grouped only when staging saw that may happen.
  await manager.query(`CREATE TEMP TABLE roster_members_all ON COMMIT DROP AS ${studentsMayRepeatInAClass ? MEMBERS.grouped : MEMBERS.listed}`);
  await manager.query(
    `
      CREATE TEMP TABLE roster_current ON COMMIT DROP AS
        SELECT c.roster_sourced_id AS class, st.roster_link AS link_hash FROM students st JOIN classrooms c ON c.id = st.classroom_id
         WHERE st.study_id = $1 AND st.roster_link IS NOT NULL AND st.roster_left_at IS NULL`,
    [studyId],
  );
  await manager.query(`ANALYZE roster_members_all; ANALYZE roster_current`);
}

/** Each staged class with its teacher (the primary one, else the first listed), its student count, its classroom in the study and how many join and leave it. */
export async function classesPreview(manager: EntityManager, studyId: string): Promise<ClassRow[]> {
  return manager.query(
    `
      WITH teachers AS (
        SELECT DISTINCT ON (e.class) e.class, u.email, u.name, u.line
          FROM roster_enrolments e JOIN roster_users u ON u.key_a = e.user_a AND u.key_b = e.user_b AND u.role = 'teacher'
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
}

/** Each staged school that has classes, with its site (an earlier import's, else the one whose code is the org's identifier), whether the study enrols it, its principal and the export's administrator for it (the first listed). */
export async function schoolsPreview(manager: EntityManager, studyId: string): Promise<SchoolRow[]> {
  return manager.query(
    `
      WITH administrators AS (
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
}

/** How many students the export lists in any class. */
export async function exportStudentCount(manager: EntityManager): Promise<number> {
  const [{ students }] = await manager.query(`SELECT count(*)::int AS students FROM (SELECT DISTINCT user_link FROM roster_members_all) x`);
  return students;
}

/** The chosen classes as a table (their classrooms are filled in by `linkChosenClassrooms`). */
export async function stageChosen(manager: EntityManager, classes: string[]): Promise<void> {
  await manager.query(`CREATE TEMP TABLE roster_chosen (sourced_id text PRIMARY KEY, classroom_id uuid) ON COMMIT DROP`);
  await manager.query(`INSERT INTO roster_chosen (sourced_id) SELECT unnest($1::text[])`, [classes]);
}

/** Enrolment lines of a student who is in more than one chosen class, each with the line of the first such class; at most 500. */
export async function studentsChosenTwice(manager: EntityManager): Promise<{ line: number; first: number }[]> {
  return manager.query(`
    SELECT line, first FROM (
      SELECT m.line, min(m.line) OVER (PARTITION BY m.user_link) AS first FROM roster_members_all m JOIN roster_chosen k ON k.sourced_id = m.class) x
     WHERE line <> first ORDER BY line LIMIT 500`);
}

/** New sites for schools that no earlier import or code matches, with the sourcedIds they were made for. */
export async function insertSites(manager: EntityManager, sites: { name: string; code: string; sourcedId: string }[]): Promise<{ id: string; roster_sourced_id: string }[]> {
  return manager.query(`
    INSERT INTO sites (name, code, roster_sourced_id) SELECT * FROM unnest($1::text[], $2::text[], $3::text[]) RETURNING id, roster_sourced_id`, [
    sites.map((x) => x.name),
    sites.map((x) => x.code),
    sites.map((x) => x.sourcedId),
  ]);
}

/** Matched sites remember the export's sourcedId, unless they already have one. */
export async function linkSites(manager: EntityManager, sites: { siteId: string; sourcedId: string }[]): Promise<void> {
  await manager.query(`
    UPDATE sites s SET roster_sourced_id = m.sourced_id FROM unnest($1::uuid[], $2::text[]) AS m(id, sourced_id) WHERE s.id = m.id AND s.roster_sourced_id IS NULL`, [sites.map((x) => x.siteId), sites.map((x) => x.sourcedId)]);
}

/** Enrols the sites in the study. */
export async function enrolSites(manager: EntityManager, studyId: string, siteIds: string[]): Promise<void> {
  await manager.query(`INSERT INTO study_sites (study_id, site_id) SELECT $1, unnest($2::uuid[])`, [studyId, siteIds]);
}

/** Names each site's principal. */
export async function setPrincipals(manager: EntityManager, principals: { siteId: string; userId: string }[]): Promise<void> {
  await manager.query(`
    UPDATE sites s SET principal_id = p.user_id FROM unnest($1::uuid[], $2::uuid[]) AS p(site_id, user_id) WHERE s.id = p.site_id`, [principals.map((p) => p.siteId), principals.map((p) => p.userId)]);
}

/** The study's cohort for each grade ("Grade 4"), made where missing. */
export async function cohortsForGrades(manager: EntityManager, studyId: string, grades: string[]): Promise<{ grade: string; id: string }[]> {
  return manager.query(
    `
      WITH wanted AS (SELECT grade, 'Grade ' || grade AS name FROM unnest($2::text[]) AS g(grade)),
           made AS (INSERT INTO cohorts (study_id, name)
                    SELECT DISTINCT ON (lower(w.name)) $1, w.name FROM wanted w
                     WHERE NOT EXISTS (SELECT 1 FROM cohorts c WHERE c.study_id = $1 AND lower(c.name) = lower(w.name))
                    RETURNING id, name)
      SELECT w.grade, coalesce(c.id, m.id) AS id FROM wanted w
        LEFT JOIN cohorts c ON c.study_id = $1 AND lower(c.name) = lower(w.name)
        LEFT JOIN made m ON lower(m.name) = lower(w.name)`,
    [studyId, grades],
  );
}

/** What each chosen class's classroom should be, as a table. */
export async function stageTargets(manager: EntityManager, targets: ClassroomTarget[]): Promise<void> {
  await manager.query(
    `
      CREATE TEMP TABLE roster_targets ON COMMIT DROP AS
        SELECT * FROM jsonb_to_recordset($1::jsonb) AS t(sourced_id text, site_id uuid, cohort_id uuid, teacher_id uuid, name text, grade text, expected_size int)`,
    [JSON.stringify(targets)],
  );
}

/** Chosen classes whose title another classroom of their school already has (or another chosen class takes), by classes.csv line. */
export async function classroomNameClashes(manager: EntityManager, studyId: string): Promise<{ line: number; title: string }[]> {
  return manager.query(
    `
      SELECT rc.line, t.name AS title
       FROM (SELECT *, row_number() OVER (PARTITION BY site_id, lower(name) ORDER BY sourced_id) AS nth FROM roster_targets) t
       JOIN roster_classes rc ON rc.sourced_id = t.sourced_id
      WHERE t.nth > 1
         OR EXISTS (SELECT 1 FROM classrooms c WHERE c.study_id = $1 AND c.site_id = t.site_id AND lower(c.name) = lower(t.name)
                     AND c.roster_sourced_id IS DISTINCT FROM t.sourced_id)
      ORDER BY rc.line`,
    [studyId],
  );
}

/** Brings earlier imports' classrooms to their targets and audits each change with before and after; how many changed. */
export async function updateClassrooms(manager: EntityManager, studyId: string, actorId: string): Promise<number> {
  const changed: unknown[] = await manager.query(
    `
      WITH before AS (SELECT c.* FROM classrooms c JOIN roster_targets t ON t.sourced_id = c.roster_sourced_id WHERE c.study_id = $1),
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
    [studyId, actorId],
  );
  return changed.length;
}

/** Creates the classrooms no earlier import made and audits each; how many were made. */
export async function createClassrooms(manager: EntityManager, studyId: string, actorId: string): Promise<number> {
  const made: unknown[] = await manager.query(
    `
      WITH made AS (
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
    [studyId, actorId],
  );
  return made.length;
}

/** Fills in each chosen class's classroom. */
export async function linkChosenClassrooms(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(`
    UPDATE roster_chosen k SET classroom_id = c.id FROM classrooms c WHERE c.study_id = $1 AND c.roster_sourced_id = k.sourced_id`, [studyId]);
}

/** Records a committed import with its summary. */
export async function insertRosterImport(manager: EntityManager, studyId: string, actorId: string, summary: object): Promise<{ id: string; imported_at: Date }> {
  const [row] = await manager.query(`
    INSERT INTO roster_imports (study_id, imported_by, summary) VALUES ($1, $2, $3) RETURNING id, imported_at`, [studyId, actorId, JSON.stringify(summary)]);
  return row;
}

/** Site codes, upper-case, that start with any of the prefixes. */
export async function takenSiteCodes(manager: EntityManager, prefixes: string[]): Promise<Set<string>> {
  const rows: { code: string }[] = await manager.query(`SELECT upper(code) AS code FROM sites WHERE upper(code) LIKE ANY($1)`, [prefixes.map((p) => `${p}%`)]);
  return new Set(rows.map((r) => r.code));
}

/** The chosen classrooms' students as the export lists them (with statistics), the chosen classrooms locked against score writers (the lock the score-key triggers take), and an empty list of changes, in one round trip. */
export async function prepareStudentChanges(manager: EntityManager): Promise<void> {
  await manager.query(
    `
      CREATE TEMP TABLE roster_members ON COMMIT DROP AS
        SELECT m.user_link AS link, k.classroom_id FROM roster_members_all m JOIN roster_chosen k ON k.sourced_id = m.class;
      ANALYZE roster_members;
      SELECT 1 FROM classrooms WHERE id IN (SELECT classroom_id FROM roster_chosen) ORDER BY id FOR NO KEY UPDATE;
      CREATE TEMP TABLE roster_changes (student_code text, classroom_id uuid, change text) ON COMMIT DROP`,
  );
}

/** Records who leaves a chosen classroom: listed there before and not now (or, after the draw, moved out); 'left' after the draw or when they have scores, else 'removed'. */
export async function recordLeaving(manager: EntityManager, studyId: string, drawCommitted: boolean): Promise<void> {
  await manager.query(
    `
      INSERT INTO roster_changes
      SELECT st.student_code, st.classroom_id, CASE WHEN $2 OR EXISTS (SELECT 1 FROM scores x JOIN score_sheets sh ON sh.id = x.sheet_id
                                                                        WHERE sh.classroom_id = st.classroom_id AND x.student_code = st.student_code)
                                                     THEN 'left' ELSE 'removed' END
        FROM students st LEFT JOIN roster_members m ON m.link = st.roster_link
       WHERE st.study_id = $1 AND st.roster_link IS NOT NULL AND st.roster_left_at IS NULL
         AND (m.link IS NULL OR m.classroom_id <> st.classroom_id)
         AND (m.link IS NOT NULL OR st.classroom_id IN (SELECT classroom_id FROM roster_chosen))
         AND ($2 OR m.link IS NULL)`,
    [studyId, drawCommitted],
  );
}

/** Before the draw, records each student listed in another chosen classroom as moving out of one and joining the other; how many rows that made. */
export async function recordMoves(manager: EntityManager, studyId: string): Promise<number> {
  const moved: unknown[] = await manager.query(
    `
      INSERT INTO roster_changes
      SELECT st.student_code, x.classroom_id, x.change FROM students st JOIN roster_members m ON m.link = st.roster_link
       CROSS JOIN LATERAL (VALUES (st.classroom_id, 'moved'), (m.classroom_id, 'joined')) AS x(classroom_id, change)
       WHERE st.study_id = $1 AND st.roster_left_at IS NULL AND st.classroom_id <> m.classroom_id
      RETURNING 1`,
    [studyId],
  );
  return moved.length;
}

/** Moves the students the export lists in another chosen classroom there, code and link together. */
export async function moveStudents(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(
    `
      UPDATE students st SET classroom_id = m.classroom_id FROM roster_members m
      WHERE st.study_id = $1 AND st.roster_link = m.link AND st.roster_left_at IS NULL AND st.classroom_id <> m.classroom_id`,
    [studyId],
  );
}

/** Marks the students who left as left (attrition). */
export async function markLeft(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(
    `
      UPDATE students st SET roster_left_at = now() FROM roster_changes x WHERE st.study_id = $1 AND st.student_code = x.student_code AND x.change = 'left'`,
    [studyId],
  );
}

/** Deletes removed students, code and link. */
export async function removeStudents(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(
    `
      DELETE FROM students st USING roster_changes x WHERE st.study_id = $1 AND st.student_code = x.student_code AND x.change = 'removed'`,
    [studyId],
  );
}

/** Students back in the same classroom after having left: no longer marked as left, and recorded as joining. */
export async function restoreReturning(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(
    `
      WITH back AS (
        UPDATE students st SET roster_left_at = NULL FROM roster_members m
         WHERE st.study_id = $1 AND st.roster_link = m.link AND st.roster_left_at IS NOT NULL AND st.classroom_id = m.classroom_id
        RETURNING st.student_code, st.classroom_id)
      INSERT INTO roster_changes SELECT student_code, classroom_id, 'joined' FROM back`,
    [studyId],
  );
}

/** New students get the next free codes R0000001…, registered with their link, and are recorded as joining. */
export async function registerNewStudents(manager: EntityManager, studyId: string): Promise<void> {
  await manager.query(
    `
      WITH last AS (SELECT coalesce(max(substr(student_code, 2)::int), 0) AS n FROM students WHERE study_id = $1 AND student_code ~ '^R[0-9]{7}$'),
      fresh AS (
        SELECT m.link, m.classroom_id, 'R' || lpad(((SELECT n FROM last) + row_number() OVER (ORDER BY m.classroom_id, m.link))::text, 7, '0') AS code
          FROM roster_members m WHERE NOT EXISTS (SELECT 1 FROM students st WHERE st.study_id = $1 AND st.roster_link = m.link)),
      registered AS (
        INSERT INTO students (study_id, student_code, classroom_id, roster_link, roster_joined_at) SELECT $1, code, classroom_id, link, now() FROM fresh)
      INSERT INTO roster_changes SELECT code, classroom_id, 'joined' FROM fresh`,
    [studyId],
  );
}

/** Per classroom, how many joined and how many left (moved out, removed or left). */
export async function changesByClassroom(manager: EntityManager): Promise<{ classroomId: string; name: string; joined: number; left: number }[]> {
  return manager.query(
    `
      SELECT c.id AS "classroomId", c.name, count(*) FILTER (WHERE x.change = 'joined')::int AS joined, count(*) FILTER (WHERE x.change <> 'joined')::int AS left
      FROM roster_changes x JOIN classrooms c ON c.id = x.classroom_id GROUP BY c.id, c.name ORDER BY c.name, c.id`,
  );
}

/** One audit entry per classroom with the codes that joined, moved out, were removed or left (built as text, as score writes do: a 50 000-student import makes one entry with every code). */
export async function auditStudentChanges(manager: EntityManager, studyId: string, actorId: string): Promise<void> {
  await manager.query(
    `
      INSERT INTO audit_events (actor_id, study_id, action, entity_type, entity_id, after)
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
}

/** How many students joined, were removed and left in all. */
export async function changeCounts(manager: EntityManager): Promise<{ joined: number; removed: number; left: number }> {
  const [counts] = await manager.query(
    `
      SELECT count(*) FILTER (WHERE change = 'joined')::int AS joined, count(*) FILTER (WHERE change = 'removed')::int AS removed,
        count(*) FILTER (WHERE change = 'left')::int AS left FROM roster_changes`,
  );
  return counts;
}

/** A study's imports, newest first (at most 50), each with the importer's e-mail. */
export async function rosterImports(manager: EntityManager, studyId: string): Promise<RosterImportRow[]> {
  return manager.query(
    `
      SELECT r.id, r.imported_at, u.email, r.summary FROM roster_imports r LEFT JOIN users u ON u.id = r.imported_by
      WHERE r.study_id = $1 ORDER BY r.imported_at DESC LIMIT 50`,
    [studyId],
  );
}

export type StagingTable = 'roster_orgs' | 'roster_classes' | 'roster_users' | 'roster_enrolments';

/** A stream that copies text-format lines into a staging table on the transaction's own connection. */
export function copyIntoStaging(client: PoolClient, table: StagingTable) {
  return client.query(copyFrom(`COPY ${table} FROM STDIN`));
}

/** The bundle's staging tables, one per file. Join keys are hashes, each as two bigints (`joinKey` in parser.ts): they group and join faster than text. */
export async function createStagingTables(manager: EntityManager): Promise<void> {
  await manager.query(
    `
      SET LOCAL work_mem = '64MB';
      CREATE TEMP TABLE roster_orgs (line int, sourced_id text, name text, type text, identifier text) ON COMMIT DROP;
      CREATE TEMP TABLE roster_classes (line int, sourced_id text, title text, grade text, school text) ON COMMIT DROP;
      CREATE TEMP TABLE roster_users (line int, key_a bigint, key_b bigint, link bytea, role text, email text, name text, orgs text) ON COMMIT DROP;
      CREATE TEMP TABLE roster_enrolments (line int, key_a bigint, key_b bigint, class text, user_a bigint, user_b bigint, role text, is_primary boolean) ON COMMIT DROP`,
  );
}

/** Statistics for the staging tables' join columns only, from a small sample (row counts and distinct keys are what the checks' and the preview's hash joins need). */
export async function analyseStaging(manager: EntityManager): Promise<void> {
  await manager.query(
    `
      SET LOCAL default_statistics_target = 10;
      ANALYZE roster_orgs, roster_classes, roster_users (key_a, key_b, role), roster_enrolments (class, user_a, user_b, role)`,
  );
}

// The bundle's checks, each selecting (file, line, col, message) of the lines it refuses (the first, always run, names the
// columns); `bundleProblems` unites those it needs.
const PROBLEM_QUERIES = {
  orgRepeats: `
    SELECT 'orgs.csv' AS file, line, 'sourcedId' AS col, format('sourcedId %s is also on line %s', sourced_id, first) AS message
      FROM roster_orgs JOIN (SELECT sourced_id, min(line) AS first FROM roster_orgs GROUP BY 1 HAVING count(*) > 1) d USING (sourced_id) WHERE line <> first`,
  classRepeats: `
    SELECT 'classes.csv', line, 'sourcedId', format('sourcedId %s is also on line %s', sourced_id, first)
      FROM roster_classes JOIN (SELECT sourced_id, min(line) AS first FROM roster_classes GROUP BY 1 HAVING count(*) > 1) d USING (sourced_id) WHERE line <> first`,
  userRepeats: `
    SELECT 'users.csv', line, 'sourcedId', format('the same sourcedId is also on line %s', first)
      FROM roster_users JOIN (SELECT key_a, key_b, min(line) AS first FROM roster_users GROUP BY 1, 2 HAVING count(*) > 1) d USING (key_a, key_b) WHERE line <> first`,
  enrolmentRepeats: `
    SELECT 'enrollments.csv', line, 'sourcedId', format('the same sourcedId is also on line %s', first)
      FROM roster_enrolments JOIN (SELECT key_a, key_b, min(line) AS first FROM roster_enrolments GROUP BY 1, 2 HAVING count(*) > 1) d USING (key_a, key_b) WHERE line <> first`,
  classSchools: `
    SELECT 'classes.csv', c.line, 'schoolSourcedId', format('schoolSourcedId %s is not a school in orgs.csv', c.school)
      FROM roster_classes c WHERE NOT EXISTS (SELECT 1 FROM roster_orgs o WHERE o.sourced_id = c.school AND o.type = 'school')`,
  enrolmentClasses: `
    SELECT 'enrollments.csv', e.line, 'classSourcedId', format('classSourcedId %s is not in classes.csv', e.class)
      FROM roster_enrolments e WHERE NOT EXISTS (SELECT 1 FROM roster_classes c WHERE c.sourced_id = e.class)`,
  enrolmentUsers: `
    SELECT 'enrollments.csv', e.line, 'userSourcedId', 'userSourcedId is not in users.csv'
      FROM roster_enrolments e WHERE NOT EXISTS (SELECT 1 FROM roster_users u WHERE u.key_a = e.user_a AND u.key_b = e.user_b)`,
};

/**
 * Duplicate sourcedIds and references to nothing in the staged bundle, in file and line order, at most `limit`, each
 * with the total. Users and enrolments are grouped to find repeated sourcedIds only when staging's filters say a key may
 * have repeated (`RepeatFilter`): the two largest groupings of an import, which a clean export never needs.
 */
export async function bundleProblems(manager: EntityManager, limit: number, mayRepeat: { users: boolean; enrolments: boolean }): Promise<BundleProblemRow[]> {
  const q = PROBLEM_QUERIES;
  const checks = [q.orgRepeats, q.classRepeats, ...(mayRepeat.users ? [q.userRepeats] : []), ...(mayRepeat.enrolments ? [q.enrolmentRepeats] : []), q.classSchools, q.enrolmentClasses, q.enrolmentUsers];
  return manager.query(
    `
      WITH issues AS (${checks.join(' UNION ALL ')})
      SELECT file, line, col, message, count(*) OVER ()::int AS total FROM issues ORDER BY file, line LIMIT $1`,
    [limit],
  );
}
