import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('audit trail', () => {
  it('lists events newest first, filtered by study, for admins, leads and reviewers', async () => {
    const admin = await signIn(t.app, 'admin@evenhand.test');
    const lead = await signIn(t.app, 'lead@evenhand.test');
    await admin.agent.patch(`/api/accounts/${lead.userId}`).set('x-csrf-token', admin.csrf).send({ name: 'Leigh Marsh' });
    await admin.agent.patch(`/api/accounts/${lead.userId}`).set('x-csrf-token', admin.csrf).send({ name: 'Leigh Pennyquill' });
    const res = await lead.agent.get('/api/audit?limit=2');
    expect(res.status).toBe(200);
    expect(res.body.items.map((e: { after: unknown }) => e.after)).toEqual(['Leigh Pennyquill', 'Leigh Marsh']);
    expect(res.body.items[0].actor).toEqual({ id: admin.userId, email: 'admin@evenhand.test' });
    const none = await lead.agent.get('/api/audit?studyId=00000000-0000-4000-8000-000000000000');
    expect(none.body).toEqual({ items: [], total: 0 });
  });

  it('when an entry carries scores by student code, then only roles that may see score sheets read the values; the admin and the reviewer see that it happened', async () => {
    const after = { rows: 3, changes: [{ studentCode: 'AUD-0417', from: null, to: { score: 71.5, left: false } }, { studentCode: 'AUD-0418', from: { score: 60, left: false }, to: { score: 64, left: false } }] };
    const [{ id }] = await t.db.query(`INSERT INTO audit_events (action, entity_type, entity_id, after) VALUES ('scores.changed', 'score_sheet', 'a-sheet', $1) RETURNING id`, [after]);
    const entry = async (email: string) => {
      const res = await (await signIn(t.app, email)).agent.get('/api/audit?limit=100');
      expect(res.status).toBe(200);
      return res.body.items.find((e: { id: string }) => e.id === id);
    };
    expect((await entry('lead@evenhand.test')).after).toEqual(after);
    for (const email of ['admin@evenhand.test', 'reviewer@evenhand.test']) {
      const seen = await entry(email);
      expect(seen).toMatchObject({ action: 'scores.changed', entityId: 'a-sheet', before: null, after: { studentValuesWithheld: true, rows: 3, changes: 2 } });
      expect(JSON.stringify(seen)).not.toMatch(/AUD-041|71\.5/);
    }
  });

  it('refuses UPDATE and DELETE in the database itself', async () => {
    await t.db.query(`INSERT INTO audit_events (action, entity_type) VALUES ('test.event', 'test')`);
    await expect(t.db.query(`UPDATE audit_events SET action = 'rewritten'`)).rejects.toThrow(/cannot be changed or deleted/);
    await expect(t.db.query(`DELETE FROM audit_events`)).rejects.toThrow(/cannot be changed or deleted/);
  });
});
