import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { blockedDraw } from '@evenhand/stats';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms, send } from '../../test/fixtures.js';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('the draw', () => {
  it('when previewed, then nothing is stored; when committed with the same seed, then the same assignment is stored and classrooms get their arms', async () => {
    const s = await createStudy(t.app);
    const { classrooms } = await enrolClassrooms(s, 3, 4);
    const preview = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'larkspur-2026', commit: false }, 200);
    expect(preview.committed).toBe(false);
    expect((await t.db.query(`SELECT count(*)::int AS n FROM draws`))[0].n).toBe(0);
    const none = await s.lead.agent.get(`/api/studies/${s.studyId}/draw`);
    expect([none.status, none.body]).toEqual([200, null]);
    // Blocked by site: every site of 4 classrooms splits 2 / 2.
    for (const row of preview.balance) expect([row.intervention.units, row.comparison.units]).toEqual([2, 2]);

    const committed = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'larkspur-2026', commit: true }, 201);
    expect(committed.assignments).toEqual(preview.assignments);
    expect(committed).toMatchObject({ committed: true, seed: 'larkspur-2026', algorithm: preview.algorithm, unit: 'classroom' });
    const listed = (await s.lead.agent.get(`/api/studies/${s.studyId}/draw`)).body;
    expect(listed.verified).toBe(true);
    // Anyone can re-derive it from the recorded seed and blocks with the engine itself.
    const again = blockedDraw({ seed: listed.seed, blocks: listed.blocks, arms: ['intervention', 'comparison'] });
    expect(again.assignments.map((a) => [a.unitId, a.arm])).toEqual(listed.assignments.map((a: { unitId: string; arm: string }) => [a.unitId, a.arm]));
    const arms = await t.db.query(`SELECT id, arm FROM classrooms WHERE study_id = $1`, [s.studyId]);
    expect(arms).toHaveLength(classrooms.length);
    for (const { id, arm } of arms) expect(arm).toBe(listed.assignments.find((a: { unitId: string }) => a.unitId === id).arm);
  });

  it('when drawn without a seed, then a random seed is recorded', async () => {
    const s = await createStudy(t.app);
    await enrolClassrooms(s, 1, 2);
    const a = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, {}, 200);
    const b = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, {}, 200);
    expect(a.seed).toMatch(/^[0-9a-f]{32}$/);
    expect(a.seed).not.toBe(b.seed);
  });

  it('when the plan is not sealed, then the draw is refused', async () => {
    const s = await createStudy(t.app, { seal: false });
    await enrolClassrooms(s, 1, 2);
    const res = await s.coordinator.agent.post(`/api/studies/${s.studyId}/draw`).set('x-csrf-token', s.coordinator.csrf).send({ commit: true });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toBe('Seal the plan before the draw');
  });

  it('when a draw is committed twice, then the second is refused, and the database refuses any change to it', async () => {
    const s = await createStudy(t.app);
    await enrolClassrooms(s, 1, 2);
    const committed = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { commit: true }, 201);
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}`)).body.drawCommittedAt).toBe(committed.committedAt);
    const again = await s.coordinator.agent.post(`/api/studies/${s.studyId}/draw`).set('x-csrf-token', s.coordinator.csrf).send({ commit: true });
    expect(again.status).toBe(409);
    await expect(t.db.query(`UPDATE draws SET seed = 'other' WHERE study_id = $1`, [s.studyId])).rejects.toThrow(/cannot be changed/);
    await expect(t.db.query(`UPDATE classrooms SET arm = CASE arm WHEN 'intervention' THEN 'comparison' ELSE 'intervention' END WHERE study_id = $1`, [s.studyId])).rejects.toThrow(/only through a recorded reassignment/);
    const late = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/classrooms`)
      .set('x-csrf-token', s.coordinator.csrf)
      .send({ siteId: '00000000-0000-4000-8000-000000000000', cohortId: '00000000-0000-4000-8000-000000000000', name: 'Late', grade: '4', expectedSize: 20, teacher: { email: 'late@example.org', name: 'Late' } });
    expect(late.status).toBe(409);
  });

  it('when a classroom is reassigned with a reason, then it is audited and the study is quasi-experimental', async () => {
    const s = await createStudy(t.app);
    const { classrooms } = await enrolClassrooms(s, 1, 2);
    const early = await s.coordinator.agent
      .post(`/api/studies/${s.studyId}/draw/reassignments`)
      .set('x-csrf-token', s.coordinator.csrf)
      .send({ classroomId: classrooms[0].id, arm: 'comparison', reason: 'Before any draw there is nothing to reassign.' });
    expect([early.status, early.body.error.message]).toEqual([409, 'The study has no committed draw yet; commit the draw before reassigning a classroom']);
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}`)).body.quasiExperimental).toBe(false);
    const draw = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { commit: true }, 201);
    const target = classrooms[0].id;
    const from = draw.assignments.find((a: { unitId: string }) => a.unitId === target).arm;
    const to = from === 'intervention' ? 'comparison' : 'intervention';
    const noReason = await s.coordinator.agent.post(`/api/studies/${s.studyId}/draw/reassignments`).set('x-csrf-token', s.coordinator.csrf).send({ classroomId: target, arm: to, reason: '' });
    expect(noReason.status).toBe(400);
    const res = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw/reassignments`, { classroomId: target, arm: to, reason: 'The teacher moved to a school that runs the practice school-wide.' }, 201);
    expect(res.reassignments).toMatchObject([{ classroomId: target, fromArm: from, arm: to }]);
    expect(res.verified).toBe(true); // the draw itself is unchanged
    expect((await s.lead.agent.get(`/api/studies/${s.studyId}`)).body.quasiExperimental).toBe(true);
    const [audit] = await t.db.query(`SELECT before, after FROM audit_events WHERE action = 'draw.reassigned' AND entity_id = $1`, [target]);
    expect(audit).toMatchObject({ before: { arm: from }, after: { arm: to } });
  });

  it('when the study assigns whole schools, then sites are drawn in one block and every classroom follows its school', async () => {
    const s = await createStudy(t.app, { unitOfAssignment: 'school' });
    await enrolClassrooms(s, 4, 2);
    const draw = await send(s.coordinator, 'post', `/api/studies/${s.studyId}/draw`, { seed: 'schools', commit: true }, 201);
    expect(draw.unit).toBe('school');
    expect(draw.blocks).toHaveLength(1);
    expect(draw.assignments.filter((a: { arm: string }) => a.arm === 'intervention')).toHaveLength(2);
    const mixed = await t.db.query(`SELECT site_id FROM classrooms WHERE study_id = $1 GROUP BY site_id HAVING count(DISTINCT arm) > 1`, [s.studyId]);
    expect(mixed).toEqual([]);
  });

  it('when a teacher asks for the draw, then it is forbidden', async () => {
    const s = await createStudy(t.app);
    const teacher = await signIn(t.app, 'teacher1@evenhand.test');
    expect((await teacher.agent.get(`/api/studies/${s.studyId}/draw`)).status).toBe(403);
  });
});
