import { createHmac } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { deflateRawSync } from 'node:zlib';
import type { RosterImport, RosterPreview } from '@evenhand/entities';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, type StudySetup } from '../../test/fixtures.js';
import { uniqueAddress, waitForMail } from '../../test/mail.js';
import { DEMO_BUNDLE, DEMO_SHAPE, oneRosterFiles, zipBundle, zipEntries } from '../../dev/oneroster-bundle.js';
import { MAX_PACKING_RATIO } from './bundle.js';

let t: TestApp;
let s: StudySetup;
beforeAll(async () => {
  t = await startTestApp();
  s = await createStudy(t.app);
});
afterAll(() => t.close());

const upload = (who: SignedIn, url: string, files: { name: string; data: Buffer | string }[], selection?: object) => {
  let req = who.agent.post(url).set('x-csrf-token', who.csrf);
  for (const f of files) req = req.attach('files', Buffer.isBuffer(f.data) ? f.data : Buffer.from(f.data), f.name);
  if (selection) req = req.field('selection', JSON.stringify(selection));
  return req;
};
const previewUrl = () => `/api/studies/${s.studyId}/roster-imports/preview`;
const commitUrl = () => `/api/studies/${s.studyId}/roster-imports`;
/** A user's stored link, computed here as the issue defines it (HMAC-SHA-256 of the sourcedId under the district's secret). */
const linkOf = (sourcedId: string) => createHmac('sha256', t.config.rosterLinkSecret).update(sourcedId, 'utf8').digest();
const zip = (files: Record<string, string>) => [{ name: 'roster.zip', data: zipBundle(files) }];

/** Row counts of everything an import could write: a refused bundle must leave them all as they were. */
async function footprint() {
  const [row] = await t.db.query(
    `SELECT (SELECT count(*) FROM sites)::int AS sites, (SELECT count(*) FROM study_sites)::int AS study_sites, (SELECT count(*) FROM classrooms)::int AS classrooms,
            (SELECT count(*) FROM students)::int AS students, (SELECT count(*) FROM students WHERE roster_link IS NOT NULL)::int AS linked_students,
            (SELECT count(*) FROM users)::int AS users, (SELECT count(*) FROM audit_events)::int AS audit, (SELECT count(*) FROM roster_imports)::int AS imports`,
  );
  return row;
}

