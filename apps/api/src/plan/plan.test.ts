import { createHash } from 'node:crypto';
import canonicalize from 'canonicalize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, samplePlan, send } from '../../test/fixtures.js';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('the plan', () => {
  it('when sealed, then it stores the SHA-256 of its canonical JSON, the study is registered, and edits answer 409', async () => {
    const s = await createStudy(t.app);
    const plan = (await s.lead.agent.get(`/api/studies/${s.studyId}/plan`)).body;
    expect(plan.sealed).toBe(true);
    expect(plan.draft).toBeNull();
    expect(plan.versions).toHaveLength(1);
    const v1 = plan.versions[0];
    // Independent recomputation: RFC 8785 canonical JSON of the stored content, hashed with SHA-256.
    expect(v1.sha256).toBe(createHash('sha256').update(canonicalize(v1.content)!).digest('hex'));
    expect(v1.content).toMatchObject({ alpha: 0.05, alternative: 'two-sided', primaryTest: 'welch', covariate: 'baseline' });
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}`)).body).toMatchObject({ status: 'registered', planVersion: 1 });

    const edit = await s.lead.agent.put(`/api/studies/${s.studyId}/plan`).set('x-csrf-token', s.lead.csrf).send(samplePlan(s.measureId, s.outcomeId));
    expect(edit.status).toBe(409);
    const again = await s.lead.agent.post(`/api/studies/${s.studyId}/plan/seal`).set('x-csrf-token', s.lead.csrf).send({});
    expect(again.status).toBe(409);
    expect(again.body.error.message).toBe('The plan is already sealed');
  });

  it('when amended, then a new version records the reason and the field-by-field changes, and reviewers can read it', async () => {
    const s = await createStudy(t.app);
    const plan = { ...samplePlan(s.measureId, s.outcomeId), alpha: 0.05, smallestEffectOfInterest: 0.2 };
    const res = await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/amendments`, { reason: 'The district board asked for a smaller effect of interest.', plan }, 201);
    expect(res.versions).toHaveLength(2);
    expect(res.versions[1]).toMatchObject({ version: 2, reason: 'The district board asked for a smaller effect of interest.', changes: [{ field: 'smallestEffectOfInterest', from: 0.25, to: 0.2 }] });
    const reviewer = await signIn(t.app, 'reviewer@evenhand.test');
    const seen = await reviewer.agent.get(`/api/studies/${s.studyId}/plan`);
    expect(seen.status).toBe(200);
    expect(seen.body.versions.map((v: { version: number }) => v.version)).toEqual([1, 2]);
    const audit = await t.db.query(`SELECT action FROM audit_events WHERE study_id = $1 ORDER BY at`, [s.studyId]);
    expect(audit.map((a: { action: string }) => a.action)).toContain('plan.amended');
  });

  it('when an amendment changes nothing or has no reason, then it is refused', async () => {
    const s = await createStudy(t.app);
    const same = await s.lead.agent
      .post(`/api/studies/${s.studyId}/plan/amendments`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ reason: 'Nothing really changes here at all.', plan: samplePlan(s.measureId, s.outcomeId) });
    expect(same.status).toBe(400);
    expect(same.body.error.message).toBe('The amendment changes nothing in the plan');
    const noReason = await s.lead.agent
      .post(`/api/studies/${s.studyId}/plan/amendments`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ reason: '', plan: { ...samplePlan(s.measureId, s.outcomeId), alpha: 0.01 } });
    expect(noReason.status).toBe(400);
    expect(noReason.body.error.details.issues[0].path).toBe('reason');
  });

  it('when a one-sided test has no justification, or Student’s test no reason, then the plan is refused with field messages', async () => {
    const s = await createStudy(t.app, { seal: false });
    const res = await s.lead.agent
      .put(`/api/studies/${s.studyId}/plan`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ ...samplePlan(s.measureId, s.outcomeId), alternative: 'greater', primaryTest: 'student' });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues).toEqual([
      { path: 'alternativeJustification', message: 'A one-sided test needs a written justification' },
      { path: 'primaryTestReason', message: "Say why Student's pooled test is preferred over Welch's" },
    ]);
  });

  it('when the plan names another study’s measure or a baseline wave as the outcome, then it is refused', async () => {
    const a = await createStudy(t.app, { seal: false });
    const b = await createStudy(t.app, { seal: false });
    const res = await a.lead.agent
      .put(`/api/studies/${a.studyId}/plan`)
      .set('x-csrf-token', a.lead.csrf)
      .send(samplePlan(b.measureId, a.baselineId));
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues.map((i: { path: string }) => i.path)).toEqual(['primaryMeasureId', 'primaryWaveId']);
  });

  it('when sealed, then the attrition boundary is registered with it: cautious unless chosen, the optimistic one only with a reason', async () => {
    const s = await createStudy(t.app, { seal: false });
    const bare = await s.lead.agent
      .put(`/api/studies/${s.studyId}/plan`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ ...samplePlan(s.measureId, s.outcomeId), attritionBoundary: 'optimistic' });
    expect(bare.status).toBe(400);
    expect(bare.body.error.details.issues).toEqual([{ path: 'attritionBoundaryReason', message: 'Say why the intervention is unlikely to affect which students leave' }]);
    const unknown = await s.lead.agent.put(`/api/studies/${s.studyId}/plan`).set('x-csrf-token', s.lead.csrf).send({ ...samplePlan(s.measureId, s.outcomeId), attritionBoundary: 'lenient' });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.details.issues[0].path).toBe('attritionBoundary');
    // Neither refusal changed the draft createStudy saved.
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}/plan`)).body.draft.attritionBoundary).toBe('cautious');

    // Before sealing, the verdict follows the draft's choice and says so.
    const why = 'Students are tested in regular lessons whatever their classroom does.';
    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, { ...samplePlan(s.measureId, s.outcomeId), attritionBoundary: 'optimistic', attritionBoundaryReason: why }, 200);
    const draftEvidence = (await s.lead.agent.get(`/api/studies/${s.studyId}/evidence`)).body;
    expect(draftEvidence.boundary).toBe('optimistic');
    expect(draftEvidence.plan).toMatchObject({ boundary: 'optimistic', chosenBy: 'plan', planVersion: null, reason: why });
    expect(draftEvidence.plan.explanation).toBe(`Judged against the optimistic attrition boundary, which the plan’s draft chooses with the reason “${why}”.`);

    await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, samplePlan(s.measureId, s.outcomeId), 200);
    const sealed = await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/seal`, {}, 200);
    expect(sealed.versions[0].content).toMatchObject({ attritionBoundary: 'cautious', attritionBoundaryReason: '' });
    const [{ content }] = await t.db.query(`SELECT content FROM plan_versions WHERE study_id = $1`, [s.studyId]);
    // In the sealed content itself, so the SHA-256 covers it.
    expect(content.attritionBoundary).toBe('cautious');
  });

  it('when an amendment chooses the optimistic boundary, then the change and its reason are a new version and audited', async () => {
    const s = await createStudy(t.app);
    const reason = 'Classrooms are assigned inside schools and the practice runs in regular lessons, so it cannot change who is tested.';
    const plan = { ...samplePlan(s.measureId, s.outcomeId), attritionBoundary: 'optimistic', attritionBoundaryReason: reason };
    const res = await send(s.lead, 'post', `/api/studies/${s.studyId}/plan/amendments`, { reason: 'The review protocol for this topic sets the optimistic boundary.', plan }, 201);
    expect(res.versions[1].changes).toEqual([
      { field: 'attritionBoundary', from: 'cautious', to: 'optimistic' },
      { field: 'attritionBoundaryReason', from: '', to: reason },
    ]);
    const [audit] = await t.db.query(`SELECT after FROM audit_events WHERE study_id = $1 AND action = 'plan.amended'`, [s.studyId]);
    expect(audit.after.changes.map((c: { field: string }) => c.field)).toEqual(['attritionBoundary', 'attritionBoundaryReason']);
    // From then on the verdict is judged against it, saying which version registers it and why.
    const evidence = (await s.lead.agent.get(`/api/studies/${s.studyId}/evidence`)).body;
    expect(evidence.plan.explanation).toBe(`Judged against the optimistic attrition boundary, which plan version 2 registers with the reason “${reason}”.`);
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}/evidence?boundary=cautious`)).body.plan.boundary).toBe('optimistic');
  });

  it('when a version was sealed before the boundary could be chosen, then it means the cautious one: restating it is no amendment', async () => {
    const s = await createStudy(t.app, { seal: false });
    const { attritionBoundary: _b, attritionBoundaryReason: _r, ...older } = (await send(s.lead, 'put', `/api/studies/${s.studyId}/plan`, samplePlan(s.measureId, s.outcomeId), 200)).draft;
    const [{ id: leadId }] = await t.db.query(`SELECT id FROM users WHERE email = 'lead@evenhand.test'`);
    await t.db.query(`INSERT INTO plan_versions (study_id, version, content, sha256, created_by) VALUES ($1, 1, $2, repeat('0', 64), $3)`, [s.studyId, older, leadId]);
    const same = await s.lead.agent
      .post(`/api/studies/${s.studyId}/plan/amendments`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ reason: 'Restating the plan with its boundary.', plan: { ...older, attritionBoundary: 'cautious' } });
    expect(same.status).toBe(400);
    expect(same.body.error.message).toBe('The amendment changes nothing in the plan');
    const evidence = (await s.lead.agent.get(`/api/studies/${s.studyId}/evidence`)).body;
    expect(evidence.plan).toMatchObject({ boundary: 'cautious', chosenBy: 'plan', planVersion: 1 });
    expect(evidence.plan.explanation).toBe('Judged against the cautious attrition boundary, which plan version 1 registers: the intervention could affect which students leave.');
  });

  it('when nothing was saved, then sealing answers 409', async () => {
    const lead = await signIn(t.app, 'lead@evenhand.test');
    const study = await send(lead, 'post', '/api/studies', { title: 'Empty', intervention: 'x', comparisonCondition: 'y' }, 201);
    const res = await lead.agent.post(`/api/studies/${study.id}/plan/seal`).set('x-csrf-token', lead.csrf).send({});
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe('Save a complete plan before sealing it');
  });

  it('when a sealed version is changed in the database directly, then the database refuses', async () => {
    const s = await createStudy(t.app);
    await expect(t.db.query(`UPDATE plan_versions SET content = '{}' WHERE study_id = $1`, [s.studyId])).rejects.toThrow(/cannot be changed/);
  });

  it('when measures are added after sealing, then it answers 409', async () => {
    const s = await createStudy(t.app);
    const res = await s.lead.agent
      .post(`/api/studies/${s.studyId}/measures`)
      .set('x-csrf-token', s.lead.csrf)
      .send({ name: 'Late measure', minScore: 0, maxScore: 10 });
    expect(res.status).toBe(409);
  });
});
