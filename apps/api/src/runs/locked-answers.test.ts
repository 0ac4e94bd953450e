import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type SignedIn, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, fillSheet, send, waitForRun, type StudySetup } from '../../test/fixtures.js';
import { loadSessionUser } from '../auth/service.js';
import { getRun } from './service.js';

let t: TestApp;
let s: StudySetup;
let runId: string;
let principal: SignedIn;

beforeAll(async () => {
  t = await startTestApp({ workers: true });
  s = await createStudy(t.app);
  const { classrooms } = await enrolClassrooms(s, 2, 2);
  await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'locked-answers', commit: true }, 201);
  await s.coordinator.agent.get(`/api/studies/${s.studyId}/completion`).expect(200);
  let k = 0;
  for (const c of classrooms) {
    // Twelve students per classroom: the principal's school holds cells of both sizes around the suppression limit.
    await fillSheet(t.db, { classroomId: c.id, waveId: s.outcomeId, measureId: s.measureId }, Array.from({ length: 12 }, (_, i) => 60 + ((i * 7 + k * 5) % 30)), `L${k}`);
    k++;
  }
  const [comparison] = (await s.lead.agent.get(`/api/studies/${s.studyId}/comparisons`).expect(200)).body.items;
  const { run: queued } = await send(s.lead, 'post', `/api/comparisons/${comparison.id}/runs`, { kind: 'confirmatory' }, 202);
  expect((await waitForRun(s.lead, queued.id)).state).toBe('finished');
  await send(s.lead, 'post', `/api/runs/${queued.id}/lock`, {}, 200);
  runId = queued.id;
  // The demo principal leads the study's first school.
  await t.db.query(
    `UPDATE role_grants SET site_id = $1 WHERE role = 'principal' AND user_id = (SELECT id FROM users WHERE email = 'principal1@evenhand.test')`,
    [classrooms[0].siteId],
  );
  principal = await signIn(t.app, 'principal1@evenhand.test');
});

afterAll(() => t?.close());

describe('a locked run’s answer', () => {
  it('when read twice, then the same bytes come with the same ETag, and a client holding that ETag gets 304 without a body', async () => {
    const first = await s.lead.agent.get(`/api/runs/${runId}`).expect(200);
    const second = await s.lead.agent.get(`/api/runs/${runId}`).expect(200);
    expect(first.headers.etag).toMatch(/^"[\w-]+"$/);
    expect(second.headers.etag).toBe(first.headers.etag);
    expect(second.text).toBe(first.text);
    expect(second.headers['cache-control']).toBe('no-store');
    const again = await s.lead.agent.get(`/api/runs/${runId}`).set('if-none-match', first.headers.etag).expect(304);
    expect(again.text).toBe('');
  });

  it('when the lead and then a principal read it, then each gets what the service builds for their role (the principal’s own school, small cells suppressed)', async () => {
    const lead = await s.lead.agent.get(`/api/runs/${runId}`).expect(200);
    const school = await principal.agent.get(`/api/runs/${runId}`).expect(200);
    expect(school.headers.etag).not.toBe(lead.headers.etag);
    const asLead = (await loadSessionUser(t.db, (await t.db.query(`SELECT id FROM users WHERE email = 'lead@evenhand.test'`))[0].id))!;
    const asPrincipal = (await loadSessionUser(t.db, (await t.db.query(`SELECT id FROM users WHERE email = 'principal1@evenhand.test'`))[0].id))!;
    expect(lead.body).toEqual(JSON.parse(JSON.stringify(await getRun(t.db, asLead, runId))));
    expect(school.body).toEqual(JSON.parse(JSON.stringify(await getRun(t.db, asPrincipal, runId))));
    expect(school.body).not.toEqual(lead.body);
  });

  it('refuses a principal of another school with 404, even after the answer was built for others', async () => {
    await t.db.query(
      `UPDATE role_grants SET site_id = (SELECT id FROM sites WHERE id NOT IN (SELECT site_id FROM study_sites WHERE study_id = $1) LIMIT 1)
        WHERE role = 'principal' AND user_id = (SELECT id FROM users WHERE email = 'principal1@evenhand.test')`,
      [s.studyId],
    );
    const elsewhere = await signIn(t.app, 'principal1@evenhand.test');
    expect((await elsewhere.agent.get(`/api/runs/${runId}`)).status).toBe(404);
  });
});