describe('previewing and importing a OneRoster bundle', () => {
  it('when the coordinator previews the demo bundle, then it lists the demo schools, their classes, teachers and student counts, and writes nothing', async () => {
    const before = await footprint();
    const res = await upload(s.coordinator, previewUrl(), [{ name: 'oneroster-demo.zip', data: readFileSync(DEMO_BUNDLE) }]);
    expect(res.status).toBe(200);
    const preview = res.body as RosterPreview;
    expect(preview.totals).toEqual({ schools: 2, classes: 4, students: 4 * DEMO_SHAPE.studentsPerClass });
    const [ald] = await t.db.query(`SELECT id FROM sites WHERE code = 'ALD'`);
    const alder = preview.schools.find((x) => x.identifier === 'ALD')!;
    expect(alder).toMatchObject({ name: 'Alderquill Elementary', siteId: ald.id, principalFromExport: true, principal: { email: 'principal.ald@roster.evenhand.test' } });
    expect(alder.classes[0]).toMatchObject({ title: 'Grade 4 Reading 1', grade: '04', students: 12, teacher: { email: 'teacher.ald1@roster.evenhand.test', name: 'Ondine Fictive-ALD1' }, classroomId: null, blocked: null });
    expect(await footprint()).toEqual(before);
  });

  it('when the individual CSV files are uploaded instead of a zip, then the preview is the same', async () => {
    const files = Object.entries(oneRosterFiles(DEMO_SHAPE)).map(([name, data]) => ({ name, data }));
    const res = await upload(s.coordinator, previewUrl(), files);
    expect(res.status).toBe(200);
    expect(res.body.totals).toEqual({ schools: 2, classes: 4, students: 48 });
  });

  it('when chosen schools and classes are committed, then classrooms, teachers (invited) and student codes exist, and no student name or sourcedId is stored', async () => {
    const preview = (await upload(s.coordinator, previewUrl(), zip(oneRosterFiles(DEMO_SHAPE)))).body as RosterPreview;
    const choice = { schools: preview.schools.map((x) => x.sourcedId), classes: ['cls-ald-1', 'cls-ald-2', 'cls-brk-1'] };
    const res = await upload(s.coordinator, commitUrl(), zip(oneRosterFiles(DEMO_SHAPE)), choice);
    expect(res.status).toBe(201);
    const result = res.body as RosterImport;
    expect(result).toMatchObject({ classroomsCreated: 3, classroomsUpdated: 0, studentsJoined: 36, studentsLeft: 0, studentsRemoved: 0 });

    const rooms = await t.db.query(`SELECT c.name, c.expected_size, u.email FROM classrooms c JOIN users u ON u.id = c.teacher_id WHERE c.study_id = $1 AND c.roster_sourced_id IS NOT NULL ORDER BY c.roster_sourced_id`, [s.studyId]);
    expect(rooms).toEqual([
      { name: 'Grade 4 Reading 1', expected_size: 12, email: 'teacher.ald1@roster.evenhand.test' },
      { name: 'Grade 4 Reading 2', expected_size: 12, email: 'teacher.ald2@roster.evenhand.test' },
      { name: 'Grade 4 Reading 1', expected_size: 12, email: 'teacher.brk1@roster.evenhand.test' },
    ]);
    await waitForMail('teacher.ald1@roster.evenhand.test');

    // The link is the keyed hash of the export's sourcedId, never the sourcedId itself.
    const [first] = await t.db.query(`SELECT student_code FROM students WHERE study_id = $1 AND roster_link = $2`, [s.studyId, linkOf('stu-000001')]);
    expect(first.student_code).toMatch(/^R\d{7}$/);
    expect((await t.db.query(`SELECT count(*)::int AS n FROM students WHERE study_id = $1 AND student_code LIKE 'R%'`, [s.studyId]))[0].n).toBe(36);
    const [{ dump }] = await t.db.query(
      `SELECT concat_ws(' ', (SELECT string_agg(u::text, ' ') FROM users u), (SELECT string_agg(a::text, ' ') FROM audit_events a),
                            (SELECT string_agg(r::text, ' ') FROM roster_imports r), (SELECT string_agg(x::text, ' ') FROM students x)) AS dump`,
    );
    for (const personal of ['Given1', 'Family1', 'stu-000001', 'pupil1@', 'SIS-1', '900001']) expect(dump).not.toContain(personal);
  });

  it('when a newer export is imported, then students who joined get codes, those who left are removed before the draw, nothing is duplicated, and the audit trail says which codes', async () => {
    const newer = oneRosterFiles({ ...DEMO_SHAPE, without: [1, 2] });
    // One new student in the first class of Alderquill: the last student number of the demo shape plus one.
    newer['users.csv'] += `stu-000999,,,true,org-ald,student,,,Given999,Family999,,,,,,,04,\r\n`;
    newer['enrollments.csv'] += `enr-new-999,,,cls-ald-1,org-ald,stu-000999,student,false,,\r\n`;
    const preview = (await upload(s.coordinator, previewUrl(), zip(newer))).body as RosterPreview;
    const first = preview.schools.flatMap((x) => x.classes).find((c) => c.sourcedId === 'cls-ald-1')!;
    expect(first).toMatchObject({ joined: 1, left: 2, students: 11 });
    expect(first.classroomId).not.toBeNull();

    const res = await upload(s.coordinator, commitUrl(), zip(newer), { schools: ['org-ald', 'org-brk'], classes: ['cls-ald-1', 'cls-ald-2', 'cls-brk-1'] });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ classroomsCreated: 0, classroomsUpdated: 1, studentsJoined: 1, studentsRemoved: 2, studentsLeft: 0 });
    expect((await t.db.query(`SELECT count(*)::int AS n FROM students WHERE study_id = $1 AND roster_link IS NOT NULL`, [s.studyId]))[0].n).toBe(35);
    expect((await t.db.query(`SELECT count(*)::int AS n FROM classrooms WHERE study_id = $1 AND roster_sourced_id IS NOT NULL`, [s.studyId]))[0].n).toBe(3);
    const [entry] = await t.db.query(`SELECT after FROM audit_events WHERE study_id = $1 AND action = 'roster.students_changed' ORDER BY at DESC, id DESC LIMIT 1`, [s.studyId]);
    expect(entry.after.joined).toHaveLength(1);
    expect(entry.after.removed).toHaveLength(2);
    expect(entry.after.attrition).toBe(false);
    const history = await s.coordinator.agent.get(commitUrl());
    expect(history.body.items.map((i: RosterImport) => i.studentsJoined)).toEqual([1, 36]);
  });

  it('when a student leaves a classroom after the draw, then the code stays registered and the leaving is recorded as attrition', async () => {
    const [lead] = await t.db.query(`SELECT id FROM users WHERE email = 'lead@evenhand.test'`);
    await t.db.query(`INSERT INTO draws (study_id, seed, algorithm, algorithm_version, unit, blocks, assignments, committed_by) VALUES ($1, 'test', 'test', '1', 'classroom', '[]', '[]', $2)`, [s.studyId, lead.id]);
    const latest = oneRosterFiles({ ...DEMO_SHAPE, without: [1, 2, 3] });
    latest['users.csv'] += `stu-000999,,,true,org-ald,student,,,Given999,Family999,,,,,,,04,\r\n`;
    latest['enrollments.csv'] += `enr-new-999,,,cls-ald-1,org-ald,stu-000999,student,false,,\r\n`;
    const preview = (await upload(s.coordinator, previewUrl(), zip(latest))).body as RosterPreview;
    expect(preview.drawCommitted).toBe(true);
    expect(preview.schools.flatMap((x) => x.classes).find((c) => c.sourcedId === 'cls-ald-3' || c.sourcedId === 'cls-brk-2')!.blocked).toBe('The draw is committed: new classrooms can no longer join');

    const res = await upload(s.coordinator, commitUrl(), zip(latest), { schools: ['org-ald', 'org-brk'], classes: ['cls-ald-1', 'cls-ald-2', 'cls-brk-1'] });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ studentsJoined: 0, studentsRemoved: 0, studentsLeft: 1 });
    const [gone] = await t.db.query(`SELECT student_code, roster_left_at AS left_at FROM students WHERE study_id = $1 AND roster_link = $2`, [s.studyId, linkOf('stu-000003')]);
    expect(gone.left_at).not.toBeNull();
    expect((await t.db.query(`SELECT count(*)::int AS n FROM students WHERE study_id = $1 AND student_code = $2`, [s.studyId, gone.student_code]))[0].n).toBe(1);
    const [entry] = await t.db.query(`SELECT after FROM audit_events WHERE study_id = $1 AND action = 'roster.students_changed' ORDER BY at DESC, id DESC LIMIT 1`, [s.studyId]);
    expect(entry.after).toMatchObject({ left: [gone.student_code], attrition: true, removed: [] });

    // A new class cannot be chosen after the draw.
    const refused = await upload(s.coordinator, commitUrl(), zip(latest), { schools: ['org-brk'], classes: ['cls-brk-2'] });
    expect(refused.status).toBe(400);
    expect(refused.body.error.details.issues[0].message).toContain('The draw is committed');
  });

  // A link lives on its student's registry row (migration 1796900000000), whose classroom the registry's triggers check.
  it('when a roster student is moved to another study, or registered with a classroom that is none of its study, then the database refuses it', async () => {
    const [linked] = await t.db.query(`SELECT roster_link FROM students WHERE study_id = $1 AND roster_link IS NOT NULL LIMIT 1`, [s.studyId]);
    const other = await createStudy(t.app, { seal: false });
    const refusedKey = { driverError: { code: '23503' } };
    // The same classroom, but the student moved to another study.
    await expect(t.db.query(`UPDATE students SET study_id = $3 WHERE study_id = $1 AND roster_link = $2`, [s.studyId, linked.roster_link, other.studyId])).rejects.toMatchObject(refusedKey);
    await expect(
      t.db.query(`INSERT INTO students (study_id, student_code, classroom_id, roster_link, roster_joined_at) VALUES ($1, 'R9999999', gen_random_uuid(), sha256('another'::bytea), now())`, [s.studyId]),
    ).rejects.toMatchObject(refusedKey);
    const [{ n }] = await t.db.query(`SELECT count(*)::int AS n FROM students WHERE study_id = $1 OR student_code = 'R9999999'`, [other.studyId]);
    expect(n).toBe(0);
  });

  it('when a classroom still has roster students, then it cannot be deleted', async () => {
    const [linked] = await t.db.query(`SELECT classroom_id FROM students WHERE study_id = $1 AND roster_link IS NOT NULL AND roster_left_at IS NULL LIMIT 1`, [s.studyId]);
    await expect(t.db.query(`DELETE FROM classrooms WHERE id = $1`, [linked.classroom_id])).rejects.toThrow('a classroom with registered student codes cannot be deleted');
    expect((await t.db.query(`SELECT count(*)::int AS n FROM classrooms WHERE id = $1`, [linked.classroom_id]))[0].n).toBe(1);
  });

  it('when a link would be given without the date it joined, or to a second student, then the database refuses it', async () => {
    const [a, b] = await t.db.query(`SELECT student_code, roster_link FROM students WHERE study_id = $1 AND roster_link IS NOT NULL ORDER BY student_code LIMIT 2`, [s.studyId]);
    await expect(t.db.query(`UPDATE students SET roster_joined_at = NULL WHERE study_id = $1 AND student_code = $2`, [s.studyId, a.student_code])).rejects.toThrow(/students_roster_dates/);
    await expect(t.db.query(`UPDATE students SET roster_link = $3 WHERE study_id = $1 AND student_code = $2`, [s.studyId, b.student_code, a.roster_link])).rejects.toThrow(/students_roster_link/);
  });
});

