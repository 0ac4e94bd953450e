import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { roles, type Role } from '@evenhand/entities';
import { signIn, startTestApp, type TestApp } from './app.js';

/**
 * Who may call each route, written out here on purpose rather than read from the routes: a route
 * added without a line below fails this test, and a route whose access drifts fails it too.
 */
const expectedAccess: Record<string, 'anyone' | 'signed-in' | Role[]> = {
  'GET /api/health': 'anyone',
  'GET /api/openapi.json': 'anyone',
  'POST /api/auth/login': 'anyone',
  'GET /api/auth/sign-in-options': 'anyone',
  'POST /api/auth/logout': 'signed-in',
  'POST /api/role-invitations/accept': 'signed-in',
  'GET /api/auth/me': 'signed-in',
  'POST /api/auth/password-reset': 'anyone',
  'POST /api/auth/password-reset/confirm': 'anyone',
  'GET /api/auth/district/start': 'anyone',
  'GET /api/auth/district/callback': 'anyone',
  'GET /api/auth/district/problem': 'anyone',
  'GET /api/sign-in-settings': ['admin'],
  'PUT /api/sign-in-settings': ['admin'],
  'GET /api/accounts': ['admin'],
  'POST /api/accounts': ['admin'],
  'PATCH /api/accounts/{id}': ['admin'],
  'GET /api/sites': ['admin', 'coordinator', 'research_lead'],
  'GET /api/sites/{id}': ['coordinator', 'research_lead', 'admin', 'principal'],
  'PATCH /api/sites/{id}': ['coordinator'],
  'GET /api/studies': 'signed-in',
  'POST /api/studies': ['research_lead', 'coordinator'],
  'GET /api/studies/{id}': 'signed-in',
  'PATCH /api/studies/{id}': ['research_lead', 'coordinator'],
  'GET /api/studies/{id}/plan': ['research_lead', 'coordinator', 'reviewer'],
  'PUT /api/studies/{id}/plan': ['research_lead'],
  'POST /api/studies/{id}/plan/seal': ['research_lead'],
  'POST /api/studies/{id}/plan/amendments': ['research_lead'],
  'GET /api/studies/{id}/measures': ['research_lead', 'coordinator', 'reviewer', 'teacher', 'principal'],
  'POST /api/studies/{id}/measures': ['research_lead'],
  'GET /api/studies/{id}/waves': ['research_lead', 'coordinator', 'reviewer', 'teacher', 'principal'],
  'POST /api/studies/{id}/waves': ['research_lead'],
  'GET /api/studies/{id}/sites': ['coordinator', 'research_lead', 'reviewer'],
  'POST /api/studies/{id}/sites': ['coordinator'],
  'GET /api/studies/{id}/cohorts': ['coordinator', 'research_lead', 'reviewer'],
  'POST /api/studies/{id}/cohorts': ['coordinator'],
  'GET /api/studies/{id}/classrooms': ['coordinator', 'research_lead', 'reviewer', 'teacher', 'principal'],
  'POST /api/studies/{id}/classrooms': ['coordinator'],
  'POST /api/studies/{id}/classrooms/import': ['coordinator'],
  'GET /api/studies/{id}/roster-imports': ['coordinator', 'research_lead'],
  'POST /api/studies/{id}/roster-imports/preview': ['coordinator'],
  'POST /api/studies/{id}/roster-imports': ['coordinator'],
  'PATCH /api/classrooms/{id}': ['coordinator'],
  'POST /api/studies/{id}/draw': ['coordinator'],
  'GET /api/studies/{id}/draw': ['coordinator', 'research_lead', 'reviewer'],
  'POST /api/studies/{id}/draw/reassignments': ['coordinator'],
  'GET /api/score-sheets': ['teacher', 'coordinator', 'research_lead'],
  'GET /api/score-sheets/{id}': ['teacher', 'coordinator', 'research_lead'],
  'PUT /api/score-sheets/{id}': ['teacher'],
  'PUT /api/score-sheets/{id}/summary': ['teacher'],
  'POST /api/score-sheets/{id}/upload': ['teacher'],
  'POST /api/score-sheets/{id}/submit': ['teacher'],
  'POST /api/score-sheets/{id}/accept': ['coordinator'],
  'POST /api/score-sheets/{id}/return': ['coordinator'],
  'GET /api/studies/{id}/completion': ['coordinator', 'research_lead'],
  'POST /api/studies/{id}/reminders': ['coordinator'],
  'GET /api/studies/{id}/checks': ['research_lead', 'reviewer'],
  'GET /api/studies/{id}/evidence': ['coordinator', 'research_lead', 'reviewer'],
  'GET /api/studies/{id}/comparisons': ['research_lead', 'reviewer'],
  'POST /api/studies/{id}/comparisons': ['research_lead'],
  'POST /api/comparisons/{id}/runs': ['research_lead'],
  'PUT /api/comparisons/{id}/schedule': ['research_lead'],
  'GET /api/runs/{id}': ['research_lead', 'reviewer', 'coordinator', 'principal'],
  'POST /api/runs/{id}/lock': ['research_lead'],
  'GET /api/runs/{id}/bundle': ['research_lead', 'reviewer'],
  'GET /api/studies/{id}/digests': ['research_lead', 'coordinator'],
  'POST /api/studies/{id}/digests/send': ['research_lead', 'coordinator'],
  'GET /api/digests/{id}': ['research_lead', 'coordinator'],
  'GET /api/studies/{id}/digest-schedule': ['research_lead', 'coordinator'],
  'PUT /api/studies/{id}/digest-schedule': ['research_lead', 'coordinator'],
  'GET /api/my-school': ['principal'],
  'GET /api/digest-preferences': 'anyone',
  'PUT /api/digest-preferences': 'anyone',
  'POST /api/digest-preferences/one-click': 'anyone',
  'GET /api/audit': ['admin', 'research_lead', 'reviewer'],
  'GET /api/to-do': ['coordinator', 'research_lead', 'reviewer', 'admin'],
};

