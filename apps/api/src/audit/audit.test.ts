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
    await admin.agent.patch(`/api/users/${lead.userId}`).set('x-csrf-token', admin.csrf).send({ name: 'Leigh Marsh' });
    await admin.agent.patch(`/api/users/${lead.userId}`).set('x-csrf-token', admin.csrf).send({ name: 'Leigh Marsh-Tanaka' });
    const res = await lead.agent.get('/api/audit?limit=2');
    expect(res.status).toBe(200);
    expect(res.body.items.map((e: { after: unknown }) => e.after)).toEqual(['Leigh Marsh-Tanaka', 'Leigh Marsh']);
    expect(res.body.items[0].actor).toEqual({ id: admin.userId, email: 'admin@evenhand.test' });
    const none = await lead.agent.get('/api/audit?studyId=00000000-0000-4000-8000-000000000000');
    expect(none.body).toEqual({ items: [], total: 0 });
  });

  it('refuses UPDATE and DELETE in the database itself', async () => {
    await t.db.query(`INSERT INTO audit_events (action, entity_type) VALUES ('test.event', 'test')`);
    await expect(t.db.query(`UPDATE audit_events SET action = 'rewritten'`)).rejects.toThrow(/cannot be changed or deleted/);
    await expect(t.db.query(`DELETE FROM audit_events`)).rejects.toThrow(/cannot be changed or deleted/);
  });
});