describe('a student moving between classrooms before the draw', () => {
  it('when a newer export lists a student in another chosen class, then the student keeps the code and moves, recorded as moved out and joined', async () => {
    const study = await createStudy(t.app);
    const url = `/api/studies/${study.studyId}/roster-imports`;
    const choice = { schools: ['org-ald'], classes: ['cls-ald-1', 'cls-ald-2'] };
    const shape = { schools: 1, classesPerSchool: 2, studentsPerClass: 4 };
    expect((await upload(study.coordinator, url, zip(oneRosterFiles(shape)), choice)).status).toBe(201);
    const codeOf = async () =>
      (await t.db.query(
        `SELECT st.student_code, c.roster_sourced_id AS class FROM students st JOIN classrooms c ON c.id = st.classroom_id
          WHERE st.study_id = $1 AND st.roster_link = $2`,
        [study.studyId, linkOf('stu-000001')],
      ))[0];
    const before = await codeOf();
    expect(before).toMatchObject({ class: 'cls-ald-1' });

    const moved = oneRosterFiles(shape);
    moved['enrollments.csv'] = moved['enrollments.csv'].replace('enr-cls-ald-1-stu-000001,,,cls-ald-1,', 'enr-cls-ald-1-stu-000001,,,cls-ald-2,');
    const res = await upload(study.coordinator, url, zip(moved), choice);
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ studentsJoined: 1, studentsRemoved: 0, studentsLeft: 0 });
    expect(await codeOf()).toEqual({ student_code: before.student_code, class: 'cls-ald-2' });
    const changes = await t.db.query(`SELECT after FROM audit_events WHERE study_id = $1 AND action = 'roster.students_changed' ORDER BY at DESC, id DESC LIMIT 2`, [study.studyId]);
    expect(changes.map((c: { after: { joined: string[]; movedOut: string[] } }) => [c.after.joined, c.after.movedOut]).sort()).toEqual([[[], [before.student_code]], [[before.student_code], []]].sort());
  });
});

