import type { Express } from 'express';
import type { DataSource } from 'typeorm';
import { expect } from 'vitest';
import type { SignedIn } from './app.js';
import { signIn } from './app.js';
import { uniqueAddress } from './mail.js';
import { acceptOpenInvitations } from '../src/accounts/role-invitations.js';

/** Sends a state-changing request with the session's CSRF header and checks the status. */
/** Polls a run until a worker has finished (or failed) it, and answers its body as `who` reads it. */
export async function waitForRun(who: SignedIn, runId: string) {
  for (let i = 0; i < 150; i++) {
    const res = await who.agent.get(`/api/runs/${runId}`);
    if (['finished', 'failed'].includes(res.body.state)) return res.body;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`run ${runId} did not finish`);
}

export async function send(s: SignedIn, method: 'post' | 'put' | 'patch', url: string, body: object, status: number) {
  const res = await s.agent[method](url).set('x-csrf-token', s.csrf).send(body);
  if (res.status !== status) throw new Error(`${method.toUpperCase()} ${url} answered ${res.status}, expected ${status}: ${JSON.stringify(res.body)}`);
  return res.body;
}

export const samplePlan = (measureId: string, waveId: string) => ({
  primaryMeasureId: measureId,
  primaryWaveId: waveId,
  hypothesis: 'Classrooms using the practice reach higher spring reading scores than business-as-usual classrooms.',
  plannedSites: 2,
  plannedClassrooms: 8,
  plannedStudentsPerClassroom: 22,
});

export interface StudySetup {
  lead: SignedIn;
  coordinator: SignedIn;
  studyId: string;
  measureId: string;
  baselineId: string;
  outcomeId: string;
}

const isoDay = (offsetDays: number) => new Date(Date.now() + offsetDays * 86_400_000).toISOString().slice(0, 10);

/** A study with a measure, a baseline wave open today, a later outcome wave, and (optionally) a sealed plan. */
export async function createStudy(app: Express, { seal = true, unitOfAssignment = 'classroom' } = {}): Promise<StudySetup> {
  const lead = await signIn(app, 'lead@evenhand.test');
  const coordinator = await signIn(app, 'coordinator@evenhand.test');
  const study = await send(lead, 'post', '/api/studies', {
    title: 'Paired reading in grade 4',
    intervention: 'Twice-weekly paired reading sessions',
    comparisonCondition: 'Business-as-usual reading block',
    unitOfAssignment,
  }, 201);
  const measure = await send(lead, 'post', `/api/studies/${study.id}/measures`, { name: 'Reading fluency', minScore: 0, maxScore: 200, kind: 'achievement' }, 201);
  const baseline = await send(lead, 'post', `/api/studies/${study.id}/waves`, { kind: 'baseline', name: 'Autumn', opensOn: isoDay(-10), closesOn: isoDay(20) }, 201);
  const outcome = await send(lead, 'post', `/api/studies/${study.id}/waves`, { kind: 'outcome', name: 'Spring', opensOn: isoDay(150), closesOn: isoDay(180) }, 201);
  await send(lead, 'put', `/api/studies/${study.id}/plan`, samplePlan(measure.id, outcome.id), 200);
  if (seal) await send(lead, 'post', `/api/studies/${study.id}/plan/seal`, {}, 200);
  return { lead, coordinator, studyId: study.id, measureId: measure.id, baselineId: baseline.id, outcomeId: outcome.id };
}

/** Enrols `sites` new schools with `perSite` classrooms each, all in one cohort; teachers are new unless named. */
export async function enrolClassrooms(s: StudySetup, sites: number, perSite: number, teacherEmails: string[] = [], db?: DataSource) {
  const cohort = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/cohorts`, { name: 'Grade 4, 2026–27' }, 201);
  const classrooms: { id: string; siteId: string; teacherEmail: string }[] = [];
  for (let i = 0; i < sites; i++) {
    const code = `T${Math.random().toString(36).slice(2, 8).toUpperCase()}`;
    const site = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/sites`, { name: `Test School ${code}`, code }, 201);
    for (let j = 0; j < perSite; j++) {
      const teacherEmail = teacherEmails[i * perSite + j] ?? uniqueAddress('teacher');
      const c = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/classrooms`, {
        siteId: site.id,
        cohortId: cohort.id,
        name: `Room ${j + 1}`,
        grade: '4',
        expectedSize: 20 + j,
        teacher: { email: teacherEmail, name: `Teacher ${i}-${j}` },
      }, 201);
      classrooms.push({ id: c.id, siteId: site.id, teacherEmail });
    }
  }
  expect(classrooms).toHaveLength(sites * perSite);
  // Existing accounts named as teachers are offered the role; with `db`, each accepts, as by the e-mailed link.
  if (db) await acceptRoleInvitations(db);
  return { cohortId: cohort.id, classrooms };
}

/** Accepts every open role invitation as its invitee would (tests in which the named people then act). */
export async function acceptRoleInvitations(db: DataSource) {
  const open: { user_id: string }[] = await db.query(`SELECT DISTINCT user_id FROM role_invitations WHERE state = 'pending'`);
  await db.transaction(async (manager) => {
    for (const { user_id } of open) await acceptOpenInvitations(manager, user_id);
  });
}

/** Writes scores straight into a classroom's sheet (whatever its wave's dates) and moves the sheet to `state`. */
export async function fillSheet(
  db: DataSource,
  sheet: { classroomId: string; waveId: string; measureId: string },
  scores: (number | null)[],
  codePrefix: string,
  state: 'accepted' | 'submitted' = 'accepted',
) {
  const [row] = await db.query(`SELECT id, study_id FROM score_sheets WHERE classroom_id = $1 AND wave_id = $2 AND measure_id = $3`, [sheet.classroomId, sheet.waveId, sheet.measureId]);
  const codes = scores.map((_, i) => `${codePrefix}-${i}`);
  await db.query(`INSERT INTO students (study_id, student_code, classroom_id) SELECT $1, unnest($2::varchar[]), $3 ON CONFLICT DO NOTHING`, [row.study_id, codes, sheet.classroomId]);
  await db.query(
    `INSERT INTO scores (sheet_id, study_id, classroom_id, wave_id, measure_id, student_code, score, left_study)
     SELECT $1, $2, $3, $4, $5, c, v, v IS NULL FROM unnest($6::varchar[], $7::numeric[]) AS t(c, v)`,
    [row.id, row.study_id, sheet.classroomId, sheet.waveId, sheet.measureId, codes, scores],
  );
  await db.query(`UPDATE score_sheets SET state = $2 WHERE id = $1`, [row.id, state]);
}
