import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { signIn, startTestApp, type TestApp } from '../../test/app.js';
import { createStudy, enrolClassrooms } from '../../test/fixtures.js';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

type Response = { content?: Record<string, { schema: { $ref?: string } }>; headers?: Record<string, unknown> };

describe('the OpenAPI document', () => {
  it('documents 400, 404, 409, 413 and 429 in the one error shape for every route, and 401/403 for every signed-in route', async () => {
    const doc = (await request(t.app).get('/api/openapi.json')).body as {
      paths: Record<string, Record<string, { responses: Record<string, Response>; 'x-access': unknown }>>;
      components: { schemas: Record<string, unknown> };
    };
    expect(doc.components.schemas.Error).toBeDefined();
    const operations = Object.entries(doc.paths).flatMap(([path, ops]) => Object.entries(ops).map(([method, op]) => ({ route: `${method.toUpperCase()} ${path}`, op })));
    expect(operations.length).toBeGreaterThan(50);
    for (const { route, op } of operations) {
      const expected = ['400', '404', '409', '413', '429', ...(op['x-access'] === 'anyone' ? [] : ['401', '403'])];
      for (const status of expected) {
        expect(op.responses[status]?.content?.['application/json']?.schema, `${route} ${status}`).toEqual({ $ref: '#/components/schemas/Error' });
      }
      for (const [status, response] of Object.entries(op.responses)) expect(response.headers?.['Cache-Control'], `${route} ${status}`).toBeDefined();
    }
  });
});

describe('student-level answers', () => {
  it('are never stored: score sheets, a refused upload that lists codes, the audit trail and a bundle send Cache-Control: no-store', async () => {
    const s = await createStudy(t.app);
    await enrolClassrooms(s, 1, 1, ['teacher1@evenhand.test'], t.db);
    const teacher = await signIn(t.app, 'teacher1@evenhand.test');
    const sheets = await teacher.agent.get(`/api/score-sheets?studyId=${s.studyId}`);
    expect(sheets.status).toBe(200);
    expect(sheets.headers['cache-control']).toBe('no-store');
    const sheet = await teacher.agent.get(`/api/score-sheets/${sheets.body.items[0].id}`);
    expect(sheet.headers['cache-control']).toBe('no-store');
    const refused = await teacher.agent
      .post(`/api/score-sheets/${sheets.body.items[0].id}/upload?dryRun=true`)
      .set('x-csrf-token', teacher.csrf)
      .attach('file', Buffer.from('student_code,score\nAB-1,1e9\n'), 'scores.csv');
    expect(refused.status).toBe(400);
    expect(refused.headers['cache-control']).toBe('no-store');
    const audit = await s.lead.agent.get(`/api/audit?studyId=${s.studyId}`);
    expect(audit.status).toBe(200);
    expect(audit.headers['cache-control']).toBe('no-store');
    // A bundle of a run that does not exist answers 404, and not from a cache either.
    const bundle = await s.lead.agent.get('/api/runs/00000000-0000-4000-8000-000000000000/bundle');
    expect(bundle.status).toBe(404);
    expect(bundle.headers['cache-control']).toBe('no-store');
  });
});