describe('a roster student left out of a score sheet', () => {
  it('when a teacher saves a sheet without a roster student’s row, then the code stays registered and linked, and a newer export adds no one twice', async () => {
    const study = await createStudy(t.app);
    const url = `/api/studies/${study.studyId}/roster-imports`;
    const files = oneRosterFiles({ schools: 1, classesPerSchool: 1, studentsPerClass: 4 });
    const choice = { schools: ['org-ald'], classes: ['cls-ald-1'] };
    expect((await upload(study.coordinator, url, zip(files), choice)).status).toBe(201);
    // The class's teacher, as a demo teacher who can sign in here.
    const teacher = await signIn(t.app, 'teacher1@evenhand.test');
    const [room] = await t.db.query(`SELECT id FROM classrooms WHERE study_id = $1 AND roster_sourced_id = 'cls-ald-1'`, [study.studyId]);
    await t.db.query(`UPDATE classrooms SET teacher_id = $2 WHERE id = $1`, [room.id, teacher.userId]);
    await study.coordinator.agent.get(`/api/studies/${study.studyId}/completion`).expect(200); // creates the score sheets
    const [sheet] = await t.db.query(`SELECT id FROM score_sheets WHERE classroom_id = $1 AND wave_id = $2`, [room.id, study.baselineId]);
    const codes: string[] = (await t.db.query(`SELECT student_code FROM students WHERE study_id = $1 AND roster_link IS NOT NULL ORDER BY student_code`, [study.studyId])).map((r: { student_code: string }) => r.student_code);
    expect(codes).toHaveLength(4);
    const save = (rows: string[]) => teacher.agent.put(`/api/score-sheets/${sheet.id}`).set('x-csrf-token', teacher.csrf).send({ rows: rows.map((studentCode, i) => ({ studentCode, score: 50 + i })) });
    expect((await save(codes)).status).toBe(200);
    expect((await save(codes.slice(1))).status).toBe(200);

    const registered = async () => (await t.db.query(`SELECT student_code FROM students WHERE study_id = $1 AND classroom_id = $2 AND roster_link IS NOT NULL ORDER BY student_code`, [study.studyId, room.id])).map((r: { student_code: string }) => r.student_code);
    expect(await registered()).toEqual(codes);
    expect((await t.db.query(`SELECT n FROM registered_counts WHERE classroom_id = $1`, [room.id]))[0].n).toBe(4);
    const again = await upload(study.coordinator, url, zip(files), choice);
    expect(again.status).toBe(201);
    expect(again.body).toMatchObject({ studentsJoined: 0, studentsRemoved: 0, studentsLeft: 0 });
    expect(await registered()).toEqual(codes);
  });
});

