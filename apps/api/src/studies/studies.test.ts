import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, send } from '../../test/fixtures.js';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('studies', () => {
  it('when a lead starts a study, then it is drafting, audited, and listed with its counts', async () => {
    const lead = await signIn(t.app, 'lead@evenhand.test');
    const study = await send(lead, 'post', '/api/studies', { title: 'Number talks', intervention: 'Daily number talks', comparisonCondition: 'Usual warm-up' }, 201);
    expect(study).toMatchObject({ status: 'drafting', unitOfAssignment: 'classroom', quasiExperimental: false, planVersion: null, drawCommittedAt: null, counts: { sites: 0, classrooms: 0, measures: 0, waves: 0 } });
    const list = await lead.agent.get('/api/studies');
    expect(list.body.items.map((s: { id: string }) => s.id)).toContain(study.id);
    const [audit] = await t.db.query(`SELECT action FROM audit_events WHERE study_id = $1`, [study.id]);
    expect(audit.action).toBe('study.created');
  });

  it('when the title is missing, then it answers 400 with the field', async () => {
    const lead = await signIn(t.app, 'lead@evenhand.test');
    const res = await lead.agent.post('/api/studies').set('x-csrf-token', lead.csrf).send({ title: ' ', intervention: 'x', comparisonCondition: 'y' });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues).toEqual([{ path: 'title', message: 'Enter a title' }]);
  });

  it('when the plan is sealed, then the unit of assignment can no longer change, but the title can', async () => {
    const s = await createStudy(t.app);
    const unit = await s.lead.agent.patch(`/api/studies/${s.studyId}`).set('x-csrf-token', s.lead.csrf).send({ unitOfAssignment: 'school' });
    expect(unit.status).toBe(409);
    const title = await send(s.lead, 'patch', `/api/studies/${s.studyId}`, { title: 'Paired reading, grade 4 (2026–27)' }, 200);
    expect(title.title).toBe('Paired reading, grade 4 (2026–27)');
  });

  it('when a principal or teacher has no part in a study, then it is not listed and answers 404', async () => {
    const s = await createStudy(t.app);
    const principal = await signIn(t.app, 'principal2@evenhand.test');
    expect((await principal.agent.get('/api/studies')).body.items.map((x: { id: string }) => x.id)).not.toContain(s.studyId);
    expect((await principal.agent.get(`/api/studies/${s.studyId}`)).status).toBe(404);
  });
});