const demoEmail: Record<Role, string> = {
  admin: 'admin@evenhand.test',
  coordinator: 'coordinator@evenhand.test',
  research_lead: 'lead@evenhand.test',
  teacher: 'teacher1@evenhand.test',
  principal: 'principal1@evenhand.test',
  reviewer: 'reviewer@evenhand.test',
};

let t: TestApp;
let routes: string[];
const tokens = {} as Record<Role, string>;
beforeAll(async () => {
  t = await startTestApp();
  const doc = (await request(t.app).get('/api/openapi.json')).body as { paths: Record<string, Record<string, unknown>> };
  routes = Object.entries(doc.paths).flatMap(([path, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${path}`));
  for (const role of roles) tokens[role] = (await signIn(t.app, demoEmail[role])).token;
});
afterAll(() => t.close());

function call(route: string, token?: string) {
  const [method, path] = route.split(' ');
  // Path parameters get a well-formed id that exists nowhere; bodies are empty.
  const url = path.replace(/\{\w+\}/g, '00000000-0000-4000-8000-000000000000');
  const req = request(t.app)[method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete'](url);
  if (token) req.set('authorization', `Bearer ${token}`);
  return method === 'GET' ? req : req.send({});
}

describe('role matrix', () => {
  it('has an expected-access entry for every route in the OpenAPI document, and no stale entries', () => {
    expect(routes.length).toBeGreaterThan(0);
    expect(routes.filter((r) => !(r in expectedAccess))).toEqual([]);
    expect(Object.keys(expectedAccess).filter((r) => !routes.includes(r))).toEqual([]);
  });

  it('documents the same access as the table (x-access) for every route', async () => {
    const doc = (await request(t.app).get('/api/openapi.json')).body as { paths: Record<string, Record<string, { 'x-access': unknown }>> };
    for (const route of routes) {
      const [method, path] = route.split(' ');
      const documented = doc.paths[path][method.toLowerCase()]['x-access'];
      const expected = expectedAccess[route];
      expect([route, Array.isArray(documented) ? [...documented].sort() : documented]).toEqual([
        route,
        Array.isArray(expected) ? [...expected].sort() : expected,
      ]);
    }
  });

  it('answers every route for every role as the table says (deny by default)', async () => {
    const mismatches: string[] = [];
    // Signing out ends every session of the account, so it is called last.
    const lastly = (r: string) => Number(r === 'POST /api/auth/logout');
    for (const route of [...routes].sort((a, b) => lastly(a) - lastly(b))) {
      const access = expectedAccess[route];
      for (const caller of ['anonymous', ...roles] as const) {
        const res = await call(route, caller === 'anonymous' ? undefined : tokens[caller]);
        const allowed = access === 'anyone' || (caller !== 'anonymous' && (access === 'signed-in' || access.includes(caller)));
        const expected = allowed ? 'not 401/403' : caller === 'anonymous' ? '401' : '403';
        const ok = allowed ? res.status !== 401 && res.status !== 403 : res.status === Number(expected);
        if (!ok) mismatches.push(`${route} as ${caller}: expected ${expected}, got ${res.status}`);
      }
    }
    expect(mismatches).toEqual([]);
  }, 120_000);
});