describe('principals', () => {
  it('when the export names no administrator for a new school, then the principal the coordinator names is invited for it', async () => {
    const study = await createStudy(t.app);
    // Seven schools: the seventh is new to the district; its administrator row is taken out.
    const files = oneRosterFiles({ schools: 7, classesPerSchool: 1, studentsPerClass: 2 });
    files['users.csv'] = files['users.csv'].split('\r\n').filter((line) => !line.startsWith('adm-sch7,')).join('\r\n');
    const url = `/api/studies/${study.studyId}/roster-imports`;
    const preview = (await upload(study.coordinator, `${url}/preview`, zip(files))).body as RosterPreview;
    expect(preview.schools.find((x) => x.sourcedId === 'org-sch7')).toMatchObject({ siteId: null, principal: null, principalFromExport: false });

    const named = { name: 'Noor Fictive', email: 'noor.fictive@roster.evenhand.test' };
    const res = await upload(study.coordinator, url, zip(files), { schools: ['org-sch7'], classes: ['cls-sch7-1'], principals: { 'org-sch7': named } });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ sitesEnrolled: 1, invitationsSent: 2 });
    const [site] = await t.db.query(`SELECT s.name, s.code, u.email FROM sites s JOIN users u ON u.id = s.principal_id WHERE s.roster_sourced_id = 'org-sch7'`);
    expect(site).toEqual({ name: 'Invented School 7', code: 'SCH7', email: named.email });
    await waitForMail(named.email);

    // Naming one for a school whose principal the export names is refused.
    const refused = await upload(study.coordinator, url, zip(files), { schools: ['org-ald'], classes: ['cls-ald-1'], principals: { 'org-ald': named } });
    expect(refused.status).toBe(400);
    expect(refused.body.error.details.issues[0].message).toBe('The export names the principal of Alderquill Elementary');
  });
});

