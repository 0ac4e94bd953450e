import type { OpenAPIRegistry } from '@asteasolutions/zod-to-openapi';
import { amendmentSchema, planContentSchema, planSchema, studyParamsSchema, studyReaderRoles } from '@evenhand/entities';
import type { Deps } from '../deps.js';
import { ResourceRouter } from '../http/route.js';
import { amendPlan, getPlan, saveDraft, sealPlan } from './service.js';

export function planRouter(deps: Deps, registry: OpenAPIRegistry) {
  const r = new ResourceRouter(registry);
  const tag = 'Plan';
  const responses = { 200: { description: 'The plan: draft or sealed versions', schema: planSchema } };

  r.route(
    {
      method: 'get',
      path: '/studies/:id/plan',
      summary: 'The pre-registration: the draft before sealing, then every sealed version and amendment',
      access: studyReaderRoles,
      tag,
      params: studyParamsSchema,
      responses,
    },
    async ({ user, params }) => ({ body: await getPlan(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'put',
      path: '/studies/:id/plan',
      summary: 'Save the draft plan (refused once sealed)',
      access: ['research_lead'],
      tag,
      params: studyParamsSchema,
      body: planContentSchema,
      responses,
    },
    async ({ user, params, body }) => ({ body: await saveDraft(deps.db, user!, params.id, body) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/plan/seal',
      summary: 'Seal the plan: timestamp it and store the SHA-256 of its canonical JSON',
      access: ['research_lead'],
      tag,
      params: studyParamsSchema,
      responses,
    },
    async ({ user, params }) => ({ body: await sealPlan(deps.db, user!, params.id) }),
  );

  r.route(
    {
      method: 'post',
      path: '/studies/:id/plan/amendments',
      summary: 'Amend the sealed plan with a reason; creates the next version',
      access: ['research_lead'],
      tag,
      params: studyParamsSchema,
      body: amendmentSchema,
      responses: { 201: { description: 'The plan with the new version', schema: planSchema } },
    },
    async ({ user, params, body }) => ({ status: 201, body: await amendPlan(deps.db, user!, params.id, body) }),
  );

  return r.router;
}