describe('teachers named by the export, all at once', () => {
  const shape = { schools: 2, classesPerSchool: 2, studentsPerClass: 2 };
  /** The export with some teachers' e-mail addresses replaced (by their users.csv sourcedId). */
  const withTeachers = (emails: Record<string, string>) => {
    const files = oneRosterFiles(shape);
    for (const [id, email] of Object.entries(emails)) files['users.csv'] = files['users.csv'].replace(new RegExp(`^(${id},(?:[^,]*,){11})[^,]*`, 'm'), `$1${email}`);
    return files;
  };
  const outbox = async (email: string) =>
    (await t.db.query(`SELECT kind FROM digests WHERE recipient_email = $1 ORDER BY kind`, [email])).map((r: { kind: string }) => r.kind);
  const grantsOf = async (email: string) =>
    (await t.db.query(`SELECT g.role, s.code FROM role_grants g JOIN users u ON u.id = g.user_id JOIN sites s ON s.id = g.site_id WHERE u.email = $1 ORDER BY s.code`, [email])).map(
      (g: { role: string; code: string }) => `${g.role}@${g.code}`,
    );
  const invitationsOf = async (email: string) =>
    (await t.db.query(`SELECT i.role, s.code FROM role_invitations i JOIN users u ON u.id = i.user_id JOIN sites s ON s.id = i.site_id WHERE u.email = $1 AND i.state = 'pending' ORDER BY s.code`, [email])).map(
      (g: { role: string; code: string }) => `${g.role}@${g.code}`,
    );
  const auditCount = async (action: string, email: string) =>
    (await t.db.query(`SELECT count(*)::int AS n FROM audit_events WHERE action = $1 AND after->>'email' = $2`, [action, email]))[0].n;

  it('when one new address teaches two classes of a school and one of another, then it gets one account and one invitation, and the other school is offered', async () => {
    const study = await createStudy(t.app);
    const shared = uniqueAddress('shared-teacher');
    const files = withTeachers({ 'tch-ald-1': shared, 'tch-ald-2': shared, 'tch-brk-1': shared });
    const res = await upload(study.coordinator, `/api/studies/${study.studyId}/roster-imports`, zip(files), { schools: ['org-ald', 'org-brk'], classes: ['cls-ald-1', 'cls-ald-2', 'cls-brk-1'] });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ classroomsCreated: 3, invitationsSent: 2 });
    const teachers = await t.db.query(`SELECT DISTINCT c.teacher_id, u.email FROM classrooms c JOIN users u ON u.id = c.teacher_id WHERE c.study_id = $1`, [study.studyId]);
    expect(teachers).toHaveLength(1);
    expect(teachers[0].email).toBe(shared);
    // Named one after another it would be the same: the account comes with the first school's role, the second is offered.
    expect(await grantsOf(shared)).toEqual(['teacher@ALD']);
    expect(await invitationsOf(shared)).toEqual(['teacher@BRK']);
    expect(await outbox(shared)).toEqual(['invitation', 'role_invitation']);
    expect([await auditCount('user.invited', shared), await auditCount('user.role_offered', shared)]).toEqual([1, 1]);
    const invitation = (await waitForMail(shared, 2)).find((m) => m.subject === 'You are invited to Evenhand');
    expect(invitation?.text).toContain('/set-password?token=');
  });

  it('when an existing account is named teacher of two classes, then it gets one offer and no role until it accepts', async () => {
    const study = await createStudy(t.app);
    const existing = uniqueAddress('existing-teacher');
    await t.db.query(`INSERT INTO users (email, name, password_hash) VALUES ($1, 'Existing Person', NULL)`, [existing]);
    const files = withTeachers({ 'tch-ald-1': existing, 'tch-ald-2': existing });
    const res = await upload(study.coordinator, `/api/studies/${study.studyId}/roster-imports`, zip(files), { schools: ['org-ald'], classes: ['cls-ald-1', 'cls-ald-2'] });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ classroomsCreated: 2, invitationsSent: 1 });
    expect(await grantsOf(existing)).toEqual([]);
    expect(await invitationsOf(existing)).toEqual(['teacher@ALD']);
    expect(await outbox(existing)).toEqual(['role_invitation']);
    expect([await auditCount('user.invited', existing), await auditCount('user.role_offered', existing)]).toEqual([0, 1]);
    expect((await t.db.query(`SELECT count(*)::int AS n FROM users WHERE email = $1`, [existing]))[0].n).toBe(1);
  });

  it('when the export names the coordinator or a reviewer as a teacher, then it is refused with their users.csv lines and nothing changes', async () => {
    const study = await createStudy(t.app);
    // users.csv: line 1 the header, 2 the administrator, 3 the first teacher, 4–5 their students, 6 the second teacher.
    const files = withTeachers({ 'tch-ald-1': 'coordinator@evenhand.test', 'tch-ald-2': 'reviewer@evenhand.test' });
    const before = await footprint();
    const res = await upload(study.coordinator, `/api/studies/${study.studyId}/roster-imports`, zip(files), { schools: ['org-ald'], classes: ['cls-ald-1', 'cls-ald-2'] });
    expect(res.status).toBe(400);
    expect(res.body.error.details.rows).toEqual([
      { row: 3, column: 'users.csv: email', message: 'You cannot name yourself as teacher; name the person who will do it' },
      { row: 6, column: 'users.csv: email', message: 'reviewer@evenhand.test has the reviewer role, which cannot also be a school’s teacher; name someone else' },
    ]);
    expect(await footprint()).toEqual(before);
    expect(await grantsOf('reviewer@evenhand.test')).toEqual([]);
  });
});

describe('refusing bad bundles: a clear 4xx and nothing changes', () => {
  const good = () => oneRosterFiles({ schools: 1, classesPerSchool: 1, studentsPerClass: 3 });
  const refusedWith = async (files: { name: string; data: Buffer | string }[], status: number, selection = { schools: ['org-ald'], classes: ['cls-ald-1'] }) => {
    const before = await footprint();
    const res = await upload(s.coordinator, commitUrl(), files, selection);
    expect(res.status).toBe(status);
    expect(res.body.error.code).toBeTypeOf('string');
    expect(await footprint()).toEqual(before);
    return res.body.error as { code: string; message: string; details?: { rows?: { row: number; column: string; message: string }[] } };
  };

  it('refuses a bundle without users.csv', async () => {
    const files = good();
    delete files['users.csv'];
    expect((await refusedWith(zip(files), 400)).message).toBe('The bundle lacks users.csv');
  });

  it('refuses a file whose header lacks the binding’s columns', async () => {
    const files = good();
    files['classes.csv'] = files['classes.csv'].replace('schoolSourcedId', 'school');
    expect((await refusedWith(zip(files), 400)).message).toBe('classes.csv: The header row lacks the column(s) schoolsourcedid');
  });

  it('refuses an enrolment in a class that is not in classes.csv, naming its line', async () => {
    const files = good();
    files['enrollments.csv'] += 'enr-x,,,cls-nowhere,org-ald,stu-000001,student,false,,\r\n';
    const error = await refusedWith(zip(files), 400);
    expect(error.details!.rows).toEqual([{ row: 6, column: 'enrollments.csv: classSourcedId', message: 'classSourcedId cls-nowhere is not in classes.csv' }]);
  });

  it('refuses a duplicate sourcedId in users.csv or enrollments.csv, naming both lines', async () => {
    const files = good();
    files['users.csv'] += 'stu-000002,,,true,org-ald,student,,,Given2,Family2,,,,,,,04,\r\n';
    const error = await refusedWith(zip(files), 400);
    expect(error.details!.rows).toEqual([{ row: 7, column: 'users.csv: sourcedId', message: 'the same sourcedId is also on line 5' }]);
    const enrolments = good();
    enrolments['enrollments.csv'] += 'enr-cls-ald-1-stu-000002,,,cls-ald-1,org-ald,stu-000003,student,false,,\r\n';
    const repeated = await refusedWith(zip(enrolments), 400);
    expect(repeated.details!.rows).toEqual([{ row: 6, column: 'enrollments.csv: sourcedId', message: 'the same sourcedId is also on line 4' }]);
  });

  it('refuses a student enrolled in two chosen classes, naming both lines; listed twice in one class, the student is one member of it', async () => {
    const files = oneRosterFiles({ schools: 1, classesPerSchool: 2, studentsPerClass: 3 });
    const inTwo = { ...files, 'enrollments.csv': `${files['enrollments.csv']}enr-x,,,cls-ald-2,org-ald,stu-000001,student,false,,\r\n` };
    const error = await refusedWith(zip(inTwo), 400, { schools: ['org-ald'], classes: ['cls-ald-1', 'cls-ald-2'] });
    expect(error.details!.rows).toEqual([
      { row: 10, column: 'enrollments.csv: userSourcedId', message: 'The student is also in another chosen class (line 3); a student belongs to one classroom of a study' },
    ]);
    const twiceInOne = { ...files, 'enrollments.csv': `${files['enrollments.csv']}enr-y,,,cls-ald-1,org-ald,stu-000002,student,false,,\r\n` };
    const preview = (await upload(s.coordinator, previewUrl(), zip(twiceInOne))).body as RosterPreview;
    expect(preview.schools[0].classes.map((c) => [c.sourcedId, c.students])).toEqual([['cls-ald-1', 3], ['cls-ald-2', 3]]);
    const study = await createStudy(t.app);
    const imported = await upload(study.coordinator, `/api/studies/${study.studyId}/roster-imports`, zip(twiceInOne), { schools: ['org-ald'], classes: ['cls-ald-1'] });
    expect(imported.status).toBe(201);
    expect((imported.body as RosterImport).studentsJoined).toBe(3);
  });

  it('refuses a delta export and another OneRoster version', async () => {
    const delta = good();
    delta['manifest.csv'] = delta['manifest.csv'].replace('file.users,bulk', 'file.users,delta');
    expect((await refusedWith(zip(delta), 400)).message).toContain('file.users must be “bulk”');
    const newer = good();
    newer['manifest.csv'] = newer['manifest.csv'].replace('oneroster.version,1.1', 'oneroster.version,1.2');
    expect((await refusedWith(zip(newer), 400)).message).toContain('Evenhand reads OneRoster 1.1 exports');
  });

  it('refuses an upload of 200 MB with 413 before reading it', async () => {
    const huge = Buffer.alloc(200 * 1024 * 1024, 0x41);
    huge.write('PK\u0003\u0004', 0, 'latin1');
    expect((await refusedWith([{ name: 'huge.zip', data: huge }], 413)).code).toBe('payload_too_large');
  });

  it('refuses a zip bomb: an entry packed far beyond any CSV', async () => {
    const files = good();
    const bomb = zipEntries([
      ...Object.entries(files).filter(([n]) => n !== 'users.csv').map(([name, data]) => ({ name, data })),
      { name: 'users.csv', data: Buffer.alloc(64 * 1024 * 1024, 0x20) },
    ]);
    expect(bomb.length).toBeLessThan(1024 * 1024);
    expect(64 * 1024 * 1024 / deflateRawSync(Buffer.alloc(64 * 1024 * 1024, 0x20)).length).toBeGreaterThan(MAX_PACKING_RATIO);
    expect((await refusedWith([{ name: 'bomb.zip', data: bomb }], 400)).message).toBe(`The zip was refused: “users.csv” is packed more than ${MAX_PACKING_RATIO} times (a zip bomb?); nothing was imported`);
  });

  it('refuses a zip with a path that climbs out of the bundle', async () => {
    const files = good();
    const climbing = zipEntries(Object.entries(files).map(([name, data]) => ({ name: name === 'users.csv' ? '../users.csv' : name, data })));
    expect((await refusedWith([{ name: 'climb.zip', data: climbing }], 400)).message).toMatch(/^The zip was refused: .*\.\.\/users\.csv/);
  });

  it('refuses a choice that names a class of a school not chosen', async () => {
    const error = await refusedWith(zip(good()), 400, { schools: ['org-brk-missing'], classes: ['cls-ald-1'] });
    expect(error.message).toBe('The choice of schools and classes does not fit the bundle');
  });

  it('refuses a choice that names the same class twice (400, not a database error)', async () => {
    const error = await refusedWith(zip(good()), 400, { schools: ['org-ald'], classes: ['cls-ald-1', 'cls-ald-1'] });
    expect((error.details as { issues?: unknown }).issues).toEqual([{ path: 'classes', message: 'Class cls-ald-1 is chosen twice' }]);
  });

  it('refuses the preview to a teacher (403)', async () => {
    const { signIn } = await import('../../test/app.js');
    const teacher = await signIn(t.app, 'teacher1@evenhand.test');
    expect((await upload(teacher, previewUrl(), zip(good()))).status).toBe(403);
  });
});
